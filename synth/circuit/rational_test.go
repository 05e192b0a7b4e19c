package circuit_test

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// crossStages are the stages the rational form is checked on, each with
// the op-amp models below.
func crossStages() []struct {
	name  string
	stage circuit.Stage
} {
	return []struct {
		name  string
		stage circuit.Stage
	}{
		{"rc-buffer", rcBuffer(rcR, rcC)},
		{"sallen-key-lowpass", sallenKeyLP(skR1, skR2, skC1, skC2)},
		{"sallen-key-highpass", sallenKeyHP(hpC1, hpC2, hpR1, hpR2)},
		{"mfb-lowpass", mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)},
		{"inverting", inverting(invR1, invR2)},
		{"sallen-key-lowpass/10Hz", sallenKeyLP(1.6e6, 1.6e6, 20e-9, 10e-9)},
	}
}

var crossModels = []struct {
	name  string
	model circuit.Model
}{
	{"ideal", ideal},
	{"single-pole-1MHz", singlePole},
	{"single-pole-1GHz", circuit.Model{GBWHz: gbwFast, DCGainDB: dbHigh}},
	{"single-pole-10kHz", circuit.Model{GBWHz: gbwSlow, DCGainDB: 80}},
}

// TestRationalMatchesMNA checks the interpolated rational form against the
// direct nodal solution at 200 random frequencies (log-uniform over six
// decades around the stage's scale) and 50 random points off the axis.
// Reference: Stage.SolveAt, a different computation (LU with iterative
// refinement at each frequency) of the same equations.
func TestRationalMatchesMNA(t *testing.T) {
	t.Parallel()
	for _, st := range crossStages() {
		for _, md := range crossModels {
			t.Run(st.name+"/"+md.name, func(t *testing.T) {
				t.Parallel()
				r, err := st.stage.TransferFunction(md.model)
				require.NoError(t, err)
				rng := rand.New(rand.NewPCG(1, 2))
				for i := range 250 {
					w := r.ScaleRadPerSec * math.Pow(10, -3+6*rng.Float64())
					s := complex(0, w)
					if i >= 200 {
						s = complex(-w*rng.Float64(), w)
					}
					direct, err := st.stage.SolveAt(md.model, s)
					require.NoError(t, err)
					require.LessOrEqual(t, relErr(r.At(s), direct), 1e-10, "s = %v", s)
				}
			})
		}
	}
}

// TestInterpolationIsExact checks the coefficients themselves against the
// closed-form denominator of the ideal Sallen-Key lowpass, 1 +
// p·C2(R1+R2)·ω + p²·R1R2C1C2·ω² in p = s/ω, at scales from 1e-6 to 1e6
// times the natural one: the DFT on a circle is well conditioned whatever
// the spread of the coefficients.
func TestInterpolationIsExact(t *testing.T) {
	t.Parallel()
	st := sallenKeyLP(skR1, skR2, skC1, skC2)
	w0 := 1 / math.Sqrt(skR1*skR2*skC1*skC2)
	for _, tc := range []struct {
		name  string
		scale float64
	}{
		{"natural", w0}, {"1e-6", 1e-6 * w0}, {"1e-2", 1e-2 * w0}, {"1e2", 1e2 * w0}, {"1e6", 1e6 * w0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r, err := st.TransferFunctionScaled(ideal, tc.scale)
			require.NoError(t, err)
			require.Equal(t, tc.scale, r.ScaleRadPerSec)
			want := []float64{1, skC2 * (skR1 + skR2) * tc.scale, skR1 * skR2 * skC1 * skC2 * tc.scale * tc.scale}
			require.Len(t, r.Den, 3)
			for i := range want {
				require.InEpsilon(t, want[i], r.Den[i], 1e-13, "Den[%d]", i)
			}
			require.Equal(t, []float64{r.Num[0]}, r.Num, "a lowpass numerator is a constant")
			require.InEpsilon(t, 1, r.Num[0], 1e-14)
			require.Equal(t, 2, r.SectionOrder)
		})
	}
}

// TestRoots checks Rational.Poles and Zeros on polynomials with known
// roots (constructed from them), including a spread of five decades and an
// exact zero at the origin.
func TestRoots(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		roots []complex128 // in p; the scale below multiplies them
	}{
		{"real", []complex128{-1, -2}},
		{"pair", []complex128{complex(-0.5, 0.8), complex(-0.5, -0.8)}},
		{"mixed-5", []complex128{-1, -2, complex(-0.5, 0.866), complex(-0.5, -0.866), -10}},
		{"spread", []complex128{complex(-0.1, 1), complex(-0.1, -1), -1e4, complex(-2e5, 3e5), complex(-2e5, -3e5)}},
		{"origin", []complex128{0, 0, complex(-0.7, 0.7), complex(-0.7, -0.7), -3}},
		{"seven", []complex128{-1, -1.5, complex(-0.2, 1.1), complex(-0.2, -1.1), complex(-1, 3), complex(-1, -3), -50}},
	}
	const scale = 2 * math.Pi * 1e3
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c := polyFromRoots(tc.roots)
			r := circuit.Rational{Num: c, Den: c, ScaleRadPerSec: scale, SectionOrder: len(tc.roots)}
			for _, got := range [][]complex128{r.Poles(), r.Zeros()} {
				require.Len(t, got, len(tc.roots))
				want := slices.Clone(tc.roots)
				for _, w := range want {
					i := slices.IndexFunc(got, func(g complex128) bool {
						return cmplx.Abs(g-w*scale) <= 1e-9*math.Max(cmplx.Abs(w*scale), scale)
					})
					require.GreaterOrEqual(t, i, 0, "root %v·scale not found in %v", w, got)
					if w == 0 {
						require.Equal(t, complex128(0), got[i], "zero at the origin is exact")
					}
					got = slices.Delete(slices.Clone(got), i, i+1)
				}
			}
		})
	}
}

// polyFromRoots returns the real coefficients (ascending) of Π(p − r).
func polyFromRoots(roots []complex128) []float64 {
	c := []complex128{1}
	for _, r := range roots {
		next := make([]complex128, len(c)+1)
		for i, v := range c {
			next[i+1] += v
			next[i] -= r * v
		}
		c = next
	}
	out := make([]float64, len(c))
	for i, v := range c {
		out[i] = real(v)
	}
	return out
}

func TestRationalAt(t *testing.T) {
	t.Parallel()
	// H = (1 + 2p)/(1 + p + p²) with p = s/10 (hand-evaluated).
	r := circuit.Rational{Num: []float64{1, 2}, Den: []float64{1, 1, 1}, ScaleRadPerSec: 10, SectionOrder: 2}
	tests := []struct {
		name string
		s    complex128
		want complex128
	}{
		{"dc", 0, 1},
		{"p=j", complex(0, 10), (1 + 2i) / 1i},
		{"p=-1+j", complex(-10, 10), (1 + 2*(-1+1i)) / (1 + (-1 + 1i) + (-1+1i)*(-1+1i))},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.LessOrEqual(t, cmplx.Abs(r.At(tc.s)-tc.want), 1e-15*cmplx.Abs(tc.want))
			if real(tc.s) == 0 {
				got := r.AtHz(imag(tc.s) / (2 * math.Pi))
				require.LessOrEqual(t, cmplx.Abs(got-tc.want), 1e-15*cmplx.Abs(tc.want))
			}
		})
	}
}
