package synth_test

import (
	"math"
	"math/cmplx"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// TestFailAtSlopesEveryStageKind: for the first stage of every kind the
// tool builds (the state-variable notch forms with and without the
// T-network, the stages with the polarity inverter, …), the affine form
// of circuit.Stage.Slopes in each part reproduces the stage with that
// part changed, analysed afresh (Stage.TransferFunctionScaled), to 1e-9
// relative, for factors from 0.2 to 5, with the designs' single-pole
// op-amp and with ideal ones, from 0.05 to 100 times the stage's scale;
// and the fresh analysis agrees with the direct solution
// (Stage.SolveAt) to 1e-9 there too. Reference: the nodal analysis of the
// changed stage; the matrix determinant lemma (a determinant is affine in
// a rank-one stamp) is what makes the form exact. verify.FailAt's figures
// rest on this form. (Below the range, the op-amps' finite gain leaves
// a highpass numerator a constant term some 1e-10 of the others, which
// both forms resolve only to about 1e-7 relative.)
func TestFailAtSlopesEveryStageKind(t *testing.T) {
	t.Parallel()
	for _, ks := range firstOfEachKind(stageKindStages(t, nil)) {
		st := ks.ch.Stages[ks.index]
		for _, m := range []circuit.Model{ks.ch.Model, {Ideal: true}} {
			t.Run(ks.kind, func(t *testing.T) {
				t.Parallel()
				ps, err := st.Slopes(m, 0)
				require.NoError(t, err)
				require.Len(t, ps.DNum, len(st.Parts))
				require.Len(t, ps.DDen, len(st.Parts))
				f0 := ps.ScaleRadPerSec / (2 * math.Pi)
				for j, p := range st.Parts {
					for _, f := range []float64{0.2, 0.9, 1.37, 5} {
						changed := st
						changed.Parts = slices.Clone(st.Parts)
						changed.Parts[j].Value *= f
						ref, err := changed.TransferFunctionScaled(m, ps.ScaleRadPerSec)
						require.NoError(t, err)
						a := f
						if p.Kind == circuit.Resistor {
							a = 1 / f
						}
						num, den := ps.At(j, a, nil, nil)
						got := circuit.Rational{Num: num, Den: den, ScaleRadPerSec: ps.ScaleRadPerSec}
						for _, x := range []float64{0.05, 0.1, 0.5, 0.83, 1, 1.21, 2, 10, 100} {
							hz := x * f0
							want := ref.AtHz(hz)
							exact, err := changed.SolveAt(m, complex(0, 2*math.Pi*hz))
							require.NoError(t, err)
							require.InDelta(t, 0, cmplx.Abs(want-exact)/math.Max(cmplx.Abs(exact), 1e-12), 1e-9,
								"fresh analysis: %s stage %d (%s), part %s ×%g at %g Hz", ks.design, ks.index+1, ks.kind, p.Ref, f, hz)
							require.InDelta(t, 0, cmplx.Abs(got.AtHz(hz)-want)/math.Max(cmplx.Abs(want), 1e-12), 1e-9,
								"%s stage %d (%s), part %s ×%g at %g Hz", ks.design, ks.index+1, ks.kind, p.Ref, f, hz)
						}
					}
				}
			})
		}
	}
}
