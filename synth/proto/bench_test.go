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
