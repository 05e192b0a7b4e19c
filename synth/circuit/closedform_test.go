package circuit_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// gainOf is the single-pole op-amp gain A(s) = A0/(1 + s·A0/ωt) of model m
// (the model's definition in circuit.Model).
func gainOf(m circuit.Model, s complex128) complex128 {
	a0 := math.Pow(10, m.DCGainDB/20)
	wt := 2 * math.Pi * m.GBWHz
	return complex(a0, 0) / (1 + s*complex(a0/wt, 0))
}

// relErr is |got − want|/|want|.
func relErr(got, want complex128) float64 { return cmplx.Abs(got-want) / cmplx.Abs(want) }

// ratios are the test frequencies relative to a stage's natural frequency:
// 1e-3 to 1e3, three per decade.
func ratios() []float64 {
	var r []float64
	for e := -9; e <= 9; e++ {
		r = append(r, math.Pow(10, float64(e)/3))
	}
	return r
}

// Part values of the closed-form circuits.
const (
	rcR, rcC                 = 10e3, 10e-9              // f_c = 1/(2πRC) ≈ 1591.5 Hz
	skR1, skR2, skC1, skC2   = 10e3, 22e3, 22e-9, 10e-9 // unity-gain Sallen-Key lowpass
	hpC1, hpC2, hpR1, hpR2   = 10e-9, 10e-9, 22e3, 10e3 // unity-gain Sallen-Key highpass
	mfR1, mfR2, mfR3         = 10e3, 10e3, 4.7e3        // MFB lowpass resistors
	mfC1, mfC2               = 47e-9, 2.2e-9            // MFB lowpass capacitors
	invR1, invR2             = 1e3, 10e3                // inverting amplifier, gain −10
	gbwFast, gbwSlow, dbHigh = 1e9, 1e4, 120.0          // extreme op-amps for the sweeps
)

// skLowpassSinglePole is the unity-gain Sallen-Key lowpass with a
// single-pole op-amp, derived by hand from the node equations: with
// V(+) = k·V(out), k = 1 + 1/A, and V(n1) = V(+)·(1 + sC2R2),
//
//	H = G1 / (k·(1 + sC2R2)·(G1 + G2 + sC1) − sC1 − k·G2).
//
// For A → ∞ (k = 1) it reduces to 1/(1 + sC2(R1+R2) + s²R1R2C1C2).
func skLowpassSinglePole(m circuit.Model, s complex128) complex128 {
	k := 1 + 1/gainOf(m, s)
	g1, g2 := complex(1/skR1, 0), complex(1/skR2, 0)
	c1, c2, r2 := complex(skC1, 0), complex(skC2, 0), complex(skR2, 0)
	return g1 / (k*(1+s*c2*r2)*(g1+g2+s*c1) - s*c1 - k*g2)
}

func TestClosedForms(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		stage  circuit.Stage
		model  circuit.Model
		w0     float64 // natural frequency the ratios are relative to, rad/s
		closed func(s complex128) complex128
		tol    float64
	}{
		{
			// RC lowpass into a follower, ideal: H = 1/(1 + sRC) (closed form).
			name: "rc-buffer/ideal", stage: rcBuffer(rcR, rcC), model: ideal, w0: 1 / (rcR * rcC),
			closed: func(s complex128) complex128 { return 1 / (1 + s*complex(rcR*rcC, 0)) },
			tol:    1e-13,
		},
		{
			// Follower with finite gain: V = A·(V(+) − V) gives A/(1 + A)
			// (closed form), times the unloaded RC divider.
			name: "rc-buffer/single-pole", stage: rcBuffer(rcR, rcC), model: singlePole, w0: 1 / (rcR * rcC),
			closed: func(s complex128) complex128 {
				a := gainOf(singlePole, s)
				return 1 / (1 + s*complex(rcR*rcC, 0)) * a / (1 + a)
			},
			tol: 1e-12,
		},
		{
			// Unity-gain Sallen-Key lowpass, ideal op-amp:
			// H = 1/(1 + sC2(R1+R2) + s²R1R2C1C2), C1 the feedback and C2 the
			// ground capacitor (hand-derived; the textbook form, e.g. TI
			// SLOA024, from memory).
			name: "sallen-key-lowpass/ideal", stage: sallenKeyLP(skR1, skR2, skC1, skC2), model: ideal,
			w0: 1 / math.Sqrt(skR1*skR2*skC1*skC2),
			closed: func(s complex128) complex128 {
				return 1 / (1 + s*complex(skC2*(skR1+skR2), 0) + s*s*complex(skR1*skR2*skC1*skC2, 0))
			},
			tol: 1e-13,
		},
		{
			// The same with a 1 MHz single-pole op-amp (hand-derived above).
			name: "sallen-key-lowpass/single-pole", stage: sallenKeyLP(skR1, skR2, skC1, skC2), model: singlePole,
			w0:     1 / math.Sqrt(skR1*skR2*skC1*skC2),
			closed: func(s complex128) complex128 { return skLowpassSinglePole(singlePole, s) },
			tol:    1e-12,
		},
		{
			// Unity-gain Sallen-Key highpass, R1 the feedback and R2 the ground
			// resistor: H = s²R1R2C1C2/(s²R1R2C1C2 + sR1(C1+C2) + 1)
			// (hand-derived from the node equations).
			name: "sallen-key-highpass/ideal", stage: sallenKeyHP(hpC1, hpC2, hpR1, hpR2), model: ideal,
			w0: 1 / math.Sqrt(hpR1*hpR2*hpC1*hpC2),
			closed: func(s complex128) complex128 {
				n := s * s * complex(hpR1*hpR2*hpC1*hpC2, 0)
				return n / (n + s*complex(hpR1*(hpC1+hpC2), 0) + 1)
			},
			tol: 1e-13,
		},
		{
			// Multiple-feedback lowpass, ideal op-amp, C1 at the input node to
			// ground and C2 from the inverting input to the output:
			// H = −(R2/R1)/(1 + sC2(R2 + R3 + R2R3/R1) + s²R2R3C1C2)
			// (hand-derived from the node equations with V(−) = 0).
			name: "mfb-lowpass/ideal", stage: mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2), model: ideal,
			w0: 1 / math.Sqrt(mfR2*mfR3*mfC1*mfC2),
			closed: func(s complex128) complex128 {
				b := mfC2 * (mfR2 + mfR3 + mfR2*mfR3/mfR1)
				return complex(-mfR2/mfR1, 0) / (1 + s*complex(b, 0) + s*s*complex(mfR2*mfR3*mfC1*mfC2, 0))
			},
			tol: 1e-13,
		},
		{
			// Inverting amplifier, ideal: H = −R2/R1 (closed form).
			name: "inverting/ideal", stage: inverting(invR1, invR2), model: ideal, w0: 2 * math.Pi * 1e3,
			closed: func(complex128) complex128 { return -invR2 / invR1 },
			tol:    1e-15,
		},
		{
			// Inverting amplifier with a single-pole op-amp: V(−) =
			// (R2·Vin + R1·Vout)/(R1 + R2), Vout = −A·V(−), so with β =
			// R1/(R1 + R2), H = −(R2/R1)·Aβ/(1 + Aβ) = −(R2/R1)·A/(1 + A + R2/R1)
			// (hand-derived).
			name: "inverting/single-pole", stage: inverting(invR1, invR2), model: singlePole, w0: 2 * math.Pi * 1e3,
			closed: func(s complex128) complex128 {
				a := gainOf(singlePole, s)
				return complex(-invR2/invR1, 0) * a / (1 + a + invR2/invR1)
			},
			tol: 1e-12,
		},
		{
			// The same with a slow op-amp (10 kHz GBW), where the loop gain
			// falls below one inside the sweep.
			name: "inverting/slow", stage: inverting(invR1, invR2), model: circuit.Model{GBWHz: gbwSlow, DCGainDB: dbHigh},
			w0: 2 * math.Pi * 1e3,
			closed: func(s complex128) complex128 {
				a := gainOf(circuit.Model{GBWHz: gbwSlow, DCGainDB: dbHigh}, s)
				return complex(-invR2/invR1, 0) * a / (1 + a + invR2/invR1)
			},
			tol: 1e-12,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r, err := tc.stage.TransferFunction(tc.model)
			require.NoError(t, err)
			for _, x := range ratios() {
				for _, s := range []complex128{
					complex(0, x*tc.w0),            // on the jω axis
					complex(-0.3*x*tc.w0, x*tc.w0), // and off it
				} {
					want := tc.closed(s)
					direct, err := tc.stage.SolveAt(tc.model, s)
					require.NoError(t, err)
					require.LessOrEqual(t, relErr(direct, want), tc.tol, "SolveAt at s = %v", s)
					require.LessOrEqual(t, relErr(r.At(s), want), tc.tol, "Rational.At at s = %v", s)
				}
				f := x * tc.w0 / (2 * math.Pi)
				require.LessOrEqual(t, relErr(r.AtHz(f), tc.closed(complex(0, x*tc.w0))), tc.tol, "Rational.AtHz at %v Hz", f)
			}
		})
	}
}

func TestDominantPair(t *testing.T) {
	t.Parallel()
	skW0 := 1 / math.Sqrt(skR1*skR2*skC1*skC2)
	mfW0 := 1 / math.Sqrt(mfR2*mfR3*mfC1*mfC2)
	tests := []struct {
		name  string
		stage circuit.Stage
		model circuit.Model
		f0Hz  float64
		q     float64
		tol   float64
	}{
		// ω0 = 1/√(R1R2C1C2), Q = √(R1R2C1C2)/(C2(R1+R2)) (closed form of the
		// denominator in TestClosedForms).
		{"sallen-key-lowpass/ideal", sallenKeyLP(skR1, skR2, skC1, skC2), ideal,
			skW0 / (2 * math.Pi), math.Sqrt(skR1*skR2*skC1*skC2) / (skC2 * (skR1 + skR2)), 1e-13},
		// ω0 = 1/√(R2R3C1C2), Q = √(R2R3C1C2)/(C2(R2 + R3 + R2R3/R1)) (same).
		{"mfb-lowpass/ideal", mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2), ideal,
			mfW0 / (2 * math.Pi), math.Sqrt(mfR2*mfR3*mfC1*mfC2) / (mfC2 * (mfR2 + mfR3 + mfR2*mfR3/mfR1)), 1e-13},
		// ω0 = 1/√(R1R2C1C2), Q = √(R1R2C1C2)/(R1(C1+C2)) (same).
		{"sallen-key-highpass/ideal", sallenKeyHP(hpC1, hpC2, hpR1, hpR2), ideal,
			1 / math.Sqrt(hpR1*hpR2*hpC1*hpC2) / (2 * math.Pi), math.Sqrt(hpR1*hpR2*hpC1*hpC2) / (hpR1 * (hpC1 + hpC2)), 1e-13},
		// Overdamped highpass (Q = √(R2/R1)/2 = 0.337 with R1 = 22k, R2 =
		// 10k, equal C): two real poles; f0 and Q are those of the quadratic
		// (closed form as above).
		{"sallen-key-highpass/overdamped", sallenKeyHP(hpC1, hpC2, 22e3, 10e3), singlePole,
			1 / math.Sqrt(22e3*10e3*hpC1*hpC2) / (2 * math.Pi), math.Sqrt(22e3*10e3*hpC1*hpC2) / (22e3 * (hpC1 + hpC2)), 1e-3},
		// First order: the real pole 1/RC and q = 0 (closed form).
		{"rc-buffer/ideal", rcBuffer(rcR, rcC), ideal, 1 / (2 * math.Pi * rcR * rcC), 0, 1e-13},
		// With a 1 MHz op-amp the follower's pole at ωt(1+A0)/A0 is far away
		// and the RC pole is unchanged (the divider is unloaded).
		{"rc-buffer/single-pole", rcBuffer(rcR, rcC), singlePole, 1 / (2 * math.Pi * rcR * rcC), 0, 1e-13},
		// A 1 MHz op-amp moves the 1.07 kHz Sallen-Key pair by well under 0.1%
		// (common practice: GBW ≫ 100·f0·Q is "ideal enough"); the far pole
		// near 1 MHz must not be chosen.
		{"sallen-key-lowpass/single-pole", sallenKeyLP(skR1, skR2, skC1, skC2), singlePole,
			skW0 / (2 * math.Pi), math.Sqrt(skR1*skR2*skC1*skC2) / (skC2 * (skR1 + skR2)), 1e-3},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r, err := tc.stage.TransferFunction(tc.model)
			require.NoError(t, err)
			f0, q, ok := r.DominantPair()
			require.True(t, ok)
			require.InEpsilon(t, tc.f0Hz, f0, tc.tol)
			if tc.q == 0 {
				require.Zero(t, q)
			} else {
				require.InEpsilon(t, tc.q, q, tc.tol)
			}
		})
	}
}

func TestPolesAndZeros(t *testing.T) {
	t.Parallel()
	a0 := math.Pow(10, singlePole.DCGainDB/20)
	wt := 2 * math.Pi * singlePole.GBWHz
	tests := []struct {
		name  string
		stage circuit.Stage
		model circuit.Model
		poles []complex128
		zeros []complex128
	}{
		// 1/(1+sRC) · A/(1+A): poles −1/RC and −ωt(1+A0)/A0 (closed form).
		{"rc-buffer/single-pole", rcBuffer(rcR, rcC), singlePole,
			[]complex128{complex(-1/(rcR*rcC), 0), complex(-wt*(1+a0)/a0, 0)}, nil},
		// Highpass: a double zero exactly at s = 0 (closed form), and the
		// poles of s²R1R2C1C2 + sR1(C1+C2) + 1.
		{"sallen-key-highpass/ideal", sallenKeyHP(hpC1, hpC2, hpR1, hpR2), ideal,
			quadratic(hpR1*hpR2*hpC1*hpC2, hpR1*(hpC1+hpC2), 1), []complex128{0, 0}},
		// Lowpass: no finite zeros, the poles of s²R1R2C1C2 + sC2(R1+R2) + 1.
		{"sallen-key-lowpass/ideal", sallenKeyLP(skR1, skR2, skC1, skC2), ideal,
			quadratic(skR1*skR2*skC1*skC2, skC2*(skR1+skR2), 1), nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r, err := tc.stage.TransferFunction(tc.model)
			require.NoError(t, err)
			poles := r.Poles()
			require.Len(t, poles, len(tc.poles))
			for i, p := range tc.poles {
				require.LessOrEqual(t, relErr(poles[i], p), 1e-12, "pole %d: %v, want %v", i, poles[i], p)
			}
			zeros := r.Zeros()
			require.Len(t, zeros, len(tc.zeros))
			for i, z := range tc.zeros {
				require.Equal(t, z, zeros[i], "zero %d", i) // exact: structural zeros are exactly 0
			}
		})
	}
}

// quadratic returns the roots of a·s² + b·s + c (complex pair upper first,
// or real roots by ascending magnitude), by the textbook formula.
func quadratic(a, b, c float64) []complex128 {
	d := complex(b*b-4*a*c, 0)
	r1 := (complex(-b, 0) + cmplx.Sqrt(d)) / complex(2*a, 0)
	r2 := (complex(-b, 0) - cmplx.Sqrt(d)) / complex(2*a, 0)
	if imag(r1) < imag(r2) || (imag(r1) == 0 && cmplx.Abs(r1) > cmplx.Abs(r2)) {
		r1, r2 = r2, r1
	}
	return []complex128{r1, r2}
}
