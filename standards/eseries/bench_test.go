package eseries_test

import (
	"math"
	"math/rand/v2"
	"testing"
)

// benchInputs returns n numbers spread log-uniformly over 1 Ω to 1 MΩ,
// from a fixed seed so runs are comparable.
func benchInputs(n int) []float64 {
	r := rand.New(rand.NewPCG(1, 2))
	xs := make([]float64, n)
	for i := range xs {
		xs[i] = math.Pow(10, 6*r.Float64())
	}
	return xs
}

func BenchmarkNearest(b *testing.B) {
	xs := benchInputs(1024)
	for _, name := range []string{"E96", "E192"} {
		b.Run(name, func(b *testing.B) {
			s := mustLookup(b, name)
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				s.Nearest(xs[i%len(xs)])
				i++
			}
		})
	}
}

func BenchmarkInRange(b *testing.B) {
	for _, name := range []string{"E24", "E96", "E192"} {
		b.Run(name, func(b *testing.B) {
			s := mustLookup(b, name)
			b.ReportAllocs()
			for b.Loop() {
				s.InRange(1e3, 220e3) // 1 kΩ to 220 kΩ
			}
		})
	}
}

func BenchmarkDecades(b *testing.B) {
	s := mustLookup(b, "E96")
	b.ReportAllocs()
	for b.Loop() {
		for v := range s.Decades(1e3, 220e3) {
			_ = v
		}
	}
}
