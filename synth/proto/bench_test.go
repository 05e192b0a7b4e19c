package proto_test

import (
	"fmt"
	"testing"

	"github.com/polewright/polewright/synth/proto"
)

// BenchmarkLowpass times each prototype at orders 4, 8 and 20 (rippleDB 0.5,
// attenDB 60 where used). Targets: order-8 elliptic and order-20 Bessel well
// under the whole-pipeline budgets of 100 µs and 500 µs.
func BenchmarkLowpass(b *testing.B) {
	for _, a := range proto.Approximations() {
		for _, n := range []int{4, 8, 20} {
			b.Run(fmt.Sprintf("%s/n=%d", a, n), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := proto.Lowpass(a, n, 0.5, 60); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// BenchmarkMinOrder times the order search: rippleDB 0.5, attenDB 50,
// ratio 2.5 (orders 4–9) for the closed forms; for Bessel a mask met at
// order 4 (3 dB, 30 dB, ratio 4), one needing order 26 (3 dB, 250 dB,
// ratio 10) and one that no order meets (1 dB, 30 dB, ratio 2: the loss
// peaks at 4.4 dB).
func BenchmarkMinOrder(b *testing.B) {
	type tc struct {
		name               string
		a                  proto.Approximation
		ripple, att, ratio float64
	}
	var cases []tc
	for _, a := range proto.Approximations() {
		if a != proto.Bessel {
			cases = append(cases, tc{string(a), a, 0.5, 50, 2.5})
		}
	}
	cases = append(cases,
		tc{"bessel", proto.Bessel, 3, 30, 4},
		tc{"bessel/beyond-max", proto.Bessel, 3, 250, 10},
		tc{"bessel/unreachable", proto.Bessel, 1, 30, 2})
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				_, _ = proto.MinOrder(c.a, c.ripple, c.att, c.ratio)
			}
		})
	}
}

// BenchmarkNewApproximations times the optimum-L, Gaussian and
// linear-phase prototypes beside Chebyshev I at the same orders (rippleDB
// 3.0103 for all). The linear-phase family is cached per phase ripple, so
// "linear-phase" is a cached design; "linear-phase-cold" cycles through
// more phase ripples than the cache holds, so that every call computes
// the family up to the order (its worst case, a first request for a new
// ripple).
func BenchmarkNewApproximations(b *testing.B) {
	const ripple = 3.0102999566398121
	cold := make([]proto.Option, 12)
	for i := range cold {
		cold[i] = proto.PhaseErrorDeg(0.04 + 0.001*float64(i))
	}
	for _, n := range []int{4, 8, 20} {
		for _, a := range []proto.Approximation{proto.Chebyshev1, proto.Legendre, proto.Gaussian, proto.LinearPhase} {
			b.Run(fmt.Sprintf("n=%d/%s", n, a), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := proto.Lowpass(a, n, ripple, 60); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
		b.Run(fmt.Sprintf("n=%d/linear-phase-cold", n), func(b *testing.B) {
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				if _, err := proto.Lowpass(proto.LinearPhase, n, ripple, 60, cold[i%len(cold)]); err != nil {
					b.Fatal(err)
				}
				i++
			}
		})
	}
}
