package synth_test

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/section"
)

// lossDB returns the loss of d at f Hz relative to its passband maximum.
func lossDB(d *synth.Design, fHz float64) float64 {
	h := d.TransferFunction()
	return 20*math.Log10(d.Gain) - 20*math.Log10(h.MagnitudeAt(2*math.Pi*fHz))
}

func synthesize(t *testing.T, s synth.Spec) *synth.Design {
	t.Helper()
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err, "spec %+v", s)
	return d
}

// synthesizeIdeal designs without circuits: the synthesis-core properties
// do not depend on whether every stage fits the part windows.
func synthesizeIdeal(t *testing.T, s synth.Spec) *synth.Design {
	t.Helper()
	d, err := synth.SynthesizeIdeal(context.Background(), s)
	require.NoError(t, err, "spec %+v", s)
	return d
}

func baseSpec(resp synth.Response, approx string) synth.Spec {
	return synth.Spec{
		Response: resp, Approximation: approx, PassbandRippleDB: 1, StopbandAttenDB: 40,
		Topology: "auto", ResistorSeries: "E96", CapacitorSeries: "E12",
		OpAmp:  synth.OpAmp{GBWHz: 10e6, DCGainDB: 100, NoiseVPerRtHz: 10e-9, NoiseAPerRtHz: 1e-12, SlewVPerS: 10e6},
		Values: "series", Tolerance: synth.Tolerance{Distribution: "uniform"}, MonteCarlo: synth.MonteCarlo{Seed: 1},
		ResistorRangeOhm: [2]float64{1e3, 220e3}, CapacitorRangeFarad: [2]float64{100e-12, 1e-6},
	}
}

// randomSpec draws a valid spec of any response and approximation whose
// lowest order is at most 20 (checked by the caller through Synthesize).
func randomSpec(rng *rand.Rand) synth.Spec {
	resp := []synth.Response{synth.Lowpass, synth.Highpass, synth.Bandpass, synth.Bandstop}[rng.IntN(4)]
	approx := synth.Approximations[rng.IntN(len(synth.Approximations))]
	s := baseSpec(resp, approx)
	s.PassbandRippleDB = []float64{0.01, 0.1, 0.5, 1, 3}[rng.IntN(5)]
	s.StopbandAttenDB = 20 + rng.Float64()*80
	delayType := approx == "bessel" || approx == "gaussian" || approx == "linear-phase"
	if delayType {
		s.PassbandRippleDB = 3
		s.StopbandAttenDB = 20 + rng.Float64()*30
	}
	f := math.Pow(10, 1+rng.Float64()*3) // 10 Hz .. 10 kHz, where the default part windows build every stage
	k := 1.5 + rng.Float64()*4           // transition ratio
	if delayType {
		k = 3 + rng.Float64()*6
	}
	switch resp {
	case synth.Lowpass:
		s.PassbandHz, s.StopbandHz = []float64{f}, []float64{f * k}
	case synth.Highpass:
		s.PassbandHz, s.StopbandHz = []float64{f}, []float64{f / k}
	case synth.Bandpass:
		w := 1.2 + rng.Float64()*3
		s.PassbandHz = []float64{f, f * w}
		s.StopbandHz = []float64{f / (k * (0.8 + 0.4*rng.Float64())), f * w * k}
	case synth.Bandstop:
		w := 4 + rng.Float64()*6
		lo, hi := f/10, f*w*k*k/10
		s.PassbandHz = []float64{lo, hi}
		c := math.Sqrt(lo * hi)
		half := math.Sqrt(w) * (0.8 + 0.4*rng.Float64())
		s.StopbandHz = []float64{c / half, c * half}
	}
	return s
}

// TestPropertiesRandomSpecs checks, on a few hundred random valid specs,
// properties that hold for every correct design (issue 2): loss equals
// Amax at the design's passband edge, the lowest order meets Amin at the
// stopband edge and one order less does not, all poles are in the left
// half plane, the design meets its mask, and the headroom order is never
// worse than ascending Q.
func TestPropertiesRandomSpecs(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	done := 0
	for trial := 0; done < 300 && trial < 3000; trial++ {
		s := randomSpec(rng)
		d, err := synth.SynthesizeIdeal(context.Background(), s)
		if err != nil {
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "trial %d: %v", trial, err)
			require.Equal(t, "stopband_hz", fe.Field, "trial %d: %v", trial, err)
			require.Contains(t, fe.Reason, "order")
			continue
		}
		done++
		name := fmt.Sprintf("trial %d %s %s %v %v", trial, s.Response, s.Approximation, s.PassbandHz, s.StopbandHz)
		checkDesign(t, name, s, d)

		// One order less must fail the mask.
		if d.Order > 1 {
			lower := s
			lower.Order = d.Order - 1
			if s.Response == synth.Bandstop {
				lower.PassbandHz = d.Mask.DesignPassbandHz // the arrangement the lowest order used
			}
			dl := synthesizeIdeal(t, lower)
			require.False(t, dl.MeetsMask, "%s: order %d also meets the mask", name, lower.Order)
		}
	}
	require.GreaterOrEqual(t, done, 300)
}

// checkDesign asserts the invariants every design must hold.
func checkDesign(t *testing.T, name string, s synth.Spec, d *synth.Design) {
	t.Helper()
	require.True(t, d.MeetsMask, "%s: mask %+v", name, d.Mask)
	n := d.Order
	if s.Response.IsBand() {
		n *= 2
	}
	for _, sec := range d.Sections {
		if sec.Kind == section.Allpass {
			n += sec.Order // poles_rad_s includes a delay equaliser's (INTERFACE.md)
		}
	}
	require.Len(t, d.Poles, n, name)
	for _, p := range d.Poles {
		require.Less(t, p[0], 0.0, "%s: pole %v", name, p)
	}
	// Loss at the design passband edge(s) equals Amax (INTERFACE.md
	// normalisation), less the design margin.
	for _, f := range d.Mask.DesignPassbandHz {
		require.InDelta(t, s.DesignRippleDB(), lossDB(d, f), 1e-9, "%s at %g Hz", name, f)
	}
	// The stopband edges reach Amin.
	for _, f := range s.StopbandHz {
		require.GreaterOrEqual(t, lossDB(d, f), s.StopbandAttenDB-1e-6, "%s at %g Hz", name, f)
	}
	// Internal nodes never peak above the output (the gain rule).
	for i, sec := range d.Sections {
		require.LessOrEqual(t, sec.PeakGainDB, 1e-6, "%s: section %d", name, i)
	}
	require.InDelta(t, 0, d.Sections[len(d.Sections)-1].PeakGainDB, 1e-6, name)
	// No NaN or Inf anywhere, so the JSON encodes.
	_, err := json.Marshal(d)
	require.NoError(t, err, name)
}

// TestHeadroomNotWorseThanAscendingQ compares the chosen order's worst
// node peak with ascending-Q order's (common practice) for every
// approximation and order 1..20, lowpass and bandpass, on refined peaks
// over a fine grid independent of the one the design used.
func TestHeadroomNotWorseThanAscendingQ(t *testing.T) {
	t.Parallel()
	for _, approx := range synth.Approximations {
		for _, resp := range []synth.Response{synth.Lowpass, synth.Bandpass} {
			for order := 1; order <= synth.MaxOrder; order++ {
				s := baseSpec(resp, approx)
				s.Order = order
				s.StopbandAttenDB = 60
				s.PassbandHz = []float64{1000}
				if resp == synth.Bandpass {
					s.PassbandHz = []float64{1000, 1500}
				}
				d := synthesizeIdeal(t, s)
				// The design's sections in its order, renormalised to unit
				// reference gain so that only the order matters.
				secs := make([]section.Section, len(d.Sections))
				chosen := make([]int, len(secs))
				for i, sec := range d.Sections {
					var ss section.Section
					for _, p := range sec.Poles {
						ss.Poles = append(ss.Poles, complex(p[0], p[1]))
					}
					for _, z := range sec.Zeros {
						ss.Zeros = append(ss.Zeros, complex(z[0], z[1]))
					}
					ss.Gain = 1
					ss.Gain = 1 / ss.ReferenceGain()
					secs[i], chosen[i] = ss, i
				}
				grid := response.Grid(d.TransferFunction(), 10, 1e6, 4000)
				got := section.WorstRefinedDB(secs, chosen, grid)
				asc := section.WorstRefinedDB(secs, section.AscendingQ(secs), grid)
				require.LessOrEqual(t, got, asc+1e-9, "%s %s order %d", approx, resp, order)
			}
		}
	}
}

// TestExamples designs every example spec: each must build, meet its mask
// and carry INTERFACE.md's design fields.
func TestExamples(t *testing.T) {
	t.Parallel()
	files, err := filepath.Glob("../testdata/examples/*.json")
	require.NoError(t, err)
	require.GreaterOrEqual(t, len(files), 6)
	for _, file := range files {
		t.Run(filepath.Base(file), func(t *testing.T) {
			t.Parallel()
			f, err := os.Open(file)
			require.NoError(t, err)
			defer f.Close()
			s, err := synth.ParseSpec(f)
			require.NoError(t, err)
			d := synthesize(t, s)
			checkDesign(t, file, s, d)
			raw, err := json.Marshal(d)
			require.NoError(t, err)
			var m map[string]any
			require.NoError(t, json.Unmarshal(raw, &m))
			for _, k := range []string{"order", "poles_rad_s", "zeros_rad_s", "gain", "sections", "response", "meets_mask"} {
				require.Contains(t, m, k)
			}
			resp := m["response"].(map[string]any)
			for _, k := range []string{"freq_hz", "ideal_db", "realized_db", "phase_deg", "group_delay_s"} {
				require.Contains(t, resp, k)
			}
			sec := m["sections"].([]any)[0].(map[string]any)
			for _, k := range []string{"order", "f0_hz", "q", "zero_hz", "topology", "peak_gain_db", "components", "realized"} {
				require.Contains(t, sec, k)
			}
			// Every part is a value of its IEC 60063 series times a power of
			// ten, and the as-built response is there.
			rs, err := eseries.Lookup(s.ResistorSeries)
			require.NoError(t, err)
			cs, err := eseries.Lookup(s.CapacitorSeries)
			require.NoError(t, err)
			for _, sec := range d.Sections {
				require.NotEmpty(t, sec.Components)
				require.NotNil(t, sec.Realized)
				for _, c := range sec.Components {
					series := rs
					if c.Kind == "capacitor" {
						series = cs
					}
					require.True(t, series.Contains(c.Value), "%s = %g is not in %s", c.Ref, c.Value, series.Name())
				}
			}
			require.Len(t, d.Response.RealizedDB, len(d.Response.FreqHz))
		})
	}
}

// TestAntiAliasExampleOpAmps: the order-5 elliptic anti-alias example
// (testdata/examples/studio-adc-antialias.json, auto, 1 % resistors and
// 5 % capacitors) against issue 13's aim of at most 5 op-amps. Its
// lowpass-notch section with zeros at 109 kHz, outside the stop and alias
// bands, goes on one op-amp; the one with zeros at 176 kHz, inside the
// 100 dB stopband, would keep only about 79 dB there (3σ, first order:
// the one-op-amp form's zeros move and leave the jω axis with part
// tolerances), so auto builds it on the two-integrator notch (three
// op-amps, zeros on the jω axis whatever the parts) and says so: 5
// op-amps where the state-variable form of every section uses 9. That
// section's C3 sits at the window's least capacitor, so its gain is a
// capacitor ratio 3.8 dB above the section's, which the first-order stage
// takes up (the chain's ideal gain is unchanged). With both
// notches on one op-amp (topology one-amp-notch) the filter needs 3, and
// its board as built keeps the stopband and the alias band.
func TestAntiAliasExampleOpAmps(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile("../testdata/examples/studio-adc-antialias.json")
	require.NoError(t, err)
	s, err := synth.ParseSpecBytes(data)
	require.NoError(t, err)
	s.MonteCarlo.Trials = 0
	require.Equal(t, "auto", s.Topology)
	count := func(d *synth.Design) (opamps, oneAmp int) {
		for _, sec := range d.Sections {
			opamps += len(sec.OpAmps)
			if sec.Topology == "one-amp-notch" {
				oneAmp++
			}
		}
		return opamps, oneAmp
	}
	d := synthesize(t, s)
	require.Equal(t, 5, d.Order)
	n, one := count(d)
	t.Logf("auto: %d op-amps, %d one-amp-notch stages", n, one)
	require.Equal(t, 5, n)
	require.Equal(t, 1, one)
	for i, sec := range d.Sections {
		if sec.ZeroHz == nil {
			continue
		}
		if *sec.ZeroHz > 172e3 {
			require.Equal(t, "two-integrator-notch", sec.Topology)
			require.Contains(t, sec.TopologyReason, "one-amp-notch would leave about")
			require.Contains(t, sec.TopologyReason, "where the mask needs −100 dB")
			require.Contains(t, sec.TopologyReason, "stage 1 takes up the difference")
			require.Contains(t, d.Sections[0].TopologyReason, fmt.Sprintf("to take up stage %d's", i+1))
		} else {
			require.Equal(t, "one-amp-notch", sec.Topology)
		}
	}

	s.Topology = "one-amp-notch"
	one1 := synthesize(t, s)
	n1, _ := count(one1)
	t.Logf("one-amp-notch: %d op-amps; stopband margin as built %.3f dB, alias margin %.3f dB",
		n1, *one1.Built.StopbandMarginDB, *one1.Built.AliasMarginDB)
	require.Equal(t, 3, n1)
	require.GreaterOrEqual(t, *one1.Built.StopbandMarginDB, 0.0)
	require.GreaterOrEqual(t, *one1.Built.AliasMarginDB, 0.0)

	s.Topology = "state-variable"
	sv := synthesize(t, s)
	nsv, _ := count(sv)
	t.Logf("state-variable: %d op-amps", nsv)
	require.Equal(t, 9, nsv)
}
