package verify

import (
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
)

// TestRootDerivativesNeedARoot: the adjoint path differentiates only a
// root of the nodal determinant. At the Sallen-Key stage's pole (from the
// circuit package) it applies; 1 % beside it the smallest pivot of A(λ)
// is far above adjointSingularTol and it declines, so that a nodal system
// that is not the circuit package's would fall back to central
// differences rather than give wrong figures.
func TestRootDerivativesNeedARoot(t *testing.T) {
	t.Parallel()
	st := circuittest.SallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9)
	for _, tc := range []struct {
		name  string
		model circuit.Model
	}{{"ideal", circuittest.Ideal}, {"single-pole", circuittest.SinglePole}} {
		model := tc.model
		r, err := st.TransferFunction(model)
		require.NoError(t, err)
		sel, ok := dominantRoots(r.Poles(), r.SectionOrder)
		require.True(t, ok)
		require.Equal(t, pairComplex, sel.kind)
		_, rn := stageScale(st, model)
		ns := newNodal(st, model, r.ScaleRadPerSec, rn)
		lam := sel.roots[0] / complex(r.ScaleRadPerSec, 0)
		d := make([]complex128, len(st.Parts))
		require.True(t, ns.rootDerivatives(lam, d), tc.name)
		require.False(t, ns.rootDerivatives(lam*1.01, d), tc.name)
	}
}
