package topology

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// TestTwoIntegratorNotchNodal: the transfer function derived in
// twoIntegratorNotch, −(C3·C2·s² + a·G2·G4)/(C1·C2·s² + C2·G1·s +
// a·G2·G3), against the stage's full nodal analysis
// (circuit.Stage.SolveAt, ideal op-amps, which knows nothing of it) to
// 1e-9, for part values that follow no design rule (a = 1: R5 = R6).
func TestTwoIntegratorNotchNodal(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		v    tinParts
	}{
		{"round values", tinParts{r1: 10e3, r2: 22e3, r3: 4.7e3, r4: 68e3, c1: 10e-9, c2: 3.3e-9, c3: 1e-9}},
		{"spread", tinParts{r1: 150e3, r2: 1.2e3, r3: 33e3, r4: 2.7e3, c1: 100e-12, c2: 1e-6, c3: 470e-9}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			tc.v.x1, tc.v.x2, tc.v.x3, tc.v.x4 = tc.v.r1, tc.v.r2, tc.v.r3, tc.v.r4
			o := &options{rbase: 15e3, rtol: 1, ctol: 5}
			d := tc.v.build(target{kind: section.Notch, g: 1}, o, [4]float64{1, 1, 1, 1})
			require.NoError(t, d.stage.Validate())
			require.True(t, d.inverting)
			n2, n0, d2, d1, d0 := tinCoef(tc.v, 1)
			w0 := math.Sqrt(d0 / d2)
			for _, f := range []float64{0.01, 0.3, 0.9, 1, 1.1, 3, 70} {
				s := complex(0, f*w0)
				got, err := d.stage.SolveAt(circuit.Model{Ideal: true}, s)
				require.NoError(t, err)
				want := -(complex(n2, 0)*s*s + complex(n0, 0)) / (complex(d2, 0)*s*s + complex(d1, 0)*s + complex(d0, 0))
				require.Less(t, cmplx.Abs(got-want), 1e-9*cmplx.Abs(want)+1e-12, "at %g·ω0", f)
			}
		})
	}
}

// TestWorkedTwoIntegratorNotch: the Fleischer-Tow design equations
// (Fleischer and Tow, Proc. IEEE 61(5), 1973, citation typed from memory;
// as rederived in twoIntegratorNotch) worked by hand for a lowpass-notch
// of f0 = 1 kHz, Q = 2, zeros at 3 kHz and DC gain 0.9, with capacitors
// held to 1 nF .. 10 nF: the high-frequency gain is k = 0.9·(1/3)² = 0.1,
// which C3/C1 = 1 nF / 10 nF gives exactly, so C1 = 10 nF; then
// R1 = Q/(ω0·C1) = 2/(2π·1000·10 nF) = 31.8 kΩ, R2 = λ·R1, R3 =
// 1/(λ·ω0·Q·C2) and R4 = R3/0.9 for whichever C2 the search centres and
// λ = R2/R1 its level rule; the stage is −0.1·(s² + ωz²)/(s² + s·ω0/2 +
// ω0²) with ωz = 3·ω0, checked by the nodal analysis. The level rule is
// checked on the nodal analysis too: the inner nodes lp and inv (their
// own transfer functions) peak at the output's peak within the rule's
// grid resolution (1 %).
func TestWorkedTwoIntegratorNotch(t *testing.T) {
	t.Parallel()
	opt := DefaultOptions()
	opt.Exact, opt.MinFarad, opt.MaxFarad = true, 1e-9, 10e-9
	o, err := newOptions(opt)
	require.NoError(t, err)
	w0 := 2 * math.Pi * 1000
	d, e := twoIntegratorNotch(target{order: 2, kind: section.LowpassNotch, w0: w0, q: 2, wz: 3 * w0, g: 0.9}, o)
	require.Nil(t, e)
	require.InDelta(t, 10e-9, capValue(t, d, "i1", "out"), 1e-21, "C1")
	require.InDelta(t, 1e-9, capValue(t, d, "in", "i1"), 1e-21, "C3")
	r1 := resValue(t, d, "out", "i1")
	digits3(t, 31.8e3, r1, "R1")
	lam := partValue(t, d, "inv", "i1") / r1
	require.Greater(t, lam, 0.0)
	require.LessOrEqual(t, lam, 1.0)
	c2 := partValue(t, d, "i2", "lp")
	r3 := partValue(t, d, "out", "i2")
	require.InEpsilon(t, 1/(lam*w0*2*c2), r3, 1e-12, "R3 = 1/(λ·ω0·Q·C2)")
	require.InEpsilon(t, r3/0.9, partValue(t, d, "in", "i2"), 1e-12, "R4 = R3/0.9")
	require.Equal(t, partValue(t, d, "lp", "i3"), partValue(t, d, "i3", "inv"), "a = 1")
	require.InDelta(t, 0.9, d.g, 1e-12)
	for _, f := range []float64{0.1, 0.5, 1, 2, 2.9, 10} {
		s := complex(0, f*w0)
		got, err := d.stage.SolveAt(circuit.Model{Ideal: true}, s)
		require.NoError(t, err)
		want := -0.1 * (s*s + complex(9*w0*w0, 0)) / (s*s + s*complex(w0/2, 0) + complex(w0*w0, 0))
		require.Less(t, cmplx.Abs(got-want), 1e-9*cmplx.Abs(want)+1e-12, "at %g kHz", f)
	}
	tfs, err := d.stage.NodeTransferFunctions(circuit.Model{Ideal: true}, []string{"out", "lp", "inv"})
	require.NoError(t, err)
	var peak [3]float64
	for i := range 2001 {
		f := 1000 * math.Pow(10, -2+4*float64(i)/2000)
		for n, tf := range tfs {
			peak[n] = max(peak[n], cmplx.Abs(tf.AtHz(f)))
		}
	}
	require.InEpsilon(t, peak[0], peak[1], 0.01, "lp peaks at the output's peak")
	require.InEpsilon(t, peak[0], peak[2], 0.01, "inv peaks at the output's peak")
}

// capValue and resValue return the value of the capacitor or resistor
// between nodes a and b.
func capValue(t *testing.T, d design, a, b string) float64 {
	return kindValue(t, d, circuit.Capacitor, a, b)
}

func resValue(t *testing.T, d design, a, b string) float64 {
	return kindValue(t, d, circuit.Resistor, a, b)
}

func kindValue(t *testing.T, d design, k circuit.PartKind, a, b string) float64 {
	t.Helper()
	for _, p := range d.stage.Parts {
		if p.Kind == k && ((p.A == a && p.B == b) || (p.A == b && p.B == a)) {
			return p.Value
		}
	}
	t.Fatalf("no %s between %s and %s in %+v", k, a, b, d.stage.Parts)
	return 0
}
