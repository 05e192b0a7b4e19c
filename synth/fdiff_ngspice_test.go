package synth_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// fdiffCase is one record of testdata/scipy/fdiff.json: a spec built
// fully differentially and SciPy's transfer function of that filter.
type fdiffCase struct {
	Name  string          `json:"name"`
	Spec  json.RawMessage `json:"spec"`
	Zeros [][2]float64    `json:"zeros"`
	Poles [][2]float64    `json:"poles"`
	Gain  float64         `json:"gain"`
}

func fdiffCases(t *testing.T) []fdiffCase {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "testdata", "scipy", "fdiff.json"))
	require.NoError(t, err)
	var doc struct {
		Cases []fdiffCase `json:"cases"`
	}
	require.NoError(t, json.Unmarshal(b, &doc))
	require.NotEmpty(t, doc.Cases)
	return doc.Cases
}

// at evaluates SciPy's zpk at s (rad/s): gain·Π(s − z)/Π(s − p).
func (c fdiffCase) at(s complex128) complex128 {
	h := complex(c.Gain, 0)
	for _, z := range c.Zeros {
		h *= s - complex(z[0], z[1])
	}
	for _, p := range c.Poles {
		h /= s - complex(p[0], p[1])
	}
	return h
}

// design parses the case's spec with the changes (JSON object fields
// replacing the spec's top-level ones) and designs it.
func (c fdiffCase) design(t *testing.T, changes map[string]any) *synth.Design {
	t.Helper()
	var m map[string]any
	require.NoError(t, json.Unmarshal(c.Spec, &m))
	for k, v := range changes {
		m[k] = v
	}
	b, err := json.Marshal(m)
	require.NoError(t, err)
	s, err := synth.ParseSpecBytes(b)
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	return d
}

// TestDifferentialDesigns: every section of a fully differential design
// is an FDA stage, the first converts the single-ended source (half B's
// input on the reference), the last's outputs are crossed when the
// stages alone would invert, and the design's ideal transfer function is
// SciPy's (testdata/scipy/fdiff.json).
func TestDifferentialDesigns(t *testing.T) {
	t.Parallel()
	for _, c := range fdiffCases(t) {
		t.Run(c.Name, func(t *testing.T) {
			t.Parallel()
			d := c.design(t, nil)
			ch, err := d.Chain()
			require.NoError(t, err)
			require.True(t, ch.Differential())
			require.False(t, ch.Stages[0].DiffIn, "the source is single-ended")
			if !ch.Stages[0].Differential() {
				requireConvertedAtEnd(t, d, ch)
			} else {
				require.Contains(t, d.Sections[0].TopologyReason, "converts the single-ended source")
				for k, st := range ch.Stages {
					require.True(t, st.Differential(), "stage %d", k+1)
					require.True(t, strings.HasPrefix(st.Topology, "fully-differential"), st.Topology)
					require.Equal(t, k > 0, st.DiffIn)
				}
			}
			h := d.TransferFunction()
			for _, f := range []float64{10, 300, 900, 1000, 1100, 3000, 1e4} {
				s := complex(0, 2*math.Pi*f)
				got, want := h.AtOmega(2*math.Pi*f), c.at(s)
				// Relative error, absolute at a bandstop's zeros.
				scale := math.Max(cmplx.Abs(want), 1e-6)
				require.Less(t, cmplx.Abs(got-want)/scale, 1e-6, "ideal H at %g Hz", f)
				built, err := ch.Response(nil, []float64{f})
				require.NoError(t, err)
				require.Less(t, cmplx.Abs(built[0]-want)/scale, 1e-6, "built (exact values, ideal FDAs) at %g Hz", f)
			}
		})
	}
}

// requireConvertedAtEnd checks a differential design built
// single-ended: every stage single-ended but the last, which is its
// section's single-ended circuit followed by the conversion (one FDA,
// matched resistor halves, half B's input on the reference), and the
// reasons say so.
func requireConvertedAtEnd(t *testing.T, d *synth.Design, ch circuit.Chain) {
	t.Helper()
	last := len(ch.Stages) - 1
	for k, st := range ch.Stages[:last] {
		require.False(t, st.Differential(), "stage %d", k+1)
		require.False(t, st.DiffIn, "stage %d", k+1)
	}
	se, conv, ok := ch.Stages[last].SplitConversion()
	require.True(t, ok, "the last stage ends in a conversion")
	require.Len(t, conv.OpAmps, 1)
	require.True(t, conv.OpAmps[0].FullyDifferential())
	require.False(t, slices.ContainsFunc(se.OpAmps, circuit.OpAmp.FullyDifferential))
	require.Contains(t, d.Sections[0].TopologyReason, "no fully differential form here")
	require.Contains(t, d.Sections[0].TopologyReason, "built single-ended")
	require.Contains(t, d.Sections[last].TopologyReason, "single-ended to differential conversion follows")
}

// TestDifferentialNotchesSingleEnded: a differential design whose
// sections include ones with jω-axis zeros or all-pass sections of a
// delay equalizer (no fully differential form)
// is built single-ended, as auto builds it, and converted after the last
// section, whether auto chose the differential output for a differential
// converter or the spec asked for fully-differential; the design's
// ideal transfer function with ideal op-amps and exact values is the
// built circuit's (differential output) to 1e-6.
func TestDifferentialNotchesSingleEnded(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ name, spec string }{
		{"elliptic-auto", `{"response": "lowpass", "approximation": "elliptic", "order": 4, "passband_hz": 1000, "stopband_atten_db": 40,
		   "values": "exact", "opamp": {"ideal": true},
		   "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 2, "input": "differential"}}`},
		{"chebyshev2-asked", `{"response": "lowpass", "approximation": "chebyshev2", "order": 5, "passband_hz": 1000, "stopband_atten_db": 40,
		   "values": "exact", "opamp": {"ideal": true}, "topology": "fully-differential"}`},
		{"equalized-auto", `{"response": "lowpass", "approximation": "chebyshev1", "order": 4, "passband_hz": 1000, "passband_ripple_db": 0.5,
		   "values": "exact", "opamp": {"ideal": true}, "delay_equalizer": {"max_spread_pct": 10},
		   "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 2, "input": "differential", "architecture": "sigma-delta"}}`},
		{"bandstop-auto", `{"response": "bandstop", "approximation": "chebyshev1", "order": 2, "passband_hz": [500, 2000], "passband_ripple_db": 1,
		   "values": "exact", "opamp": {"ideal": true},
		   "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 2, "input": "differential", "architecture": "sigma-delta"}}`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			ch, err := d.Chain()
			require.NoError(t, err)
			require.True(t, ch.Differential())
			requireConvertedAtEnd(t, d, ch)
			h := d.TransferFunction()
			for _, f := range []float64{0, 10, 300, 900, 1000, 1100, 3000, 1e4} {
				want := h.AtOmega(2 * math.Pi * f)
				got, err := ch.Response(nil, []float64{f})
				require.NoError(t, err)
				require.Less(t, cmplx.Abs(got[0]-want), 1e-6*math.Max(cmplx.Abs(want), 1e-3), "built at %g Hz", f)
			}
		})
	}
}

// TestDifferentialAgainstNgspice runs the exported differential deck in
// ngspice (reference: the ngspice simulator, which reads the FDA
// subcircuit, the crossed outputs and out = v(outp) − v(outn) as
// written) and compares
//
//   - with exact values and ideal FDAs, v(out) with SciPy's transfer
//     function of the filter (testdata/scipy/fdiff.json): 0.01 dB and
//     0.1° wherever it is above −80 dB;
//   - with series values and a 1 MHz single-pole FDA, |v(out)| at the
//     design's response grid with response.realized_db: 0.05 dB wherever
//     it is above −120 dB;
//   - the deck's noise analysis of v(outp, outn) (the FDA's en and in,
//     every resistor of both halves) with noise.output_v_per_rthz at
//     every fifth point of the design's noise grid: 0.05 dB.
func TestDifferentialAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, c := range fdiffCases(t) {
		t.Run(c.Name, func(t *testing.T) {
			t.Parallel()
			ctx, cancel := context.WithTimeout(context.Background(), 120*time.Second)
			defer cancel()

			d := c.design(t, nil)
			freq, v := runDeck(ctx, t, d)
			checked, worstDB, worstDeg := 0, 0.0, 0.0
			for i, f := range freq {
				want := c.at(complex(0, 2*math.Pi*f))
				wantDB := 20 * math.Log10(cmplx.Abs(want))
				if wantDB < -80 {
					continue
				}
				checked++
				dDB := 20*math.Log10(cmplx.Abs(v[i])) - wantDB
				dp := math.Mod((cmplx.Phase(v[i])-cmplx.Phase(want))*180/math.Pi+540, 360) - 180
				require.InDelta(t, 0, dDB, 0.01, "magnitude at %g Hz", f)
				require.InDelta(t, 0, dp, 0.1, "phase at %g Hz", f)
				worstDB, worstDeg = math.Max(worstDB, math.Abs(dDB)), math.Max(worstDeg, math.Abs(dp))
			}
			require.Greater(t, checked, 50)
			t.Logf("vs scipy: %d points, worst %.2g dB, %.2g°", checked, worstDB, worstDeg)

			d = c.design(t, map[string]any{"values": "series", "opamp": map[string]any{"gbw_hz": 1e6, "dc_gain_db": 100,
				"noise_v_per_rthz": 6e-9, "noise_a_per_rthz": 2e-12}})
			ch, err := d.Chain()
			require.NoError(t, err)
			var deck bytes.Buffer
			require.NoError(t, ch.WriteSPICE(&deck, circuit.SpiceOptions{Title: "polewright differential check"}))
			var sweeps []acSweep
			var wantF, want []float64
			for i, f := range d.Response.FreqHz {
				if f > 0 && d.Response.RealizedDB[i] > -120 {
					sweeps = append(sweeps, acSweep{"lin", 1, f, f})
					wantF, want = append(wantF, f), append(want, d.Response.RealizedDB[i])
				}
			}
			// One point per sweep, appended in the sweeps' order.
			gf, gv, err := spicerun.RunDir(ctx, t.TempDir(), withSweeps(deck.Bytes(), sweeps))
			require.NoError(t, err)
			require.Len(t, gf, len(want))
			worstDB = 0
			for i := range want {
				require.InDelta(t, wantF[i], gf[i], 1e-12*wantF[i])
				db := 20 * math.Log10(cmplx.Abs(gv[i]))
				require.InDelta(t, want[i], db, 0.05, "realized_db at %g Hz", wantF[i])
				worstDB = math.Max(worstDB, math.Abs(want[i]-db))
			}
			t.Logf("vs realized_db: %d points, worst %.2g dB", len(want), worstDB)

			// Noise: one `noise ... lin 1 f f` per checked frequency (a
			// one-point analysis makes no integrated-noise plot: the
			// spectrum's plot stays current).
			nz := d.Noise
			require.NotNil(t, nz)
			deck.Reset()
			require.NoError(t, ch.WriteSPICE(&deck, circuit.SpiceOptions{Title: "polewright differential noise",
				Noise: &circuit.SpiceNoise{VoltageVPerRtHz: 6e-9, CurrentAPerRtHz: 2e-12, TempK: nz.TempK}}))
			var ctl strings.Builder
			ctl.WriteString(".control\nset wr_singlescale\nset numdgt=15\nset appendwrite\n")
			var nf, nwant []float64
			for i := 0; i < len(nz.FreqHz); i += 5 {
				f := nz.FreqHz[i]
				nf, nwant = append(nf, f), append(nwant, nz.OutputVPerRtHz[i])
				fmt.Fprintf(&ctl, "noise v(%s,%s) vin lin 1 %s %s\nlet onoise_c = onoise_spectrum + j(0)\nwrdata noise.data onoise_c\n",
					circuit.OutP, circuit.OutNNode, fmtE(f), fmtE(f))
			}
			ctl.WriteString("quit\n.endc\n.end\n")
			full := deck.String()
			full = full[:strings.Index(full, ".ac ")] + ctl.String()
			dir := t.TempDir()
			_, _, err = spicerun.RunDir(ctx, dir, []byte(full))
			require.NoError(t, err)
			fh, err := os.Open(filepath.Join(dir, "noise.data"))
			require.NoError(t, err)
			defer fh.Close()
			x, vecs, err := spicerun.ReadData(fh)
			require.NoError(t, err)
			require.Len(t, x, len(nf))
			worstDB = 0
			for i := range nf {
				require.InDelta(t, nf[i], x[i], 1e-9*nf[i])
				dDB := 20 * math.Log10(real(vecs[0][i])/nwant[i])
				require.InDelta(t, 0, dDB, 0.05, "noise density at %g Hz: ngspice %g, design %g V/√Hz", nf[i], real(vecs[0][i]), nwant[i])
				worstDB = math.Max(worstDB, math.Abs(dDB))
			}
			t.Logf("vs noise.output_v_per_rthz: %d points, worst %.2g dB", len(nf), worstDB)
		})
	}
}

func fmtE(v float64) string { return fmt.Sprintf("%.17e", v) }

// TestDifferentialRandomSpecs: random valid specs of every response and
// approximation built fully differentially come out as a design whose
// every stage is differential, or whose stages are single-ended but for
// the last one's conversion (a notch or all-pass section among them), or
// as a field error (topology: no part values), never another error or a
// panic.
func TestDifferentialRandomSpecs(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(4, 2))
	built, refused, converted := 0, 0, 0
	for trial := range 120 {
		s := randomSpec(rng)
		s.Topology = "fully-differential"
		d, err := synth.SynthesizeTo(context.Background(), s, synth.Circuits)
		if err != nil {
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "trial %d: %v", trial, err)
			require.Contains(t, []string{"topology", "stopband_hz"}, fe.Field, "trial %d: %v", trial, err)
			refused++
			continue
		}
		ch, err := d.Chain()
		require.NoError(t, err)
		require.True(t, ch.Differential())
		if ch.Stages[0].Differential() {
			for _, st := range ch.Stages {
				require.True(t, st.Differential())
			}
		} else {
			requireConvertedAtEnd(t, d, ch)
			converted++
		}
		built++
	}
	t.Logf("%d built (%d single-ended and converted at the end), %d refused", built, converted, refused)
	require.Positive(t, built)
	require.Positive(t, converted)
}
