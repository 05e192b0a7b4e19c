package step_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/step"
)

// secondOrder is the closed-form step response of ω0²/(s² + 2ζω0·s + ω0²)
// (textbook): for ζ < 1 with ωd = ω0·√(1−ζ²),
// y = 1 − e^(−ζω0t)·(cos ωd·t + ζ/√(1−ζ²)·sin ωd·t); for ζ = 1,
// y = 1 − e^(−ω0t)·(1 + ω0t); for ζ > 1, with the real poles p1, p2,
// y = 1 + (p2·e^(p1·t) − p1·e^(p2·t))/(p1 − p2).
func secondOrder(zeta, w0 float64) func(float64) float64 {
	switch {
	case zeta < 1:
		wd := w0 * math.Sqrt(1-zeta*zeta)
		return func(t float64) float64 {
			return 1 - math.Exp(-zeta*w0*t)*(math.Cos(wd*t)+zeta/math.Sqrt(1-zeta*zeta)*math.Sin(wd*t))
		}
	case zeta == 1:
		return func(t float64) float64 { return 1 - math.Exp(-w0*t)*(1+w0*t) }
	}
	r := math.Sqrt(zeta*zeta - 1)
	p1, p2 := -w0*(zeta-r), -w0*(zeta+r)
	return func(t float64) float64 { return 1 + (p2*math.Exp(p1*t)-p1*math.Exp(p2*t))/(p1-p2) }
}

// bisectRoot returns the root of g in [a, b] (g(a), g(b) of opposite
// signs) by plain bisection, independently of the package.
func bisectRoot(g func(float64) float64, a, b float64) float64 {
	ga := g(a)
	for range 200 {
		m := (a + b) / 2
		if gm := g(m); (gm > 0) == (ga > 0) {
			a, ga = m, gm
		} else {
			b = m
		}
	}
	return (a + b) / 2
}

// exactSecondOrder returns the overshoot (%), 10–90 % rise time and the
// settling time to ±tol of the second-order step, from the closed form,
// independently of the package:
//
//   - overshoot e^(−πζ/√(1−ζ²)) at tp = π/ωd (textbook), none for ζ ≥ 1;
//   - rise: y is increasing on [0, tp] (dy/dt ∝ e^(−ζω0t)·sin ωd·t), and
//     everywhere for ζ ≥ 1, so each level is one bisection;
//   - settling, ζ < 1: e = y − 1 = −e^(−ζω0t)·cos(ωd·t − φ)/√(1−ζ²),
//     φ = atan(ζ/√(1−ζ²)), has its extrema at t_k = kπ/ωd with
//     |e(t_k)| = e^(−kπζ/√(1−ζ²)); the last extremum outside ±tol is
//     K = ⌈ln(1/tol)·√(1−ζ²)/(πζ)⌉ − 1, and |e| falls monotonically from
//     it to the next zero at (Kπ + π/2 + φ)/ωd, where the last crossing
//     is found by bisection; for ζ ≥ 1, |e| falls monotonically.
func exactSecondOrder(zeta, w0, tol float64) (overshootPct, rise, settle float64) {
	y := secondOrder(zeta, w0)
	end := 100 / (zeta * w0)
	if zeta < 1 {
		s := math.Sqrt(1 - zeta*zeta)
		wd := w0 * s
		overshootPct = 100 * math.Exp(-math.Pi*zeta/s)
		end = math.Pi / wd
		k := math.Ceil(math.Log(1/tol)*s/(math.Pi*zeta)) - 1
		phi := math.Atan(zeta / s)
		a, b := k*math.Pi/wd, (k*math.Pi+math.Pi/2+phi)/wd
		settle = bisectRoot(func(t float64) float64 { return math.Abs(y(t)-1) - tol }, a, b)
	} else {
		settle = bisectRoot(func(t float64) float64 { return math.Abs(y(t)-1) - tol }, 0, 100/w0*zeta)
	}
	t10 := bisectRoot(func(t float64) float64 { return y(t) - 0.1 }, 0, end)
	t90 := bisectRoot(func(t float64) float64 { return y(t) - 0.9 }, 0, end)
	return overshootPct, t90 - t10, settle
}

// Figures of second-order sections against the closed forms above, for
// ±0.1 % and ±½ LSB of 16 bits of a full scale of 1 (the passband gain),
// and for ±0.1 % of the peak 1 + overshoot. Measure (refined on the exact
// response): overshoot to 1e-7 absolute, times to 1e-9 of SettlingGrid's
// span. Analyze (the cubic between samples) on 2,000 points over 40 time
// constants, so that the last sample is the final value to e^(−40):
// times to 1e-6 of the span, overshoot to 3e-4 relative with the 16
// points per ringing period of ζ = 0.05, 1e-6 with 60 or more. And the
// usual envelope estimate t_s ≈ ln(1/(tol·√(1−ζ²)))/(ζω0) (an
// approximation: an upper bound, since |e| ≤ e^(−ζω0t)/√(1−ζ²)).
func TestFiguresSecondOrder(t *testing.T) {
	t.Parallel()
	w0 := 2 * math.Pi * 1000
	for _, zeta := range []float64{0.05, 0.2, 0.5, 1 / math.Sqrt2, 0.9, 1, 1.5} {
		for _, tol := range []float64{1e-3, step.HalfLSBFrac(16)} {
			t.Run("", func(t *testing.T) {
				t.Parallel()
				stages := []step.Stage{{Num: []float64{1}, Den: []float64{1, 2 * zeta, 1}, ScaleRadPerSec: w0}}
				ov, rise, settle := exactSecondOrder(zeta, w0, tol)

				ts := step.SettlingGrid(stages, 500, tol)
				span := ts[len(ts)-1]
				fig, err := step.Measure(stages, step.Band{Frac: tol, FullScale: 1})
				require.NoError(t, err)
				require.Equal(t, 1.0, fig.FinalValue)
				require.InDelta(t, ov, fig.OvershootPct, 1e-7, "overshoot, ζ = %v", zeta)
				require.InDelta(t, rise, fig.RiseTimeS, 1e-9*span, "rise, ζ = %v", zeta)
				require.InDelta(t, settle, fig.SettlingS, 1e-9*span, "settling, ζ = %v, tol %v", zeta, tol)
				require.True(t, math.IsNaN(fig.UndershootPct))
				require.InDelta(t, 1+ov/100, fig.PeakAbs, 1e-9)
				measured := (fig.SettlingS - settle) / span

				// Relative to the peak: the band is tol·(1 + overshoot).
				_, _, settlePeak := exactSecondOrder(zeta, w0, tol*(1+ov/100))
				figPeak, err := step.Measure(stages, step.Band{Frac: tol})
				require.NoError(t, err)
				require.InDelta(t, settlePeak, figPeak.SettlingS, 1e-9*span, "settling to the peak's band, ζ = %v, tol %v", zeta, tol)
				require.InDelta(t, tol*(1+ov/100), figPeak.BandAbs, 1e-12)

				ts = step.TimeGrid(stages, 2000)
				for i := range ts {
					ts[i] *= 4
				}
				span = ts[len(ts)-1]
				y, err := step.Response(stages, ts)
				require.NoError(t, err)
				a := step.Analyze(ts, y, step.Band{Frac: tol, FullScale: 1})
				ovTol := 1e-6*ov + 1e-12
				if zeta < 0.1 {
					ovTol = 3e-4 * ov
				}
				require.InDelta(t, ov, a.OvershootPct, ovTol, "overshoot, ζ = %v", zeta)
				require.InDelta(t, rise, a.RiseTimeS, 1e-6*span, "rise, ζ = %v", zeta)
				require.InDelta(t, settle, a.SettlingS, 1e-6*span, "settling, ζ = %v, tol %v", zeta, tol)

				if zeta < 1 {
					env := math.Log(1/(tol*math.Sqrt(1-zeta*zeta))) / (zeta * w0) // approximation
					require.LessOrEqual(t, settle, env)
				}
				t.Logf("ζ %.3g tol %.3g: settle %.6g ms; Measure Δ %.2g, Analyze Δ %.2g of the span", zeta, tol, settle*1e3,
					measured, (a.SettlingS-settle)/span)
			})
		}
	}
}

// A first-order lowpass 1/(1 + sτ) (closed form y = 1 − e^(−t/τ)): no
// overshoot, rise τ·ln 9, settling τ·ln(1/tol) to ±tol of the peak |y| =
// |gain|; its inverse −1/(1 + sτ) gives the same figures with a final
// value of −1.
func TestFiguresFirstOrder(t *testing.T) {
	t.Parallel()
	const tau = 1e-3
	for _, gain := range []float64{1, -1, 2.5} {
		stages := []step.Stage{{Num: []float64{gain}, Den: []float64{1, 1}, ScaleRadPerSec: 1 / tau}}
		fig, err := step.Measure(stages, step.Band{Frac: 1e-3})
		require.NoError(t, err)
		require.Equal(t, gain, fig.FinalValue)
		require.Zero(t, fig.OvershootPct)
		require.True(t, math.IsNaN(fig.UndershootPct))
		require.InEpsilon(t, tau*math.Log(9), fig.RiseTimeS, 1e-10)
		require.InEpsilon(t, tau*math.Log(1e3), fig.SettlingS, 1e-10)
		// Analyze's final value is the last sample, short of the gain by
		// e^(−10), and so is the peak: y reaches the level
		// L·(1 − e^(−10)) at −τ·ln(1 − L·(1 − e^(−10))), and
		// (1 − e^(−10))·(1 − tol) at −τ·ln(e^(−10) + tol·(1 − e^(−10))).
		ts := step.TimeGrid(stages, 500)
		y, err := step.Response(stages, ts)
		require.NoError(t, err)
		a := step.Analyze(ts, y, step.Band{Frac: 1e-3})
		e10 := math.Exp(-10)
		at := func(level float64) float64 { return -tau * math.Log(1-level*(1-e10)) }
		require.InEpsilon(t, at(0.9)-at(0.1), a.RiseTimeS, 1e-6)
		require.InEpsilon(t, -tau*math.Log(e10+1e-3*(1-e10)), a.SettlingS, 1e-6)
	}
}

// A highpass s·τ/(1 + sτ) steps to 1 at t = 0 and decays to 0 (y =
// e^(−t/τ)): no final value, so no overshoot or rise time; it never goes
// negative (undershoot 0) and settles to ±tol of its peak 1 at
// τ·ln(1/tol).
func TestFiguresHighpass(t *testing.T) {
	t.Parallel()
	const tau = 1e-3
	stages := []step.Stage{{Num: []float64{0, 1}, Den: []float64{1, 1}, ScaleRadPerSec: 1 / tau}}
	fig, err := step.Measure(stages, step.Band{Frac: 1e-3})
	require.NoError(t, err)
	require.Zero(t, fig.FinalValue)
	require.Equal(t, 1.0, fig.PeakAbs)
	require.True(t, math.IsNaN(fig.OvershootPct))
	require.True(t, math.IsNaN(fig.RiseTimeS))
	require.Zero(t, fig.UndershootPct)
	require.InEpsilon(t, tau*math.Log(1e3), fig.SettlingS, 1e-10)
}

// The second-order bandpass (ω0/Q)·s/(s² + (ω0/Q)·s + ω0²) has the step
// response y = (ω0/(Q·ωd))·e^(−σt)·sin ωd·t, σ = ω0/(2Q), ωd = √(ω0² − σ²)
// (textbook, the inverse transform of ω0/Q/(s² + ω0/Q·s + ω0²)). Its
// extrema are at t_k = (atan(ωd/σ) + kπ)/ωd, each e^(−σπ/ωd) times the
// last with the opposite sign: the undershoot is 100·e^(−σπ/ωd) % of the
// first, the peak. The last extremum outside ±tol·peak is
// K = ⌈ln(1/tol)·ωd/(σπ)⌉ − 1, and |y| falls from it to the zero at
// (K+1)π/ωd, where the settling time is found by bisection. High Q rings
// for many periods before it settles (1,600 at Q = 500), far more than
// 500 points resolve: Measure samples on its own grid.
func TestFiguresBandpass(t *testing.T) {
	t.Parallel()
	w0 := 2 * math.Pi * 1000
	for _, q := range []float64{0.6, 2, 20, 500} {
		for _, b := range []step.Band{{Frac: 1e-3}, {Frac: step.HalfLSBFrac(16)}} {
			t.Run("", func(t *testing.T) {
				t.Parallel()
				stages := []step.Stage{{Num: []float64{0, 1 / q}, Den: []float64{1, 1 / q, 1}, ScaleRadPerSec: w0}}
				sigma := w0 / (2 * q)
				wd := math.Sqrt(w0*w0 - sigma*sigma)
				y := func(t float64) float64 { return w0 / (q * wd) * math.Exp(-sigma*t) * math.Sin(wd*t) }
				t1 := math.Atan(wd/sigma) / wd
				peak := y(t1)
				decay := math.Exp(-sigma * math.Pi / wd)
				k := math.Ceil(math.Log(1/b.Frac)/(sigma*math.Pi/wd)) - 1
				band := b.Frac * peak
				settle := bisectRoot(func(t float64) float64 { return math.Abs(y(t)) - band }, t1+k*math.Pi/wd, (k+1)*math.Pi/wd)

				fig, err := step.Measure(stages, b)
				require.NoError(t, err)
				require.Zero(t, fig.FinalValue)
				require.InEpsilon(t, peak, fig.PeakAbs, 1e-9)
				require.InDelta(t, 100*decay, fig.UndershootPct, 1e-7)
				require.True(t, math.IsNaN(fig.OvershootPct) && math.IsNaN(fig.RiseTimeS))
				require.InEpsilon(t, settle, fig.SettlingS, 1e-9, "Q %v, tol %v", q, b.Frac)
				grid := step.SettlingGrid(stages, 500, b.Frac)
				require.InEpsilon(t, step.SettleMargin*settle, grid[len(grid)-1], 1e-9)
			})
		}
	}
}

// The figure rules at their thresholds, on (c + sτ)/(1 + sτ): y starts at
// H(∞) = 1 (the peak |y|) and decays to c, y = c + (1 − c)·e^(−t/τ), and
// on (1 + a·sτ)/(1 + sτ), which starts at a and ends at 1 (closed forms).
// Overshoot and rise time need |c| ≥ 1 % of the peak; below, the
// undershoot is the largest |y| of the sign opposite to the peak's, −c
// for c < 0. The rise time also needs |final − y(0⁺)| ≥ 1 % of the peak,
// and is then τ·ln 9 for any swing of an exponential.
func TestFigureRuleThresholds(t *testing.T) {
	t.Parallel()
	const tau = 1e-3
	nan := math.NaN()
	ln9 := tau * math.Log(9)
	tests := []struct {
		name         string
		num          []float64
		over, under  float64 // % (NaN: undefined)
		rise, peak   float64
		final, swing float64 // for the settling: |y − final| = |swing|·e^(−t/τ)
	}{
		{"final-just-above-1pct", []float64{0.0101, 1}, (1 - 0.0101) / 0.0101 * 100, nan, ln9, 1, 0.0101, 1 - 0.0101},
		{"final-just-below-1pct", []float64{0.0099, 1}, nan, 0, nan, 1, 0.0099, 1 - 0.0099},
		{"negative-final-just-above", []float64{-0.0101, 1}, 0, nan, ln9, 1, -0.0101, 1 + 0.0101},
		{"negative-final-just-below", []float64{-0.0099, 1}, nan, 0.99, nan, 1, -0.0099, 1 + 0.0099},
		{"final-zero", []float64{0, 1}, nan, 0, nan, 1, 0, 1},
		{"swing-just-above-1pct", []float64{1, 1.0102}, 1.02, nan, ln9, 1.0102, 1, 0.0102},
		{"swing-just-below-1pct", []float64{1, 1.0099}, 0.99, nan, nan, 1.0099, 1, 0.0099},
	}
	same := func(t *testing.T, want, got, tol float64, what string) {
		t.Helper()
		if math.IsNaN(want) {
			require.True(t, math.IsNaN(got), "%s: want NaN, got %v", what, got)
			return
		}
		require.InDelta(t, want, got, tol, what)
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			stages := []step.Stage{{Num: tc.num, Den: []float64{1, 1}, ScaleRadPerSec: 1 / tau}}
			for _, b := range []step.Band{{Frac: 1e-3}, {Frac: 1e-3, FullScale: 1}} {
				fig, err := step.Measure(stages, b)
				require.NoError(t, err)
				require.InDelta(t, tc.final, fig.FinalValue, 1e-15)
				require.InDelta(t, tc.peak, fig.PeakAbs, 1e-12)
				same(t, tc.over, fig.OvershootPct, 1e-9*math.Max(1, tc.over), "overshoot")
				same(t, tc.under, fig.UndershootPct, 1e-9, "undershoot")
				same(t, tc.rise, fig.RiseTimeS, 1e-12, "rise")
				band := b.Frac * tc.peak
				if b.FullScale > 0 {
					band = b.Frac * b.FullScale
				}
				require.InDelta(t, band, fig.BandAbs, 1e-15)
				require.InEpsilon(t, tau*math.Log(tc.swing/band), fig.SettlingS, 1e-9, "settling")
			}
		})
	}
}

func TestAnalyzeEdges(t *testing.T) {
	t.Parallel()
	ms := step.Band{Frac: 1e-3}
	tests := []struct {
		name  string
		ts, y []float64
		band  step.Band
		check func(t *testing.T, f step.Figures)
	}{
		{"too-short", []float64{0}, []float64{1}, ms, func(t *testing.T, f step.Figures) {
			require.True(t, math.IsNaN(f.SettlingS) && math.IsNaN(f.RiseTimeS) && math.IsNaN(f.OvershootPct) && math.IsNaN(f.FinalValue))
		}},
		{"mismatched", []float64{0, 1}, []float64{1}, ms, func(t *testing.T, f step.Figures) {
			require.True(t, math.IsNaN(f.SettlingS))
		}},
		{"bad-band", []float64{0, 1, 2}, []float64{0, 1, 1}, step.Band{}, func(t *testing.T, f step.Figures) {
			require.True(t, math.IsNaN(f.SettlingS))
			require.Equal(t, 1.0, f.FinalValue)
		}},
		{"never-outside", []float64{1, 2, 3}, []float64{1, 1, 1}, ms, func(t *testing.T, f step.Figures) {
			require.Equal(t, 1.0, f.SettlingS)
			require.Zero(t, f.OvershootPct)
			require.True(t, math.IsNaN(f.RiseTimeS), "no swing")
		}},
		{"all-zero", []float64{0, 1, 2}, []float64{0, 0, 0}, ms, func(t *testing.T, f step.Figures) {
			require.Equal(t, 0.0, f.SettlingS)
			require.True(t, math.IsNaN(f.OvershootPct) && math.IsNaN(f.UndershootPct) && math.IsNaN(f.RiseTimeS))
		}},
		{"linear-ramp", []float64{0, 1, 2, 3, 4}, []float64{0, 0.25, 0.5, 0.75, 1}, ms, func(t *testing.T, f step.Figures) {
			require.InDelta(t, 3.2, f.RiseTimeS, 1e-12)
			require.InDelta(t, 4*(1-1e-3), f.SettlingS, 1e-12)
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			tc.check(t, step.Analyze(tc.ts, tc.y, tc.band))
		})
	}
}

func TestMeasureErrors(t *testing.T) {
	t.Parallel()
	good := []step.Stage{{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}
	tests := []struct {
		name   string
		stages []step.Stage
		band   step.Band
		want   error
		text   string
	}{
		{"integrator", []step.Stage{{Num: []float64{1}, Den: []float64{0, 1}, ScaleRadPerSec: 1}}, step.Band{Frac: 1e-3}, step.ErrUnstable, "does not settle"},
		{"growing", []step.Stage{{Num: []float64{1}, Den: []float64{1, -1}, ScaleRadPerSec: 1}}, step.Band{Frac: 1e-3}, step.ErrUnstable, "Re p >= 0"},
		{"lossless", []step.Stage{{Num: []float64{1}, Den: []float64{1, 0, 1}, ScaleRadPerSec: 1}}, step.Band{Frac: 1e-3}, step.ErrUnstable, ""},
		{"bad-stage", []step.Stage{{Num: []float64{1}, Den: []float64{1}, ScaleRadPerSec: 0}}, step.Band{Frac: 1e-3}, step.ErrInvalid, "ScaleRadPerSec"},
		{"bad-frac", good, step.Band{Frac: 1}, step.ErrInvalid, "band"},
		{"bad-full-scale", good, step.Band{Frac: 1e-3, FullScale: math.Inf(1)}, step.ErrInvalid, "band"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			fig, err := step.Measure(tc.stages, tc.band)
			require.ErrorIs(t, err, tc.want)
			require.ErrorContains(t, err, tc.text)
			require.True(t, math.IsNaN(fig.SettlingS) && math.IsNaN(fig.OvershootPct) && math.IsNaN(fig.RiseTimeS))
		})
	}
}

// A response Measure cannot resolve within its budget — a bandpass with
// Q = 10⁷ rings for millions of periods before it settles — has NaN
// figures but its final value; no error, and no +Inf.
func TestMeasureUnresolved(t *testing.T) {
	t.Parallel()
	const q = 1e7
	stages := []step.Stage{{Num: []float64{0, 1 / q}, Den: []float64{1, 1 / q, 1}, ScaleRadPerSec: 2 * math.Pi * 1000}}
	fig, err := step.Measure(stages, step.Band{Frac: 1e-3})
	require.NoError(t, err)
	require.Zero(t, fig.FinalValue)
	require.True(t, math.IsNaN(fig.SettlingS) && math.IsNaN(fig.UndershootPct) && math.IsNaN(fig.PeakAbs))
	// Its grid falls back to the slowest pole: the larger of 10 and
	// ln(1/tol) + 3 time constants 2Q/ω0.
	g := step.SettlingGrid(stages, 10, 1e-3)
	require.InEpsilon(t, step.SpanTimeConstants*2*q/(2*math.Pi*1000), g[len(g)-1], 1e-12)
	g = step.SettlingGrid(stages, 10, 1e-6)
	require.InEpsilon(t, (math.Log(1e6)+3)*2*q/(2*math.Pi*1000), g[len(g)-1], 1e-12)
}

// The zero cascade settles at once and has no other figures.
func TestMeasureZero(t *testing.T) {
	t.Parallel()
	fig, err := step.Measure([]step.Stage{{Num: []float64{0}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}, step.Band{Frac: 1e-3})
	require.NoError(t, err)
	require.Zero(t, fig.SettlingS)
	require.Zero(t, fig.FinalValue)
	require.True(t, math.IsNaN(fig.OvershootPct) && math.IsNaN(fig.UndershootPct))
}

func TestHalfLSBAndGrid(t *testing.T) {
	t.Parallel()
	require.Equal(t, 1/131072.0, step.HalfLSBFrac(16)) // ½·2^−16 (closed form)
	require.True(t, math.IsNaN(step.HalfLSBFrac(0)))
	// 1/(1 + s): y = 1 − e^(−t) settles to ±tol of its peak 1 at ln(1/tol).
	stages := []step.Stage{{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}
	for _, tol := range []float64{1e-3, step.HalfLSBFrac(24)} {
		g := step.SettlingGrid(stages, 50, tol)
		require.Len(t, g, 50)
		require.InEpsilon(t, step.SettleMargin*math.Log(1/tol), g[len(g)-1], 1e-9)
	}
	// No settling time: [Span], longer for a smaller tolerance.
	unstable := []step.Stage{{Num: []float64{1}, Den: []float64{1, -1}, ScaleRadPerSec: 1}}
	require.Equal(t, step.TimeGrid(unstable, 50), step.SettlingGrid(unstable, 50, 1e-3))
	require.Equal(t, step.TimeGrid(unstable, 50), step.SettlingGrid(unstable, 50, 0))
	g := step.SettlingGrid(unstable, 50, step.HalfLSBFrac(24))
	require.InEpsilon(t, step.Span(unstable)*(math.Log(1<<25)+3)/step.SpanTimeConstants, g[len(g)-1], 1e-12)
}
