package circuit

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestRootCacheSameAsComputed requires cachedCompanionRoots to return what
// companionRoots computes, bit for bit, on a miss and on a hit, for random
// polynomials of degree 3 to 12 (many sharing slots), and a copy that the
// caller may change.
func TestRootCacheSameAsComputed(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	var polys [][]float64
	for range 600 {
		c := make([]float64, 4+rng.IntN(10))
		for i := range c {
			c[i] = rng.NormFloat64() * float64(1+i)
		}
		polys = append(polys, c)
	}
	for round := range 2 {
		for i, c := range polys {
			want := companionRoots(c)
			got := cachedCompanionRoots(c)
			require.Equal(t, want, got, "round %d polynomial %d", round, i)
			if len(got) > 0 {
				got[0] = 42
				require.Equal(t, want, cachedCompanionRoots(c), "round %d polynomial %d: the caller's copy", round, i)
			}
		}
	}
}
