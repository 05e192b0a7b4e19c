package circuit_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/internal/benchchain"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// spiceChains are the chains checked against ngspice, each with both
// op-amp models.
func spiceChains() []struct {
	name   string
	stages []circuit.Stage
} {
	return []struct {
		name   string
		stages []circuit.Stage
	}{
		{"rc-buffer", []circuit.Stage{rcBuffer(rcR, rcC)}},
		{"sallen-key-lowpass", []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2)}},
		{"mfb-lowpass", []circuit.Stage{mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)}},
		{"two-stage", []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2), mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)}},
		{"sallen-key-highpass", []circuit.Stage{sallenKeyHP(hpC1, hpC2, hpR1, hpR2)}},
		{"butterworth-8th", benchchain.Chain(ideal).Stages},
	}
}

// specText stands for the spec a deck is exported from.
const specText = `{"response": "lowpass",
  "passband_hz": 1000, "note": "R in Ω, C in F"}`

// Tolerances of the simulator comparison (the contract of the export).
const (
	spiceDBTol  = 0.01 // dB
	spiceDegTol = 0.1  // degrees
)

// TestNgspice writes each chain's deck, runs it through ngspice in batch
// mode and compares the simulator's v(out) (reference: ngspice 39, an
// independent SPICE3 implementation reading the deck as written) with
// Chain.Response at the simulator's frequencies.
func TestNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, ch := range spiceChains() {
		for _, md := range []struct {
			name  string
			model circuit.Model
		}{{"ideal", ideal}, {"single-pole-1MHz", singlePole}} {
			t.Run(ch.name+"/"+md.name, func(t *testing.T) {
				t.Parallel()
				chain := circuit.Chain{Stages: ch.stages, Model: md.model}
				var deck bytes.Buffer
				require.NoError(t, chain.WriteSPICE(&deck, circuit.SpiceOptions{Description: specText, PointsPerDecade: 50}))
				ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
				defer cancel()
				freq, v, err := spicerun.RunDir(ctx, t.TempDir(), deck.Bytes())
				require.NoError(t, err)
				require.Greater(t, len(freq), 200)
				h, err := chain.Response(nil, freq)
				require.NoError(t, err)
				var worstDB, worstDeg float64
				for i, f := range freq {
					dDB := 20 * math.Log10(cmplx.Abs(v[i])/cmplx.Abs(h[i]))
					dDeg := cmplx.Phase(v[i]/h[i]) * 180 / math.Pi
					require.LessOrEqual(t, math.Abs(dDB), spiceDBTol, "magnitude at %v Hz: ngspice %v, Response %v", f, v[i], h[i])
					require.LessOrEqual(t, math.Abs(dDeg), spiceDegTol, "phase at %v Hz: ngspice %v, Response %v", f, v[i], h[i])
					worstDB, worstDeg = math.Max(worstDB, math.Abs(dDB)), math.Max(worstDeg, math.Abs(dDeg))
				}
				t.Logf("%d points %.4g..%.4g Hz: worst |Δ| %.3g dB, %.3g°", len(freq), freq[0], freq[len(freq)-1], worstDB, worstDeg)
			})
		}
	}
}

// deckElement is one element line of a deck outside the subcircuit.
type deckElement struct {
	name  string
	nodes []string
	value string // last field: a number, or the subcircuit name
}

// parseDeck splits a deck into its comment header, element lines (outside
// .subckt) and dot lines.
func parseDeck(t *testing.T, deck string) (header []string, elems []deckElement, dots []string) {
	t.Helper()
	inSub, inControl := false, false
	lines := strings.Split(strings.TrimSuffix(deck, "\n"), "\n")
	for i, line := range lines {
		f := strings.Fields(line)
		switch {
		case strings.HasPrefix(line, "*"):
			if len(elems) == 0 && len(dots) == 0 {
				header = append(header, line)
			}
		case len(f) == 0:
			t.Fatalf("empty line %d", i+1)
		case strings.HasPrefix(f[0], "."):
			dots = append(dots, line)
			switch strings.ToLower(f[0]) {
			case ".subckt":
				inSub = true
			case ".ends":
				inSub = false
			case ".control":
				inControl = true
			case ".endc":
				inControl = false
			}
		case inSub || inControl:
		default:
			elems = append(elems, deckElement{name: f[0], nodes: f[1 : len(f)-1], value: f[len(f)-1]})
		}
	}
	return header, elems, dots
}

// TestDeckFormat checks the deck's contract without running it: header,
// source, output and ground nodes, exact values in plain exponent form,
// the sweep, and that its element names are the bill of materials' refs
// (op-amps with the X prefix).
func TestDeckFormat(t *testing.T) {
	t.Parallel()
	for _, md := range []struct {
		name  string
		model circuit.Model
	}{{"ideal", ideal}, {"single-pole", singlePole}} {
		t.Run(md.name, func(t *testing.T) {
			t.Parallel()
			chain := circuit.Chain{Model: md.model, Stages: []circuit.Stage{
				sallenKeyLP(10.2e3, 22.1e3, 22e-9, 10e-9), mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2), rcBuffer(1.0/3*1e4, rcC),
			}}
			var buf bytes.Buffer
			opt := circuit.SpiceOptions{Title: "lowpass test", Description: specText, PointsPerDecade: 37, StartHz: 2, StopHz: 3e5, DataFile: "x.data"}
			require.NoError(t, chain.WriteSPICE(&buf, opt))
			deck := buf.String()
			require.True(t, strings.HasSuffix(deck, "\n.end\n"), "the deck ends with .end")
			header, elems, dots := parseDeck(t, deck)
			require.Equal(t, "* lowpass test", header[0])
			for _, line := range strings.Split(specText, "\n") {
				require.Contains(t, header, "* "+line, "the description is in the header")
			}
			require.Contains(t, dots, ".ac dec 37 2.00000000000e+00 3.00000000000e+05")
			require.Contains(t, deck, "\nwrdata x.data v(out)\n")
			name, err := spicerun.DataFile(buf.Bytes())
			require.NoError(t, err)
			require.Equal(t, "x.data", name)

			// The source, then the parts with exact values.
			require.Equal(t, deckElement{name: "Vin", nodes: []string{"in", "0", "DC", "0", "AC"}, value: "1"}, elems[0])
			var refs []string
			values := map[string]float64{}
			usesOut := false
			for _, e := range elems[1:] {
				for _, n := range e.nodes {
					usesOut = usesOut || n == "out"
				}
				if strings.HasPrefix(e.name, "X") {
					require.Equal(t, "pw_opamp", e.value)
					require.Len(t, e.nodes, 3)
					refs = append(refs, strings.TrimPrefix(e.name, "X"))
					continue
				}
				refs = append(refs, e.name)
				v, err := strconv.ParseFloat(e.value, 64)
				require.NoError(t, err, "value %q is a plain number (no scale suffix)", e.value)
				mant := e.value[:strings.IndexByte(e.value, 'e')]
				require.GreaterOrEqual(t, len(strings.Trim(strings.ReplaceAll(mant, ".", ""), "-")), 12, "value %q carries ≥ 12 digits", e.value)
				values[e.name] = v
			}
			require.True(t, usesOut, "the filter output is node out")
			for k, st := range chain.Stages {
				for _, p := range st.Parts {
					ref := chain.Ref(k+1, p.Ref)
					require.Equal(t, p.Value, values[ref], "%s is written exactly", ref)
				}
			}

			// The bill of materials lists the same refs in the same order.
			buf.Reset()
			require.NoError(t, chain.WriteBOM(&buf))
			rows, err := csv.NewReader(&buf).ReadAll()
			require.NoError(t, err)
			var bomRefs []string
			for _, r := range rows[1:] {
				bomRefs = append(bomRefs, r[0])
			}
			require.Equal(t, bomRefs, refs, "deck elements (X prefix dropped) are the BOM refs")
		})
	}
}

func TestSpiceOptions(t *testing.T) {
	t.Parallel()
	sampler := circuit.SpiceSampler{CapacitanceFarad: 30e-12, AcquisitionS: 290e-9, KickV: -4.096, SwitchOhm: 0.05}
	chain := circuit.Chain{Model: ideal, Stages: []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2)}}
	tests := []struct {
		name string
		opt  circuit.SpiceOptions
		want string // error substring, or a line the deck must hold
		bad  bool
	}{
		// f0 = 1/(2π√(R1R2C1C2)) ≈ 723 Hz: two decades either side in whole
		// decades, 1 Hz to 100 kHz.
		{"default-sweep", circuit.SpiceOptions{}, ".ac dec 100 1.00000000000e+00 1.00000000000e+05", false},
		{"default-title", circuit.SpiceOptions{}, "* " + circuit.DefaultSpiceTitle, false},
		{"default-data", circuit.SpiceOptions{}, "wrdata " + circuit.DefaultDataFile + " v(out)", false},
		{"title-newline", circuit.SpiceOptions{Title: "a\nb"}, "* a b", false},
		{"bad-points", circuit.SpiceOptions{PointsPerDecade: -1}, "PointsPerDecade", true},
		{"bad-range", circuit.SpiceOptions{StartHz: 10, StopHz: 1}, "StartHz", true},
		{"half-range", circuit.SpiceOptions{StartHz: 10}, "StartHz", true},
		{"bad-data", circuit.SpiceOptions{DataFile: "a b"}, "DataFile", true},
		// Noise: 4kT at 300 K is 1.656779e-20 J, so en = 10 nV/√Hz needs
		// en²/(4kT) = 6035.8 Ω and in = 1 pA/√Hz needs 4kT/in² = 16567.8 Ω.
		{"noise-temp", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{VoltageVPerRtHz: 10e-9}}, ".options temp=2.68500000000e+01", false},
		{"noise-350K", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{TempK: 350}}, ".options temp=7.68500000000e+01", false},
		{"noise-en", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{VoltageVPerRtHz: 10e-9}}, "Evn inpn inp nvn 0 1", false},
		{"noise-en-sensed", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{VoltageVPerRtHz: 10e-9}}, "E1 out 0 inpn inn 1.00000000000e+08", false},
		{"noise-in", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{CurrentAPerRtHz: 1e-12}}, "Fninn inn 0 Vninn 1", false},
		{"noise-no-en", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{CurrentAPerRtHz: 1e-12}}, "E1 out 0 inp inn 1.00000000000e+08", false},
		{"noise-analysis", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{Analysis: true}}, "noise v(out) vin dec 100 1.00000000000e+00 1.00000000000e+05", false},
		{"noise-data", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{Analysis: true}}, "wrdata " + circuit.DefaultNoiseDataFile + " onoise_c", false},
		{"noise-data-named", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{Analysis: true, DataFile: "n.txt"}}, "wrdata n.txt onoise_c", false},
		{"bad-noise-en", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{VoltageVPerRtHz: -1}}, "Noise.VoltageVPerRtHz", true},
		{"bad-noise-in", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{CurrentAPerRtHz: math.NaN()}}, "Noise.CurrentAPerRtHz", true},
		{"bad-noise-temp", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{TempK: -3}}, "Noise.TempK", true},
		{"tiny-noise-in", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{CurrentAPerRtHz: 1e-200}}, "helper resistance", true},
		{"bad-noise-data", circuit.SpiceOptions{Noise: &circuit.SpiceNoise{DataFile: "x;y"}}, "Noise.DataFile", true},
		// Transient: StepS defaults to StopS/1000, RiseS to StepS/1000.
		{"tran-source", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{StopS: 1e-2}}, "Vin in 0 DC 0 AC 1 PWL(0 0 1.00000000000e-08 1)", false},
		{"tran-command", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{StopS: 1e-2}}, "tran 1.00000000000e-05 1.00000000000e-02 0 1.00000000000e-05", false},
		{"tran-data", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{StopS: 1e-2}}, "wrdata " + circuit.DefaultTranDataFile + " vout_c", false},
		{"tran-rise", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{StopS: 1, StepS: 1e-3, RiseS: 2e-6}}, "Vin in 0 DC 0 AC 1 PWL(0 0 2.00000000000e-06 1)", false},
		{"bad-tran-stop", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{}}, "Transient.StopS", true},
		{"bad-tran-step", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{StopS: 1, StepS: 2}}, "Transient.StepS", true},
		{"bad-tran-rise", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{StopS: 1, RiseS: 1}}, "Transient.RiseS", true},
		{"bad-tran-data", circuit.SpiceOptions{Transient: &circuit.SpiceTransient{StopS: 1, DataFile: "a'b"}}, "Transient.DataFile", true},
		// Sampler: the sampling capacitor behind its switch, one acquisition.
		{"sampler-cap", circuit.SpiceOptions{Sampler: &sampler}, "Cacqs acq_samp 0 3.00000000000e-11", false},
		{"sampler-switch", circuit.SpiceOptions{Sampler: &sampler}, "Sacq out acq_samp acq_ctl 0 pw_acqsw", false},
		{"sampler-kick", circuit.SpiceOptions{Sampler: &sampler}, "Bacqpre acq_pre 0 V = V(acq_arm)*(-4.09600000000e+00)", false},
		{"sampler-tran", circuit.SpiceOptions{Sampler: &sampler}, "tran 1.45000000000e-10 2.90000000000e-07 0 1.45000000000e-10", false},
		{"sampler-data", circuit.SpiceOptions{Sampler: &sampler}, "wrdata " + circuit.DefaultAcqDataFile + " vsamp_c vout_a", false},
		{"sampler-holds-the-step", circuit.SpiceOptions{Sampler: &sampler, Transient: &circuit.SpiceTransient{StopS: 1e-2}}, "alter @vin[pwl] = [ 0 0 1 0 ]", false},
		{"bad-sampler-cap", circuit.SpiceOptions{Sampler: &circuit.SpiceSampler{AcquisitionS: 1e-6, SwitchOhm: 1}}, "Sampler", true},
		{"bad-sampler-kick", circuit.SpiceOptions{Sampler: &circuit.SpiceSampler{CapacitanceFarad: 1e-12, AcquisitionS: 1e-6, SwitchOhm: 1, KickV: math.Inf(1)}}, "Sampler", true},
		{"bad-sampler-data", circuit.SpiceOptions{Sampler: &circuit.SpiceSampler{CapacitanceFarad: 1e-12, AcquisitionS: 1e-6, SwitchOhm: 1, DataFile: "a b"}}, "Sampler.DataFile", true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			err := chain.WriteSPICE(&buf, tc.opt)
			if tc.bad {
				require.ErrorIs(t, err, circuit.ErrInvalid)
				require.ErrorContains(t, err, tc.want)
				require.Zero(t, buf.Len())
				return
			}
			require.NoError(t, err)
			require.Contains(t, strings.Split(buf.String(), "\n"), tc.want)
		})
	}
}

// TestDeckNoiseHelpers checks the subcircuit's noise helpers: their
// values (R = en²/(4kT) and 4kT/in², k = 1.380649e-23 J/K exact, T =
// 300 K), the noiseless single-pole resistor, and that the elements
// outside the subcircuit (the bill of materials' parts) are those of the
// plain deck.
func TestDeckNoiseHelpers(t *testing.T) {
	t.Parallel()
	const k, temp, en, in = 1.380649e-23, 300.0, 10e-9, 1e-12
	chain := circuit.Chain{Model: singlePole, Stages: []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2), mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)}}
	var plain, noisy bytes.Buffer
	require.NoError(t, chain.WriteSPICE(&plain, circuit.SpiceOptions{}))
	require.NoError(t, chain.WriteSPICE(&noisy, circuit.SpiceOptions{Noise: &circuit.SpiceNoise{VoltageVPerRtHz: en, CurrentAPerRtHz: in}}))
	_, pe, _ := parseDeck(t, plain.String())
	_, ne, dots := parseDeck(t, noisy.String())
	require.Equal(t, pe, ne)
	require.Contains(t, dots, ".options temp=2.68500000000e+01")
	lines := strings.Split(noisy.String(), "\n")
	value := func(prefix string) float64 {
		for _, l := range lines {
			if strings.HasPrefix(l, prefix+" ") {
				f := strings.Fields(l)
				v, err := strconv.ParseFloat(f[3], 64)
				require.NoError(t, err)
				return v
			}
		}
		t.Fatalf("no line %s", prefix)
		return 0
	}
	require.InEpsilon(t, en*en/(4*k*temp), value("Rvn"), 1e-15)
	require.InEpsilon(t, 6035.8, value("Rvn"), 1e-4)
	require.InEpsilon(t, 4*k*temp/(in*in), value("Rninp"), 1e-15)
	require.InEpsilon(t, 16567.8, value("Rninn"), 1e-4)
	require.Contains(t, lines, "R1 n1 0 1.00000000000e+05 noisy=0")
	require.Contains(t, lines, "G1 0 n1 inpn inn 1")
	require.NotContains(t, plain.String(), "noisy")
}

// TestNgspiceNoiseClosedForm runs ngspice's noise analysis of a
// non-inverting amplifier with a source resistor, R3 from in to the +
// input, R1 from − to ground and R2 from − to out, ideal op-amp, and
// compares onoise_spectrum with the closed form (superposition of
// uncorrelated sources; gain g = R2/R1, noise gain 1 + g):
//
//	e² = (4kT·R3 + in²·R3² + en²)·(1 + g)² + 4kT·R2 + 4kT·R1·g² + in²·R2²
//
// (in at the − input sees R1 ∥ R2 times the noise gain, which is R2).
// It checks that the deck's helpers give exactly the spec's densities and
// that they leave the AC response and the transient unchanged.
func TestNgspiceNoiseClosedForm(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	const k = 1.380649e-23
	const r1, r2, r3 = 1e3, 9e3, 4.7e3
	amp := circuit.Stage{
		Topology: "non-inverting",
		Parts:    []circuit.Part{res("R3", "in", "n2", r3), res("R1", "n1", "0", r1), res("R2", "n1", "out", r2)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "n1", Out: "out"}},
		Out:      "out",
	}
	for _, tc := range []struct {
		name   string
		en, in float64
		tempK  float64
	}{
		{"default", 10e-9, 1e-12, 300},
		{"current-heavy", 2e-9, 5e-11, 300},
		{"hot", 10e-9, 1e-12, 400},
		{"resistors-only", 0, 0, 300},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			chain := circuit.Chain{Model: ideal, Stages: []circuit.Stage{amp}}
			opt := circuit.SpiceOptions{PointsPerDecade: 10, StartHz: 1, StopHz: 1e6,
				Noise:     &circuit.SpiceNoise{VoltageVPerRtHz: tc.en, CurrentAPerRtHz: tc.in, TempK: tc.tempK, Analysis: true},
				Transient: &circuit.SpiceTransient{StopS: 1e-3},
			}
			var deck bytes.Buffer
			require.NoError(t, chain.WriteSPICE(&deck, opt))
			ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
			defer cancel()
			dir := t.TempDir()
			freq, v, err := spicerun.RunDir(ctx, dir, deck.Bytes())
			require.NoError(t, err)
			for i := range freq {
				require.InDelta(t, 10, real(v[i]), 1e-6, "gain 1 + R2/R1 at %v Hz", freq[i])
			}
			read := func(name string) ([]float64, []complex128) {
				f, err := os.Open(filepath.Join(dir, name))
				require.NoError(t, err)
				defer f.Close()
				x, vecs, err := spicerun.ReadData(f)
				require.NoError(t, err)
				return x, vecs[0]
			}
			nf, nv := read(circuit.DefaultNoiseDataFile)
			require.Equal(t, freq, nf)
			fourKT := 4 * k * tc.tempK
			g := r2 / r1
			want := math.Sqrt((fourKT*r3+tc.in*tc.in*r3*r3+tc.en*tc.en)*(1+g)*(1+g) + fourKT*r2 + fourKT*r1*g*g + tc.in*tc.in*r2*r2)
			for i := range nf {
				require.InDelta(t, 0, 20*math.Log10(real(nv[i])/want), 1e-4, "at %v Hz", nf[i])
			}
			ts, tv := read(circuit.DefaultTranDataFile)
			for i := range ts {
				if ts[i] >= 1e-8 { // after the input's rise
					require.InDelta(t, 10, real(tv[i]), 1e-6, "step at %v s", ts[i])
				}
			}
		})
	}
}
