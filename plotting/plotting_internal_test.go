package plotting

import (
	"bytes"
	"math"
	"math/cmplx"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// The SVG holds the curves, one shaded path per forbidden region (and one
// for the mask's legend sample), and only fixed or numeric text.
func TestStructure(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name      string
		spec      string
		built     bool
		regions   int // forbidden regions of the mask
		pbRegions int // those of the passband plot: the passband(s)
	}{
		{"lowpass", lowpassSpec, true, 2, 1},
		{"lowpass-ideal", lowpassSpec, false, 2, 1},
		{"bandpass", bandpassSpec, true, 3, 1},
		{"bandstop", bandstopSpec, true, 3, 2},
		{"highpass-no-stopband", highpassSpec, true, 1, 1},
	}
	allowed := map[string]bool{
		"Magnitude (dB)": true, "Phase (°)": true, "Frequency (Hz)": true,
		"Step response (V/V)": true, idealName: true, builtName: true,
		"Magnitude (dB), passband": true, maskName: true,
	}
	for _, tc := range cases {
		d := idealDesign(t, tc.spec)
		var tfs circuit.Cascade
		if tc.built {
			tfs = fakeBuilt(d)
		}
		for _, pf := range plotFuncs {
			t.Run(tc.name+"/"+pf.name, func(t *testing.T) {
				t.Parallel()
				var buf bytes.Buffer
				require.NoError(t, pf.fn(&buf, d, tfs, Options{}))
				out := buf.Bytes()
				require.True(t, bytes.HasPrefix(out, []byte("<?xml")))
				require.True(t, bytes.HasPrefix(InlineSVG(out), []byte("<svg")))
				doc := parseSVG(t, out)
				require.Equal(t, "svg", doc.Root)

				// Each curve is a path of its own colour (besides the legend's
				// sample line); the phase panel has a second pair.
				minIdeal := 1
				if pf.name == "bode" {
					minIdeal = 2
				}
				require.GreaterOrEqual(t, doc.count(idealStroke), minIdeal)
				if tc.built {
					require.GreaterOrEqual(t, doc.count(builtStroke), minIdeal)
				} else {
					require.Zero(t, doc.count(builtStroke))
				}
				require.GreaterOrEqual(t, doc.count(idealStroke)+doc.count(builtStroke), 2)
				for _, p := range doc.Paths {
					if strings.Contains(p.Style, idealStroke) || strings.Contains(p.Style, builtStroke) {
						require.NotContains(t, p.D, "NaN")
						require.NotContains(t, p.D, "Inf")
					}
				}
				switch pf.name {
				case "bode":
					require.Equal(t, tc.regions+1, doc.count(maskFillSVG), "mask regions and the legend's sample")
				case "passband":
					require.Equal(t, tc.pbRegions+1, doc.count(maskFillSVG), "passband regions and the legend's sample")
				default:
					require.Zero(t, doc.count(maskFillSVG))
				}

				legend := 0
				for _, s := range doc.Texts {
					if s == idealName || s == builtName {
						legend++
					}
					if allowed[s] || strings.HasPrefix(s, "Group delay (") || strings.HasPrefix(s, "Time (") {
						continue
					}
					// Tick labels: a number with an optional SI prefix.
					require.Regexp(t, `^−?[0-9]+(\.[0-9]+)?(e[+-][0-9]+)?[GMkmµ]?$`, s)
				}
				want := 1
				if tc.built {
					want = 2
				}
				require.Equal(t, want, legend, "legend entries")
			})
		}
	}
}

// Non-finite and missing data, and hand-made designs, never fail or panic
// and never reach the SVG as NaN or Inf.
func TestNonFinite(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	real := idealDesign(t, lowpassSpec)
	broken := func(edit func(d *synth.Design)) *synth.Design {
		d := *real
		d.Response.FreqHz = slices.Clone(d.Response.FreqHz)
		d.Response.IdealDB = slices.Clone(d.Response.IdealDB)
		d.Response.PhaseDeg = slices.Clone(d.Response.PhaseDeg)
		d.Response.GroupDelayS = slices.Clone(d.Response.GroupDelayS)
		edit(&d)
		return &d
	}
	cases := []struct {
		name string
		d    *synth.Design
		tfs  circuit.Cascade
		opt  Options
	}{
		{"empty", &synth.Design{}, nil, Options{}},
		{"empty-with-built", &synth.Design{}, fakeBuilt(real), Options{}},
		{"hand-made", &synth.Design{
			Spec: synth.Spec{Response: synth.Bandpass, PassbandHz: []float64{nan, 1}, StopbandHz: []float64{inf},
				PassbandRippleDB: nan, StopbandAttenDB: inf},
			Gain: nan,
			Response: synth.Curves{
				FreqHz:      []float64{nan, -1, 0, 10, inf, 100, 1000, 1000},
				IdealDB:     []float64{1, 2, 3, math.Inf(-1), 5, nan, inf, 0},
				RealizedDB:  []float64{nan, nan},
				PhaseDeg:    []float64{inf, nan},
				GroupDelayS: []float64{nan, inf, math.Inf(-1), 1},
			},
		}, nil, Options{WidthPt: nan, HeightPt: -3}},
		{"one-frequency", &synth.Design{Response: synth.Curves{FreqHz: []float64{50}, IdealDB: []float64{0}}}, nil, Options{WidthPt: inf}},
		{"nan-curves", broken(func(d *synth.Design) {
			for i := range d.Response.IdealDB {
				if i%3 == 0 {
					d.Response.IdealDB[i] = nan
					d.Response.PhaseDeg[i] = inf
					d.Response.GroupDelayS[i] = nan
				}
			}
			d.Response.IdealDB[5] = math.Inf(-1)
			d.Response.IdealDB[6] = inf
			d.Response.RealizedDB = []float64{nan, inf, math.Inf(-1)} // too short
		}), fakeBuilt(real), Options{WidthPt: 1e9, HeightPt: 1}},
		{"nan-frequencies", broken(func(d *synth.Design) {
			d.Response.FreqHz[0] = nan
			d.Response.FreqHz[7] = inf
			d.Response.FreqHz[9] = -5
			d.Gain = 0
			d.Spec.StopbandAttenDB = nan
		}), nil, Options{}},
		{"bad-built", real, circuit.Cascade{
			{Num: []float64{nan}, Den: []float64{1, 1}, ScaleRadPerSec: 1},
			{Num: []float64{1}, Den: []float64{1, inf}, ScaleRadPerSec: 0},
		}, Options{}},
		{"zero-built", real, circuit.Cascade{{Num: []float64{0}, Den: []float64{1, 1}, ScaleRadPerSec: 100}}, Options{}},
		{"unstable-built", real, circuit.Cascade{{Num: []float64{1}, Den: []float64{1, -0.1, 1}, ScaleRadPerSec: 6000}}, Options{}},
	}
	for _, tc := range cases {
		for _, pf := range plotFuncs {
			t.Run(tc.name+"/"+pf.name, func(t *testing.T) {
				t.Parallel()
				var buf bytes.Buffer
				require.NotPanics(t, func() {
					require.NoError(t, pf.fn(&buf, tc.d, tc.tfs, tc.opt))
				})
				out := buf.String()
				require.NotContains(t, out, "NaN")
				require.NotContains(t, out, "Inf")
				doc := parseSVG(t, buf.Bytes())
				require.Equal(t, "svg", doc.Root)
			})
		}
	}
}

// Nothing the spec says reaches the SVG as text.
func TestNoSpecText(t *testing.T) {
	t.Parallel()
	d := idealDesign(t, lowpassSpec)
	evil := `<script>alert("x")</script>`
	d.Spec.Approximation, d.Spec.Topology, d.Spec.Values = evil, evil, evil
	for i := range d.Sections {
		d.Sections[i].Topology = evil
	}
	for _, pf := range plotFuncs {
		t.Run(pf.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			require.NoError(t, pf.fn(&buf, d, fakeBuilt(d), Options{}))
			require.NotContains(t, buf.String(), "<script")
			require.NotContains(t, buf.String(), "alert")
		})
	}
}

// The public functions reject a nil design.
func TestNilDesign(t *testing.T) {
	t.Parallel()
	var buf bytes.Buffer
	require.ErrorIs(t, Bode(&buf, nil, Options{}), ErrNilDesign)
	require.ErrorIs(t, GroupDelay(&buf, nil, Options{}), ErrNilDesign)
	require.ErrorIs(t, Step(&buf, nil, Options{}), ErrNilDesign)
	require.ErrorIs(t, Passband(&buf, nil, Options{}), ErrNilDesign)
	require.Zero(t, buf.Len())
}

func TestInlineSVG(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name, in, want string
	}{
		{"declaration-and-comment", "<?xml version=\"1.0\"?>\n<!-- made by X -->\n<svg a=\"1\"></svg>", "<svg a=\"1\"></svg>"},
		{"declaration", "<?xml version=\"1.0\"?><svg/>", "<svg/>"},
		{"bare", "<svg/>", "<svg/>"},
		{"leading-space", " \n<svg/>", "<svg/>"},
		{"not-svg", "<html><svg/></html>", "<html><svg/></html>"},
		{"unterminated", "<?xml <svg/>", "<?xml <svg/>"},
		{"empty", "", ""},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.want, string(InlineSVG([]byte(tc.in))))
		})
	}
}

func TestOptionsSize(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name         string
		opt          Options
		wantW, wantH float64
	}{
		{"default", Options{}, DefaultWidthPt, DefaultHeightPt},
		{"given", Options{WidthPt: 300, HeightPt: 200}, 300, 200},
		{"clamped", Options{WidthPt: 10, HeightPt: 1e6}, MinSizePt, MaxSizePt},
		{"invalid", Options{WidthPt: math.NaN(), HeightPt: math.Inf(1)}, DefaultWidthPt, DefaultHeightPt},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			w, h := tc.opt.size(DefaultWidthPt, DefaultHeightPt)
			require.Equal(t, tc.wantW, w.Points())
			require.Equal(t, tc.wantH, h.Points())
		})
	}
}

func TestMaskRegions(t *testing.T) {
	t.Parallel()
	const lo, hi = 10.0, 1e5
	far0, far1 := lo/4, hi*4
	cases := []struct {
		name string
		spec synth.Spec
		stop bool
		want []region
	}{
		{"lowpass", synth.Spec{Response: synth.Lowpass, PassbandHz: []float64{1000}, StopbandHz: []float64{3000}}, true,
			[]region{{far0, 1000, -1, true}, {3000, far1, -40, false}}},
		{"lowpass-no-stopband", synth.Spec{Response: synth.Lowpass, PassbandHz: []float64{1000}}, false,
			[]region{{far0, 1000, -1, true}}},
		{"highpass", synth.Spec{Response: synth.Highpass, PassbandHz: []float64{1000}, StopbandHz: []float64{300}}, true,
			[]region{{1000, far1, -1, true}, {far0, 300, -40, false}}},
		{"bandpass", synth.Spec{Response: synth.Bandpass, PassbandHz: []float64{900, 1100}, StopbandHz: []float64{500, 2000}}, true,
			[]region{{900, 1100, -1, true}, {far0, 500, -40, false}, {2000, far1, -40, false}}},
		{"bandstop", synth.Spec{Response: synth.Bandstop, PassbandHz: []float64{500, 2000}, StopbandHz: []float64{900, 1100}}, true,
			[]region{{far0, 500, -1, true}, {2000, far1, -1, true}, {900, 1100, -40, false}}},
		{"bad-edges", synth.Spec{Response: synth.Bandpass, PassbandHz: []float64{1100, 900}, StopbandHz: []float64{500}}, true, nil},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			// Gain 0 dB, Amax 1 dB, Amin 40 dB.
			require.Equal(t, tc.want, maskRegions(tc.spec, 0, 1, 40, tc.stop, lo, hi))
		})
	}
}

// The magnitude axis is one linear scale from 30 dB below the stopband
// floor to 5 % of its span above the gain or the curves' peak.
func TestMagAxis(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name           string
		gain, amin     float64
		stop           bool
		peak           float64
		wantLo, wantHi float64
	}{
		// floor = gain − Amin − 30; top = max(gain, peak) + max(5 % of the span, 1).
		{"chebyshev", 0, 50, true, 0, -80, 4},
		{"gain", 20, 40, true, 20, -50, 23.5},
		{"no-stopband", 0, 0, false, 0, -80, 4},
		{"peaking-built", 0, 40, true, 3, -70, 6.65},
		{"shallow", 0, 1, true, 0, -31, 1.55},
		{"runaway-peak", 0, 40, true, 100, -70, 45.5},
		{"unknown-peak", 0, 40, true, math.NaN(), -70, 3.5},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			a := newMagAxis(tc.gain, tc.amin, tc.stop, tc.peak)
			require.InDelta(t, tc.wantLo, a.lo, 1e-12)
			require.InDelta(t, tc.wantHi, a.hi, 1e-12)
			ticks := a.ticks()
			require.GreaterOrEqual(t, len(ticks), 3)
			// Evenly spaced: one scale, no break.
			step := ticks[1].Value - ticks[0].Value
			for i, tk := range ticks {
				require.GreaterOrEqual(t, tk.Value, a.lo-1e-9)
				require.LessOrEqual(t, tk.Value, a.hi+1e-9)
				if i > 0 {
					require.InDelta(t, step, tk.Value-ticks[i-1].Value, 1e-9*step)
				}
			}
		})
	}
}

func TestTickHelpers(t *testing.T) {
	t.Parallel()
	steps := []struct {
		span float64
		n    int
		want float64
	}{{100, 5, 20}, {1, 4, 0.25}, {7, 6, 2}, {0.03, 6, 0.005}, {540, 6, 100}, {0, 5, 1}}
	for _, tc := range steps {
		require.InDelta(t, tc.want, niceStep(tc.span, tc.n), 1e-15, "span %v", tc.span)
	}
	labels := []struct {
		v, step float64
		want    string
	}{{-20, 10, "−20"}, {0.5, 0.25, "0.50"}, {1e-17, 0.5, "0.0"}, {2.5, 2.5, "2.5"}, {-0.25, 0.25, "−0.25"}}
	for _, tc := range labels {
		require.Equal(t, tc.want, formatTick(tc.v, tc.step))
	}
	freqs := []struct {
		f    float64
		want string
	}{{20, "20"}, {1000, "1k"}, {2500, "2.5k"}, {1e7, "10M"}, {0.1, "100m"}, {1e-4, "100µ"}, {3e9, "3G"}}
	for _, tc := range freqs {
		require.Equal(t, tc.want, freqLabel(tc.f))
	}
	prefixes := []struct {
		v     float64
		scale float64
		p     string
	}{{2, 1, ""}, {0.0015, 1e-3, "m"}, {999e-6, 1e-6, "µ"}, {3e-9, 1e-9, "n"}, {1e-13, 1e-12, "p"}}
	for _, tc := range prefixes {
		scale, p := siPrefix(tc.v)
		require.Equal(t, tc.scale, scale)
		require.Equal(t, tc.p, p)
	}
	var labelled []string
	for _, tk := range freqTicks(40, 30000) {
		if tk.Label != "" {
			labelled = append(labelled, tk.Label)
		}
	}
	require.Equal(t, []string{"100", "1k", "10k"}, labelled)
	require.Len(t, freqTicks(200, 900), 8) // 200…900 Hz, each labelled
	require.Equal(t, "900", freqTicks(200, 900)[7].Label)
	var deg []float64
	for _, tk := range degreeTicks(-470, 10) {
		deg = append(deg, tk.Value)
	}
	require.Equal(t, []float64{-450, -360, -270, -180, -90, 0}, deg)
}

// The as-built phase from poles and zeros agrees with the angle of the
// chain's response modulo 360°, and the group delay with the derivative
// of the phase.
func TestBuiltPhaseAndDelay(t *testing.T) {
	t.Parallel()
	for _, spec := range []string{lowpassSpec, bandpassSpec, highpassSpec} {
		d := idealDesign(t, spec)
		tfs := fakeBuilt(d)
		sw := newSweep(d, tfs)
		h := tfs.Response(nil, sw.f)
		for i, f := range sw.f {
			if cmplx.Abs(h[i]) < 1e-9 {
				continue // on a jω-axis zero the phase is undefined
			}
			want := cmplx.Phase(h[i]) * 180 / math.Pi
			diff := math.Remainder(sw.builtPh[i]-want, 360)
			require.InDelta(t, 0, diff, 1e-6, "phase at %v Hz", f)
			// τ = −dφ/dω by a central difference of the chain's own
			// response over ±1 ppm.
			const rel = 1e-6
			hs := tfs.Response(nil, []float64{f * (1 - rel), f * (1 + rel)})
			tau := -cmplx.Phase(hs[1]/hs[0]) / (2 * math.Pi * 2 * rel * f)
			require.InDelta(t, tau, sw.builtGD[i], 1e-5*math.Abs(tau)+1e-9*maxAbs(sw.builtGD), "delay at %v Hz", f)
		}
	}
}

func maxAbs(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// A notch zero just off the jω axis is put on it; one further off is not.
func TestAxisSnap(t *testing.T) {
	t.Parallel()
	mk := func(re float64) circuit.Cascade {
		// (x − z)(x − z̄) over a pole pair, z = re + j.
		return circuit.Cascade{{Num: []float64{re*re + 1, -2 * re, 1}, Den: []float64{1, 0.5, 1}, ScaleRadPerSec: 1000}}
	}
	h, ok := cascadeZPK(mk(1e-5))
	require.True(t, ok)
	for _, z := range h.Zeros {
		require.Zero(t, real(z))
	}
	h, ok = cascadeZPK(mk(0.05))
	require.True(t, ok)
	for _, z := range h.Zeros {
		require.InDelta(t, 50, real(z), 1e-9)
	}
	h, ok = cascadeZPK(circuit.Cascade{{Num: []float64{-2}, Den: []float64{1, 1}, ScaleRadPerSec: 1}})
	require.True(t, ok)
	require.Equal(t, -1.0, h.Gain)
}
