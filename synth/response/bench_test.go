package response_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/xform"
	"github.com/polewright/polewright/synth/zpk"
)

// ellipticLike returns an order-n (n even) lowpass shaped like an elliptic
// one for benchmarking: Chebyshev poles (0.5 dB) and n/2 pairs of jω-axis
// zeros at 1/cos θ, scaled to a 1 kHz edge. Only the structure (n poles,
// n axis zeros) matters for the timings.
func ellipticLike(n int) zpk.ZPK {
	eps := math.Sqrt(math.Pow(10, 0.05) - 1)
	a := math.Asinh(1/eps) / float64(n)
	h := zpk.ZPK{Gain: 1}
	for k := range n / 2 {
		th := float64(2*k+1) * math.Pi / float64(2*n)
		p := complex(-math.Sinh(a)*math.Sin(th), math.Cosh(a)*math.Cos(th))
		h.Poles = append(h.Poles, p, cmplx.Conj(p))
		z := complex(0, 1/math.Cos(th))
		h.Zeros = append(h.Zeros, z, cmplx.Conj(z))
	}
	return xform.LowpassToLowpass(h, response.RadPerSec(1000))
}

func BenchmarkResponse(b *testing.B) {
	freqs := response.LogSpaceHz(nil, 10, 1e5, 500)
	dst := make([]float64, len(freqs))
	funcs := []struct {
		name string
		f    func([]float64, zpk.ZPK, []float64) []float64
	}{
		{name: "MagnitudeDB", f: response.MagnitudeDB},
		{name: "PhaseDeg", f: response.PhaseDeg},
		{name: "GroupDelayS", f: response.GroupDelayS},
	}
	for _, fn := range funcs {
		for _, n := range []int{8, 20} {
			h := ellipticLike(n)
			b.Run(fmt.Sprintf("%s/order=%d/points=500", fn.name, n), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					fn.f(dst, h, freqs)
				}
			})
		}
	}
}

func BenchmarkGrid(b *testing.B) {
	for _, n := range []int{8, 20} {
		h := ellipticLike(n)
		b.Run(fmt.Sprintf("order=%d/base=500", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				response.Grid(h, 10, 1e5, 500, 1000, 1200)
			}
		})
	}
}

func BenchmarkPeakDB(b *testing.B) {
	for _, n := range []int{8, 20} {
		h := ellipticLike(n)
		b.Run(fmt.Sprintf("order=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				response.PeakDB(h, 10, 1e5)
			}
		})
	}
}

// BenchmarkPipeline times the part of the design pipeline in these two
// packages for an order-8 elliptic-like lowpass: scaling the prototype,
// building the grid and computing magnitude, phase and group delay on 500
// points.
func BenchmarkPipeline(b *testing.B) {
	proto := ellipticLike(8)
	proto = xform.LowpassToLowpass(proto, 1/response.RadPerSec(1000)) // back to 1 rad/s
	freqs := response.LogSpaceHz(nil, 10, 1e5, 500)
	mag := make([]float64, len(freqs))
	ph := make([]float64, len(freqs))
	tau := make([]float64, len(freqs))
	b.Run("order=8/points=500", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			h := xform.LowpassToLowpass(proto, response.RadPerSec(1000))
			response.MagnitudeDB(mag, h, freqs)
			response.PhaseDeg(ph, h, freqs)
			response.GroupDelayS(tau, h, freqs)
		}
	})
}

func BenchmarkMagnitudePhaseDelay(b *testing.B) {
	freqs := response.LogSpaceHz(nil, 10, 1e5, 500)
	mag, ph, tau := make([]float64, len(freqs)), make([]float64, len(freqs)), make([]float64, len(freqs))
	for _, n := range []int{8, 20} {
		h := ellipticLike(n)
		b.Run(fmt.Sprintf("together/order=%d/points=500", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				response.MagnitudePhaseDelay(mag, ph, tau, h, freqs)
			}
		})
		b.Run(fmt.Sprintf("apart/order=%d/points=500", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				response.MagnitudeDB(mag, h, freqs)
				response.PhaseDeg(ph, h, freqs)
				response.GroupDelayS(tau, h, freqs)
			}
		})
	}
}
