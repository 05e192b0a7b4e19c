package step_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/step"
)

// linspace returns n times from 0 to end inclusive.
func linspace(end float64, n int) []float64 {
	t := make([]float64, n)
	for i := range t {
		t[i] = end * float64(i) / float64(n-1)
	}
	return t
}

// requireClose checks got against want with an absolute tolerance of
// tol·max(1, max|want|).
func requireClose(t *testing.T, want, got []float64, tol float64) {
	t.Helper()
	require.Len(t, got, len(want))
	scale := 1.0
	for _, v := range want {
		scale = math.Max(scale, math.Abs(v))
	}
	for i := range want {
		require.InDelta(t, want[i], got[i], tol*scale, "index %d", i)
	}
}

// The first-order lowpass 1/(1 + sτ) has the step response 1 − e^(−t/τ).
func TestFirstOrder(t *testing.T) {
	t.Parallel()
	const tau = 1e-3
	cases := []struct {
		name  string
		stage step.Stage
	}{
		{"rational", step.Stage{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1 / tau}},
		{"section", step.FromSection(section.Section{Poles: []complex128{-1 / tau}, Gain: 1 / tau})},
		// The same pole at another scale: x = s/(2/τ), D = 1 + 2x.
		{"rescaled", step.Stage{Num: []float64{3}, Den: []float64{3, 6}, ScaleRadPerSec: 2 / tau}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ts := linspace(10*tau, 101)
			y, err := step.Response([]step.Stage{tc.stage}, ts)
			require.NoError(t, err)
			want := make([]float64, len(ts))
			for i, v := range ts {
				want[i] = -math.Expm1(-v / tau) // closed form
			}
			requireClose(t, want, y, 1e-13)
		})
	}
}

// H = ω0²/(s² + 2ζω0·s + ω0²). For ζ < 1, with ωd = ω0·√(1−ζ²),
//
//	y(t) = 1 − e^(−ζω0t)·(cos ωd·t + ζ/√(1−ζ²)·sin ωd·t),
//
// whose first maximum is at tp = π/ωd, where y = 1 + e^(−πζ/√(1−ζ²)) (set
// dy/dt = (ω0/√(1−ζ²))·e^(−ζω0t)·sin ωd·t to zero). For ζ = 1 (a double
// pole) y(t) = 1 − e^(−ω0t)·(1 + ω0t).
func TestSecondOrder(t *testing.T) {
	t.Parallel()
	w0 := 2 * math.Pi * 1000
	cases := []struct {
		name string
		zeta float64
	}{
		{"zeta-0.05", 0.05},
		{"zeta-0.2", 0.2},
		{"butterworth", 1 / math.Sqrt2},
		{"critical", 1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			z := tc.zeta
			closed := func(tt float64) float64 {
				if z == 1 {
					return 1 - math.Exp(-w0*tt)*(1+w0*tt)
				}
				wd := w0 * math.Sqrt(1-z*z)
				return 1 - math.Exp(-z*w0*tt)*(math.Cos(wd*tt)+z/math.Sqrt(1-z*z)*math.Sin(wd*tt))
			}
			stages := []step.Stage{
				{Num: []float64{1}, Den: []float64{1, 2 * z, 1}, ScaleRadPerSec: w0},
			}
			if z < 1 {
				wd := w0 * math.Sqrt(1-z*z)
				p := complex(-z*w0, wd)
				sec := section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Gain: w0 * w0}
				stages = append(stages[:0], step.FromSection(sec))
			}
			ts := linspace(step.Span(stages), 400)
			y, err := step.Response(stages, ts)
			require.NoError(t, err)
			want := make([]float64, len(ts))
			for i, v := range ts {
				want[i] = closed(v)
			}
			requireClose(t, want, y, 1e-12)

			if z < 1 {
				tp := math.Pi / (w0 * math.Sqrt(1-z*z))
				peak, err := step.Response(stages, []float64{0, tp / 3, tp})
				require.NoError(t, err)
				require.InDelta(t, 1+math.Exp(-math.Pi*z/math.Sqrt(1-z*z)), peak[2], 1e-12)
			}
		})
	}
}

// pfStep returns the step response of K·∏(s−z)/∏(s−p) (distinct poles, none
// at 0) by partial fractions: Y(s) = H(s)/s has the residue H(0) at s = 0
// and R_k = K·∏(p_k−z)/(p_k·∏_{j≠k}(p_k−p_j)) at each pole, so
// y(t) = H(0) + Σ R_k·e^(p_k·t). The residues are evaluated from the
// factored form, independently of the package.
func pfStep(zeros, poles []complex128, k float64, ts []float64) []float64 {
	h0 := complex(k, 0)
	for _, z := range zeros {
		h0 *= -z
	}
	for _, p := range poles {
		h0 /= -p
	}
	res := make([]complex128, len(poles))
	for i, p := range poles {
		r := complex(k, 0) / p
		for _, z := range zeros {
			r *= p - z
		}
		for j, q := range poles {
			if j != i {
				r /= p - q
			}
		}
		res[i] = r
	}
	y := make([]float64, len(ts))
	for n, tt := range ts {
		v := h0
		for i, p := range poles {
			v += res[i] * cmplx.Exp(p*complex(tt, 0))
		}
		y[n] = real(v)
	}
	if len(ts) > 0 && ts[0] == 0 && len(zeros) == len(poles) {
		y[0] = k // the limit from the right, H(∞)
	}
	return y
}

// polyX returns the ascending coefficients of ∏(x − r/w) for roots r in
// rad/s, times k.
func polyX(roots []complex128, w, k float64) []float64 {
	c := []complex128{complex(k, 0)}
	for _, r := range roots {
		next := make([]complex128, len(c)+1)
		for i, v := range c {
			next[i+1] += v
			next[i] -= v * r / complex(w, 0)
		}
		c = next
	}
	out := make([]float64, len(c))
	for i, v := range c {
		out[i] = real(v)
	}
	return out
}

// rationalOf returns K·∏(s−z)/∏(s−p) as a Stage in x = s/w.
func rationalOf(zeros, poles []complex128, k, w float64) step.Stage {
	// K·∏(s−z)/∏(s−p) = K·w^(m−n)·∏(x−z/w)/∏(x−p/w).
	g := k * math.Pow(w, float64(len(zeros)-len(poles)))
	return step.Stage{Num: polyX(zeros, w, g), Den: polyX(poles, w, 1), ScaleRadPerSec: w}
}

func pair(re, im float64) []complex128 { return []complex128{complex(re, im), complex(re, -im)} }

func cat(parts ...[]complex128) []complex128 {
	var out []complex128
	for _, p := range parts {
		out = append(out, p...)
	}
	return out
}

// A cascade's response against partial fractions of the whole product.
func TestCascadeAgainstPartialFractions(t *testing.T) {
	t.Parallel()
	w := 2 * math.Pi * 1000
	type part struct {
		zeros, poles []complex128
		k            float64
		rational     bool    // as a Stage from expanded polynomials, not FromSection
		scale        float64 // the Stage's scale for rational parts, in units of w
	}
	cases := []struct {
		name  string
		parts []part
	}{
		{"butterworth-3", []part{
			{poles: []complex128{complex(-w, 0)}, k: w},
			{poles: pair(-w/2, w*math.Sqrt(3)/2), k: w * w},
		}},
		{"bandpass-4", []part{
			{zeros: []complex128{0}, poles: pair(-0.08*w, 0.9*w), k: 0.2 * w},
			{zeros: []complex128{0}, poles: pair(-0.09*w, 1.1*w), k: 0.2 * w},
		}},
		{"highpass-notch-and-highpass", []part{
			{zeros: pair(0, 0.5*w), poles: pair(-0.3*w, 0.8*w), k: 1.3},
			{zeros: []complex128{0, 0}, poles: pair(-0.6*w, 0.7*w), k: 1},
			{zeros: []complex128{0}, poles: []complex128{complex(-0.4*w, 0)}, k: -0.7},
		}},
		{"non-minimum-phase-with-opamp-pole", []part{
			// A pair at w, a real zero at +50w and a far pole at −1000w.
			{zeros: []complex128{complex(50*w, 0)}, poles: cat(pair(-0.2*w, 0.98*w), []complex128{complex(-1000*w, 0)}), k: -1000 * w * w / 50, rational: true, scale: 1},
		}},
		{"real-poles-with-jw-zeros", []part{
			// A wide bandstop section: two real poles and a jω zero pair.
			{zeros: pair(0, w), poles: []complex128{complex(-0.3*w, 0), complex(-3.1*w, 0)}, k: 1, rational: true, scale: 1},
			{poles: pair(-0.25*w, 1.3*w), k: 1.9 * w * w},
		}},
		{"degree-6-rational", []part{
			{zeros: cat(pair(0, 1.7*w), []complex128{complex(-5*w, 0)}), poles: cat(pair(-0.1*w, w), pair(-0.4*w, 0.7*w), pair(-2*w, 3*w)), k: 6 * w * w * w, rational: true, scale: 0.5},
		}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var stages []step.Stage
			var zeros, poles []complex128
			k := 1.0
			for _, p := range tc.parts {
				if p.rational {
					stages = append(stages, rationalOf(p.zeros, p.poles, p.k, p.scale*w))
				} else {
					stages = append(stages, step.FromSection(section.Section{Zeros: p.zeros, Poles: p.poles, Gain: p.k}))
				}
				zeros = append(zeros, p.zeros...)
				poles = append(poles, p.poles...)
				k *= p.k
			}
			ts := step.TimeGrid(stages, 500)
			y, err := step.Response(stages, ts)
			require.NoError(t, err)
			requireClose(t, pfStep(zeros, poles, k, ts), y, 1e-12)

			// The final value is H(0).
			late, err := step.Response(stages, []float64{4 * step.Span(stages)})
			require.NoError(t, err)
			require.InDelta(t, step.DCGain(stages), late[0], 1e-12*math.Max(1, math.Abs(step.DCGain(stages))))
		})
	}
}

// Evaluating point by point (one exponential per time) agrees with the
// uniform grid (one exponential for all).
func TestGridIndependence(t *testing.T) {
	t.Parallel()
	w := 2 * math.Pi * 50
	stages := []step.Stage{
		step.FromSection(section.Section{Poles: pair(-0.05*w, w), Gain: w * w}),
		step.FromSection(section.Section{Poles: []complex128{complex(-2*w, 0)}, Zeros: []complex128{0}, Gain: 1}),
	}
	ts := step.TimeGrid(stages, 300)
	all, err := step.Response(stages, ts)
	require.NoError(t, err)
	for _, i := range []int{0, 1, 17, 150, 299} {
		one, err := step.Response(stages, []float64{ts[i]})
		require.NoError(t, err)
		require.InDelta(t, all[i], one[0], 1e-12, "t = %v", ts[i])
	}
	// A grid that does not start at 0, and a repeated time.
	sub, err := step.Response(stages, []float64{ts[40], ts[40], ts[41], ts[200]})
	require.NoError(t, err)
	requireClose(t, []float64{all[40], all[40], all[41], all[200]}, sub, 1e-12)
}

// A stiff cascade: a 10 Hz pair and an op-amp pole at 10 MHz.
func TestStiff(t *testing.T) {
	t.Parallel()
	w := 2 * math.Pi * 10
	wa := 2 * math.Pi * 10e6
	zeros := []complex128(nil)
	poles := cat(pair(-0.1*w, 0.995*w), []complex128{complex(-wa, 0)})
	k := 1.01 * w * w * wa
	stages := []step.Stage{rationalOf(zeros, poles, k, w)}
	ts := step.TimeGrid(stages, 500)
	y, err := step.Response(stages, ts)
	require.NoError(t, err)
	requireClose(t, pfStep(zeros, poles, k, ts), y, 1e-13)
}

// 1/x = w/s integrates: the step response is the ramp w·t.
func TestIntegrator(t *testing.T) {
	t.Parallel()
	const w = 3.0
	stages := []step.Stage{{Num: []float64{1}, Den: []float64{0, 1}, ScaleRadPerSec: w}}
	ts := linspace(2, 21)
	y, err := step.Response(stages, ts)
	require.NoError(t, err)
	want := make([]float64, len(ts))
	for i, v := range ts {
		want[i] = w * v
	}
	requireClose(t, want, y, 1e-13)
	require.True(t, math.IsInf(step.DCGain(stages), 1))
}

func TestSpecialCascades(t *testing.T) {
	t.Parallel()
	ts := []float64{0, 0.5, 1}
	lp := step.Stage{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}
	cases := []struct {
		name   string
		stages []step.Stage
		want   []float64
	}{
		{"none", nil, []float64{1, 1, 1}}, // the identity
		{"constant", []step.Stage{{Num: []float64{-2.5}, Den: []float64{0.5}, ScaleRadPerSec: 7}}, []float64{-5, -5, -5}},
		{"zero", []step.Stage{lp, {Num: []float64{0, 0}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}, []float64{0, 0, 0}},
		{"trailing-zeros", []step.Stage{{Num: []float64{1, 0, 0}, Den: []float64{1, 1, 0}, ScaleRadPerSec: 1}},
			[]float64{0, -math.Expm1(-0.5), -math.Expm1(-1)}}, // 1/(1+x): 1 − e^(−t)
		{"allpass", []step.Stage{{Num: []float64{1, -1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}},
			[]float64{-1, 1 - 2*math.Exp(-0.5), 1 - 2*math.Exp(-1)}}, // (1−s)/(1+s) = −1 + 2/(1+s)
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			y, err := step.Response(tc.stages, ts)
			require.NoError(t, err)
			requireClose(t, tc.want, y, 1e-14)
		})
	}
	y, err := step.Response([]step.Stage{lp}, nil)
	require.NoError(t, err)
	require.Empty(t, y)
}

func TestErrors(t *testing.T) {
	t.Parallel()
	lp := step.Stage{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 1}
	many := make([]step.Stage, step.MaxStates/2+1)
	for i := range many {
		many[i] = step.Stage{Num: []float64{1}, Den: []float64{1, 1, 1}, ScaleRadPerSec: 1}
	}
	cases := []struct {
		name   string
		stages []step.Stage
		ts     []float64
	}{
		{"too-many-points", []step.Stage{lp}, make([]float64, step.MaxPoints+1)},
		{"negative-time", []step.Stage{lp}, []float64{-1}},
		{"nan-time", []step.Stage{lp}, []float64{0, math.NaN()}},
		{"inf-time", []step.Stage{lp}, []float64{math.Inf(1)}},
		{"descending", []step.Stage{lp}, []float64{0, 2, 1}},
		{"improper", []step.Stage{{Num: []float64{1, 1}, Den: []float64{1}, ScaleRadPerSec: 1}}, []float64{0}},
		{"zero-scale", []step.Stage{{Num: []float64{1}, Den: []float64{1, 1}}}, []float64{0}},
		{"inf-scale", []step.Stage{{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: math.Inf(1)}}, []float64{0}},
		{"nan-coefficient", []step.Stage{{Num: []float64{math.NaN()}, Den: []float64{1, 1}, ScaleRadPerSec: 1}}, []float64{0}},
		{"zero-denominator", []step.Stage{{Num: []float64{1}, Den: []float64{0, 0}, ScaleRadPerSec: 1}}, []float64{0}},
		{"too-many-states", many, []float64{0}},
		// (1 + x²)/x²: the jω zero pair has no pole pair to go with.
		{"unrealisable", []step.Stage{{Num: []float64{1, 0, 1}, Den: []float64{0, 0, 1}, ScaleRadPerSec: 1}}, []float64{0}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := step.Response(tc.stages, tc.ts)
			require.ErrorIs(t, err, step.ErrInvalid)
		})
	}
}

// An unstable stage, 1/(1 − x) = 1/(1 − s), has Y = 1/s + 1/(1 − s) and
// y = 1 − e^t, which overflows to −Inf without an error.
func TestUnstable(t *testing.T) {
	t.Parallel()
	stages := []step.Stage{{Num: []float64{1}, Den: []float64{1, -1}, ScaleRadPerSec: 1}}
	y, err := step.Response(stages, []float64{0, 1, 10, 1000})
	require.NoError(t, err)
	require.InDelta(t, 0, y[0], 1e-15)
	require.InEpsilon(t, -math.Expm1(1), y[1], 1e-13)
	require.InEpsilon(t, -math.Expm1(10), y[2], 1e-13)
	require.True(t, math.IsInf(y[3], -1) || math.IsNaN(y[3]))
}

func TestTimeGrid(t *testing.T) {
	t.Parallel()
	w := 2 * math.Pi * 1000
	pole := pair(-0.1*w, w)
	stages := []step.Stage{
		step.FromSection(section.Section{Poles: pole, Gain: 1.01 * w * w}),
		step.FromSection(section.Section{Poles: []complex128{complex(-3*w, 0)}, Gain: 3 * w}),
	}
	cases := []struct {
		name  string
		n     int
		wantN int
	}{
		{"500", 500, 500},
		{"clamped-low", -3, 2},
		{"clamped-high", step.MaxPoints + 7, step.MaxPoints},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ts := step.TimeGrid(stages, tc.n)
			require.Len(t, ts, tc.wantN)
			require.Zero(t, ts[0])
			// The slowest decay is Re p = −0.1w: 10 time constants.
			require.InEpsilon(t, step.SpanTimeConstants/(0.1*w), ts[len(ts)-1], 1e-12)
			for i := 1; i < len(ts); i++ {
				require.Greater(t, ts[i], ts[i-1])
			}
		})
	}
	require.Equal(t, 1.0, step.Span(nil))
	// No stable pole: the magnitude of the unstable pole s = +4 sets the
	// span; an integrator alone has no time scale.
	require.InEpsilon(t, step.SpanTimeConstants/4.0, step.Span([]step.Stage{{Num: []float64{1}, Den: []float64{1, -1}, ScaleRadPerSec: 4}}), 1e-12)
	require.Equal(t, 1.0, step.Span([]step.Stage{{Num: []float64{1}, Den: []float64{0, 1}, ScaleRadPerSec: 4}}))
}

// FromSection and FromRational keep the transfer function.
func TestConversions(t *testing.T) {
	t.Parallel()
	w := 2 * math.Pi * 300
	secs := []section.Section{
		{Poles: pair(-0.2*w, 0.9*w), Gain: 2 * w * w},
		{Poles: pair(-0.3*w, 1.2*w), Zeros: pair(0, 2*w), Gain: 0.4},
		{Poles: pair(-0.3*w, 1.2*w), Zeros: []complex128{0}, Gain: 0.5 * w},
		{Poles: []complex128{complex(-w, 0)}, Zeros: []complex128{0}, Gain: 1},
		{Gain: 3},
	}
	for i, sec := range secs {
		st := step.FromSection(sec)
		if len(sec.Poles) > 0 {
			require.Equal(t, 1.0, st.Den[0], "section %d", i)
			require.InEpsilon(t, sec.OmegaRadPerSec(), st.ScaleRadPerSec, 1e-15)
		}
		for _, s := range []complex128{complex(0, 0.3*w), complex(0.1*w, 2*w), complex(-w, 5*w)} {
			want := sec.ZPK().At(s)
			require.InDelta(t, 0, cmplx.Abs(st.At(s)-want), 1e-13*cmplx.Abs(want), "section %d at %v", i, s)
		}
	}
	r := circuit.Rational{Num: []float64{1, 2}, Den: []float64{1, 0.5, 0.25, 0.01}, ScaleRadPerSec: 5, SectionOrder: 2}
	st := step.FromRational(r)
	require.Equal(t, r.Num, st.Num)
	require.Equal(t, r.Den, st.Den)
	require.Equal(t, r.ScaleRadPerSec, st.ScaleRadPerSec)
	require.Equal(t, r.At(complex(1, 2)), st.At(complex(1, 2)))
	st.Num[0] = 9
	require.Equal(t, 1.0, r.Num[0], "FromRational copies")
}
