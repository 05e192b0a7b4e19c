package svgcanvas

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestAppendGAsStrconv compares appendG with strconv's %.5g (the
// reference) on random values of every size the short path takes and
// around it, on ties and near-ties of the fifth digit, and on powers of ten.
func TestAppendGAsStrconv(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	var vals []float64
	for range 500_000 {
		vals = append(vals, (rng.Float64()*2-1)*math.Pow(10, rng.Float64()*12-6))
	}
	for e := -6; e <= 6; e++ {
		for k := range 30_000 {
			// d.dddd5 × 10^e and its neighbours: the rounding ties.
			base := (float64(10000+k%90000) + 0.5) * math.Pow(10, float64(e-4))
			vals = append(vals, base, math.Nextafter(base, 0), math.Nextafter(base, math.Inf(1)), -base)
		}
		p := math.Pow(10, float64(e))
		vals = append(vals, p, math.Nextafter(p, 0), math.Nextafter(p, math.Inf(1)), p*0.999995, p*9.99995)
	}
	for _, v := range []float64{0, math.Copysign(0, -1), math.Inf(1), math.Inf(-1), math.NaN(), 1e-4, 99999.5, 99999.4999, 720, 460, 12.5, 0.1, 0.2, 0.3} {
		vals = append(vals, v)
	}
	var got []byte
	for _, v := range vals {
		got = appendG(got[:0], v)
		want := strconv.FormatFloat(v, 'g', pr, 64)
		if string(got) != want {
			require.Equal(t, want, string(got), "value %v (%b)", v, v)
		}
	}
}

func BenchmarkAppendG(b *testing.B) {
	rng := rand.New(rand.NewPCG(5, 6))
	vals := make([]float64, 1024)
	for i := range vals {
		vals[i] = rng.Float64() * 720
	}
	var buf []byte
	b.Run("appendG", func(b *testing.B) {
		for i := 0; b.Loop(); i++ {
			buf = appendG(buf[:0], vals[i&1023])
		}
	})
	b.Run("strconv", func(b *testing.B) {
		for i := 0; b.Loop(); i++ {
			buf = strconv.AppendFloat(buf[:0], vals[i&1023], 'g', pr, 64)
		}
	})
}
