package verify

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestFused7MatchesAccumulate checks the one-pass responses of stages of
// degree ≤ 7 (fused7Response) and ≤ 3 (fusedResponse) against the stage-by-stage one it replaces
// for such chains (accumulate, with its decade exponents), on random
// chains of random stable-looking polynomials, with and without products
// that leave the range of the one-pass path (a long chain of steep
// stages, so that its stage-by-stage logarithms are exercised): the same
// dB to 1e-9 relative.
func TestFused7MatchesAccumulate(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name           string
		stages, degNum int
		degDen         int
		gain           float64 // scales every coefficient: pushes the products out of range
	}{
		{"notch-like", 6, 4, 6, 1},
		{"odd-degrees", 5, 3, 7, 1},
		{"long-steep", 20, 2, 7, 1e3},
		{"long-small", 20, 2, 7, 1e-3},
		// Degree ≤ 3: fusedResponse as well.
		{"cubic", 6, 2, 3, 1},
		{"long-small-cubic", 40, 1, 3, 1e-3},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rng := rand.New(rand.NewPCG(4, uint64(tc.stages)))
			const nf = 101
			x := make([]float64, nf)
			u := make([]float64, nf)
			for f := range x {
				x[f] = math.Pow(10, -3+6*float64(f)/(nf-1))
				u[f] = -x[f] * x[f]
			}
			coef := make([][16]float64, tc.stages)
			coef3 := make([][8]float64, tc.stages)
			mag2 := make([]float64, nf)
			lexp := make([]float64, nf)
			for f := range mag2 {
				mag2[f] = 1
			}
			for k := range coef {
				num := make([]float64, tc.degNum+1)
				den := make([]float64, tc.degDen+1)
				for j := range num {
					num[j] = tc.gain * (0.5 + rng.Float64())
				}
				for j := range den {
					den[j] = (0.5 + rng.Float64()) / tc.gain
				}
				for j := range den {
					at := j/2 + 4*(j%2)
					if j < len(num) {
						coef[k][at] = num[j]
					}
					coef[k][8+at] = den[j]
				}
				for j := range min(len(den), 4) {
					if j < len(num) {
						coef3[k][j] = num[j]
					}
					coef3[k][4+j] = den[j]
				}
				accumulate(mag2, lexp, x, u, num, den)
			}
			want := make([]float64, nf)
			copy(want, mag2)
			dbInPlace(want)
			for f, l := range lexp {
				want[f] += 10 * l
			}
			got := make([]float64, nf)
			fused7Response(got, x, u, coef)
			for f := range got {
				require.InDelta(t, want[f], got[f], 1e-9*math.Max(1, math.Abs(want[f])), "x = %g", x[f])
			}
			if tc.degDen <= 3 {
				fusedResponse(got, x, u, coef3)
				for f := range got {
					require.InDelta(t, want[f], got[f], 1e-9*math.Max(1, math.Abs(want[f])), "cubic path, x = %g", x[f])
				}
			}
		})
	}
}
