package response

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestLogPos compares logPos with math.Log over numbers spread across the
// whole normal range and near 1, and with the closed form ln 2^k = k·ln 2:
// within 2 units in the last place of the larger of |ln x| and 1e−300
// (near x = 1 it must keep relative precision too).
func TestLogPos(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	check := func(x float64) {
		want := math.Log(x)
		ulp := math.Nextafter(math.Abs(want), math.Inf(1)) - math.Abs(want)
		require.InDeltaf(t, want, logPos(x), 2*ulp+1e-300, "ln %v", x)
	}
	for range 200000 {
		check(math.Ldexp(1+rng.Float64(), rng.IntN(2000)-1000))
		check(1 + (rng.Float64()-0.5)*1e-3) // in the first bucket and just below 1
	}
	for k := -1022; k <= 1023; k++ {
		want := float64(k) * math.Ln2 // itself rounded: half a unit in the last place
		ulp := math.Nextafter(math.Abs(want), math.Inf(1)) - math.Abs(want)
		require.InDelta(t, want, logPos(math.Ldexp(1, k)), 2*ulp)
	}
	require.Equal(t, 0.0, logPos(1))
	require.True(t, math.IsInf(logPos(0), -1))
	require.True(t, math.IsNaN(logPos(-1)))
	require.True(t, math.IsInf(logPos(math.Inf(1)), 1))
	require.Equal(t, math.Log(5e-324), logPos(5e-324))
}

func BenchmarkLogPos(b *testing.B) {
	xs := make([]float64, 1024)
	rng := rand.New(rand.NewPCG(1, 1))
	for i := range xs {
		xs[i] = math.Ldexp(1+rng.Float64(), rng.IntN(600)-300)
	}
	var s float64
	b.Run("logPos", func(b *testing.B) {
		for i := 0; b.Loop(); i++ {
			s += logPos(xs[i&1023])
		}
	})
	b.Run("math.Log", func(b *testing.B) {
		for i := 0; b.Loop(); i++ {
			s += math.Log(xs[i&1023])
		}
	})
	if s == 0 {
		b.Log(s)
	}
}
