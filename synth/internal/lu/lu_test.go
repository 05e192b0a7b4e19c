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

func TestFactorGuardedSolveTransposed(t *testing.T) {
	t.Parallel()
	// Aᵀ·x = b for A = [[0, 1], [2j, 3]] (by hand): Aᵀ = [[0, 2j], [1, 3]];
	// x = (1, 1j) gives b = (2j·1j, 1 + 3j) = (−2, 1 + 3j).
	a := []complex128{0, 1, 2i, 3}
	piv := make([]int, 2)
	require.InDelta(t, 1, FactorGuarded(a, 2, piv, 3), 1e-15) // pivots 2 (|2j|) and 1: the smallest is 1
	b := []complex128{-2, 1 + 3i}
	SolveTransposed(a, 2, piv, b)
	require.InDelta(t, 0, cmplx.Abs(b[0]-1), 1e-15)
	require.InDelta(t, 0, cmplx.Abs(b[1]-1i), 1e-15)
	// A singular matrix: the zero pivot is reported and replaced, so the
	// factors still solve (to a huge, finite answer).
	s := []complex128{1, 2, 2, 4}
	require.Zero(t, FactorGuarded(s, 2, piv, 4))
	x := []complex128{1, 1}
	Solve(s, 2, piv, x)
	require.False(t, cmplx.IsNaN(x[0]) || cmplx.IsInf(x[0]))
}

// TestSolveUnit: SolveUnit agrees with Solve on every unit vector of a
// 4×4 matrix that needs row exchanges (reference: Solve, checked above).
func TestSolveUnit(t *testing.T) {
	t.Parallel()
	const n = 4
	a := []complex128{
		0, 1, 2i, 3,
		4, 0, 1, 1 - 1i,
		1i, 2, 0, 5,
		3, 1, 1, 0,
	}
	piv := make([]int, n)
	require.NotZero(t, Factor(a, n, piv))
	inv := make([]complex128, n)
	for i := range inv {
		inv[i] = 1 / a[i*n+i]
	}
	for k := range n {
		want := make([]complex128, n)
		want[k] = 1
		Solve(a, n, piv, want)
		got := make([]complex128, n)
		SolveUnit(a, n, piv, inv, k, got)
		for i := range got {
			require.InDelta(t, 0, cmplx.Abs(got[i]-want[i]), 1e-14, "column %d row %d", k, i)
		}
	}
}
