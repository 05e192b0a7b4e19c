package lu

import (
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestFactorSolve(t *testing.T) {
	t.Parallel()
	// A = [[0, 1], [2j, 3]]: det = 0·3 − 1·2j = −2j (by hand); the zero
	// pivot forces a row exchange. A·x = b with x = (1+j, 2) gives
	// b = (2, 2j(1+j) + 6) = (2, 4 + 2j).
	a := []complex128{0, 1, 2i, 3}
	piv := make([]int, 2)
	det := Factor(a, 2, piv)
	require.InDelta(t, 0, cmplx.Abs(det-(-2i)), 1e-15)
	b := []complex128{2, 4 + 2i}
	Solve(a, 2, piv, b)
	require.InDelta(t, 0, cmplx.Abs(b[0]-(1+1i)), 1e-15)
	require.InDelta(t, 0, cmplx.Abs(b[1]-2), 1e-15)
	// A singular matrix reports a zero determinant.
	require.Equal(t, complex128(0), Factor([]complex128{1, 2, 2, 4}, 2, piv))
}
