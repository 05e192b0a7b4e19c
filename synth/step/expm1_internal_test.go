package step

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// expm1 agrees with mat.Dense.Exp, less I, on block lower-triangular
// matrices over every branch of the Padé table (1-norms from 0.005 to 1e4).
func TestExpm1(t *testing.T) {
	t.Parallel()
	sizes := []int{1, 2, 1, 2, 2, 1}
	r := 0
	for _, k := range sizes {
		r += k
	}
	for _, norm := range []float64{0.005, 0.1, 0.5, 1.5, 4, 40, 1e4} {
		t.Run(fmt.Sprint(norm), func(t *testing.T) {
			t.Parallel()
			rng := rand.New(rand.NewPCG(1, uint64(norm*1000)))
			a := mat.NewDense(r, r, nil)
			o := 0
			for _, k := range sizes {
				for i := o; i < o+k; i++ {
					for j := 0; j < o+k; j++ {
						a.Set(i, j, rng.NormFloat64())
					}
					a.Set(i, i, a.At(i, i)-3) // keep the modes decaying
				}
				o += k
			}
			a.Scale(norm/mat.Norm(a, 1), a)
			var want, got mat.Dense
			want.Exp(a)
			expm1(&got, a, sizes)
			for i := range r {
				got.Set(i, i, got.At(i, i)+1)
			}
			for i := range r {
				for j := range r {
					require.InDelta(t, want.At(i, j), got.At(i, j), 1e-13*mat.Norm(&want, 1), "(%d, %d)", i, j)
				}
			}
		})
	}
}

// The 2×2 diagonal blocks are solved with pivoting inside the block.
func TestSolveLower(t *testing.T) {
	t.Parallel()
	q := mat.NewDense(3, 3, []float64{
		2, 0, 0,
		1, 1e-17, 3, // the diagonal block [[1e-17, 3], [4, 5]] needs the pivot
		-1, 4, 5,
	})
	want := mat.NewDense(3, 2, []float64{1, -2, 0.5, 3, -1.5, 0.25})
	var x mat.Dense
	x.Mul(q, want)
	solveLower(q, &x, []int{1, 2})
	require.True(t, mat.EqualApprox(want, &x, 1e-15), "%v", mat.Formatted(&x))
}
