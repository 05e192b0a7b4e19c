package verify

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestLnNormal checks the inlined logarithm against math.Log (within
// 2 ulp, both being within 1 ulp of the exact value) over the normal
// range, at random points, powers of two and the reduction boundary √½,
// and dbInPlace's special values.
func TestLnNormal(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	xs := []float64{minNormal, math.MaxFloat64, 1, 2, 0.5, math.Sqrt2 / 2, math.Nextafter(math.Sqrt2/2, 0), math.Nextafter(1, 0), math.Nextafter(1, 2), 1e-300, 1e300}
	for range 200000 {
		xs = append(xs, math.Exp(rng.Float64()*1400-700), 1+1e-6*(2*rng.Float64()-1))
	}
	for _, x := range xs {
		want := math.Log(x)
		got := lnNormal(x)
		ulp := math.Abs(math.Nextafter(want, math.Inf(1)) - want)
		require.LessOrEqual(t, math.Abs(got-want), 2*ulp+1e-300, "x = %v", x)
		db := []float64{x}
		dbInPlace(db)
		require.Equal(t, dbPerLn*got, db[0], "dbInPlace(%v)", x)
	}
	db := []float64{0, math.Inf(1), math.NaN(), 1, 100, 1e-320, -1}
	dbInPlace(db)
	require.Equal(t, -1.0, db[6], "markers are left alone")
	require.Equal(t, math.Inf(-1), db[0])
	require.Equal(t, math.Inf(1), db[1])
	require.Equal(t, math.Inf(-1), db[2])
	require.Equal(t, 0.0, db[3])
	require.InDelta(t, 20, db[4], 1e-13)
	require.InDelta(t, 10*math.Log10(1e-320), db[5], 1e-9)
}
