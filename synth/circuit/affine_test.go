package circuit_test

import (
	"math"
	"math/cmplx"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
)

// TestSlopes: the affine form in each part reproduces the stage with that
// part changed, analysed afresh (Stage.TransferFunctionScaled), for
// factors from 0.2 to 5. Reference: the nodal analysis of the changed
// stage; the affinity of determinants in a rank-one stamp (matrix
// determinant lemma) is what makes the form exact.
func TestSlopes(t *testing.T) {
	t.Parallel()
	stages := []struct {
		name string
		st   circuit.Stage
	}{
		{"rc-buffer", circuittest.RCBuffer(10e3, 10e-9)},
		{"sallen-key-lp", circuittest.SallenKeyLP(10e3, 12e3, 22e-9, 4.7e-9)},
		{"sallen-key-hp", circuittest.SallenKeyHP(10e-9, 10e-9, 5.6e3, 22e3)},
		{"mfb-lp", circuittest.MFBLP(10e3, 15e3, 8.2e3, 47e-9, 2.2e-9)},
		{"inverting", circuittest.Inverting(10e3, 33e3)},
	}
	models := []circuit.Model{{Ideal: true}, {GBWHz: 1e6, DCGainDB: 100}}
	for _, tc := range stages {
		for _, m := range models {
			t.Run(tc.name, func(t *testing.T) {
				t.Parallel()
				ps, err := tc.st.Slopes(m, 0)
				require.NoError(t, err)
				require.Len(t, ps.DNum, len(tc.st.Parts))
				for j, p := range tc.st.Parts {
					for _, f := range []float64{0.2, 0.9, 1, 1.37, 5} {
						changed := tc.st
						changed.Parts = slices.Clone(tc.st.Parts)
						changed.Parts[j].Value *= f
						ref, err := changed.TransferFunctionScaled(m, ps.ScaleRadPerSec)
						require.NoError(t, err)
						a := f
						if p.Kind == circuit.Resistor {
							a = 1 / f
						}
						num, den := ps.At(j, a, nil, nil)
						got := circuit.Rational{Num: num, Den: den, ScaleRadPerSec: ps.ScaleRadPerSec}
						for _, hz := range []float64{10, 300, 1591.5, 5000, 1e5} {
							want := ref.AtHz(hz)
							require.InDelta(t, 0, cmplx.Abs(got.AtHz(hz)-want)/math.Max(cmplx.Abs(want), 1e-12), 1e-9,
								"part %s ×%g at %g Hz", p.Ref, f, hz)
						}
					}
				}
			})
		}
	}
}
