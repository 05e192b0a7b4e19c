package xform_test

import (
	"fmt"
	"testing"

	"github.com/polewright/polewright/synth/xform"
)

func BenchmarkTransforms(b *testing.B) {
	for _, n := range []int{8, 20} {
		proto := inverseChebyshev(n, 0.01)
		b.Run(fmt.Sprintf("bandpass/order=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				_ = xform.LowpassToBandpass(proto, 6283, 1000)
			}
		})
		b.Run(fmt.Sprintf("highpass/order=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				_ = xform.LowpassToHighpass(proto, 6283)
			}
		})
	}
}
