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
// ±0.1 % and ±½ LSB of 16 bits. Measure (refined on the exact response,
// on SettlingGrid's 500 points): overshoot to 1e-9 absolute, times to
// 1e-9 of the span. Analyze (the cubic between samples) on 2,000 points
// over 40 time constants, so that the last sample is the final value to
// e^(−40): times to 1e-6 of the span, overshoot to 3e-4 relative with the
// 16 points per ringing period of ζ = 0.05, 1e-6 with 60 or more. And the
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
				y, fig, err := step.Measure(stages, ts, tol)
				require.NoError(t, err)
				require.Len(t, y, len(ts))
				require.Equal(t, 1.0, fig.FinalValue)
				require.InDelta(t, ov, fig.OvershootPct, 1e-7, "overshoot, ζ = %v", zeta)
				require.InDelta(t, rise, fig.RiseTimeS, 1e-9*span, "rise, ζ = %v", zeta)
				require.InDelta(t, settle, fig.SettlingS, 1e-9*span, "settling, ζ = %v, tol %v", zeta, tol)
				measured := (fig.SettlingS - settle) / span

				ts = step.TimeGrid(stages, 2000)
				for i := range ts {
					ts[i] *= 4
				}
				span = ts[len(ts)-1]
				y, err = step.Response(stages, ts)
				require.NoError(t, err)
				a := step.Analyze(ts, y, tol)
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
// overshoot, rise τ·ln 9, settling τ·ln(1/tol); its inverse −1/(1 + sτ)
// gives the same figures with a final value of −1.
func TestFiguresFirstOrder(t *testing.T) {
	t.Parallel()
	const tau = 1e-3
	for _, gain := range []float64{1, -1, 2.5} {
		stages := []step.Stage{{Num: []float64{gain}, Den: []float64{1, 1}, ScaleRadPerSec: 1 / tau}}
		ts := step.TimeGrid(stages, 500)
		y, fig, err := step.Measure(stages, ts, 1e-3)
		require.NoError(t, err)
		require.Equal(t, gain, fig.FinalValue)
		require.Zero(t, fig.OvershootPct)
		require.InEpsilon(t, tau*math.Log(9), fig.RiseTimeS, 1e-10)
		require.InEpsilon(t, tau*math.Log(1e3), fig.SettlingS, 1e-10)
		// Analyze's final value is the last sample, short of the gain by
		// e^(−10): y reaches the level L·(1 − e^(−10)) at
		// −τ·ln(1 − L·(1 − e^(−10))), and (1 − e^(−10))·(1 − tol) at
		// −τ·ln(e^(−10) + tol·(1 − e^(−10))).
		a := step.Analyze(ts, y, 1e-3)
		e10 := math.Exp(-10)
		at := func(level float64) float64 { return -tau * math.Log(1-level*(1-e10)) }
		require.InEpsilon(t, at(0.9)-at(0.1), a.RiseTimeS, 1e-6)
		require.InEpsilon(t, -tau*math.Log(e10+1e-3*(1-e10)), a.SettlingS, 1e-6)
	}
}

// A highpass s·τ/(1 + sτ) steps to 1 at t = 0 and decays to 0: the
// reference is the peak |y| = 1, the rise (a fall here) is τ·ln 9, and it
// settles to ±tol at τ·ln(1/tol).
func TestFiguresHighpass(t *testing.T) {
	t.Parallel()
	const tau = 1e-3
	stages := []step.Stage{{Num: []float64{0, 1}, Den: []float64{1, 1}, ScaleRadPerSec: 1 / tau}}
	ts := step.TimeGrid(stages, 500)
	_, fig, err := step.Measure(stages, ts, 1e-3)
	require.NoError(t, err)
	require.Zero(t, fig.FinalValue)
	require.Zero(t, fig.OvershootPct)
	require.InEpsilon(t, tau*math.Log(9), fig.RiseTimeS, 1e-10)
	require.InEpsilon(t, tau*math.Log(1e3), fig.SettlingS, 1e-10)
}

func TestAnalyzeEdges(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		ts, y []float64
		tol   float64
		check func(t *testing.T, f step.Figures)
	}{
		{"too-short", []float64{0}, []float64{1}, 1e-3, func(t *testing.T, f step.Figures) {
			require.True(t, math.IsNaN(f.SettlingS) && math.IsNaN(f.RiseTimeS) && math.IsNaN(f.OvershootPct) && math.IsNaN(f.FinalValue))
		}},
		{"mismatched", []float64{0, 1}, []float64{1}, 1e-3, func(t *testing.T, f step.Figures) {
			require.True(t, math.IsNaN(f.SettlingS))
		}},
		{"bad-tol", []float64{0, 1, 2}, []float64{0, 1, 1}, 0, func(t *testing.T, f step.Figures) {
			require.True(t, math.IsNaN(f.SettlingS))
			require.Equal(t, 1.0, f.FinalValue)
		}},
		{"never-outside", []float64{1, 2, 3}, []float64{1, 1, 1}, 1e-3, func(t *testing.T, f step.Figures) {
			require.Equal(t, 1.0, f.SettlingS)
			require.Zero(t, f.OvershootPct)
			require.True(t, math.IsNaN(f.RiseTimeS), "no swing")
		}},
		{"all-zero", []float64{0, 1, 2}, []float64{0, 0, 0}, 1e-3, func(t *testing.T, f step.Figures) {
			require.Equal(t, 0.0, f.SettlingS)
			require.Zero(t, f.OvershootPct)
		}},
		{"linear-ramp", []float64{0, 1, 2, 3, 4}, []float64{0, 0.25, 0.5, 0.75, 1}, 1e-3, func(t *testing.T, f step.Figures) {
			require.InDelta(t, 3.2, f.RiseTimeS, 1e-12)
			require.InDelta(t, 4*(1-1e-3), f.SettlingS, 1e-12)
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			tc.check(t, step.Analyze(tc.ts, tc.y, tc.tol))
		})
	}
}

// A grid that ends before the response settles gives +Inf.
func TestMeasureUnsettled(t *testing.T) {
	t.Parallel()
	stages := []step.Stage{{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}
	_, fig, err := step.Measure(stages, []float64{0, 1, 2, 3}, 1e-3)
	require.NoError(t, err)
	require.True(t, math.IsInf(fig.SettlingS, 1))
}

func TestMeasureErrors(t *testing.T) {
	t.Parallel()
	good := []step.Stage{{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}
	tests := []struct {
		name   string
		stages []step.Stage
		ts     []float64
		want   string
	}{
		{"one-time", good, []float64{0}, "at least 2"},
		{"descending", good, []float64{1, 0}, "below"},
		{"integrator", []step.Stage{{Num: []float64{1}, Den: []float64{0, 1}, ScaleRadPerSec: 1}}, []float64{0, 1}, "DC gain"},
		{"bad-stage", []step.Stage{{Num: []float64{1}, Den: []float64{1}, ScaleRadPerSec: 0}}, []float64{0, 1}, "ScaleRadPerSec"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, _, err := step.Measure(tc.stages, tc.ts, 1e-3)
			require.ErrorIs(t, err, step.ErrInvalid)
			require.ErrorContains(t, err, tc.want)
		})
	}
}

func TestHalfLSBAndGrid(t *testing.T) {
	t.Parallel()
	require.Equal(t, 1/131072.0, step.HalfLSBFrac(16)) // ½·2^−16 (closed form)
	require.True(t, math.IsNaN(step.HalfLSBFrac(0)))
	stages := []step.Stage{{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}
	require.Equal(t, step.TimeGrid(stages, 50), step.SettlingGrid(stages, 50, 1e-3))
	g := step.SettlingGrid(stages, 50, step.HalfLSBFrac(24))
	require.InEpsilon(t, math.Log(1<<25)+3, g[len(g)-1], 1e-12)
}
