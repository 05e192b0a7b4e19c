package section_test

import (
	"context"
	"fmt"
	"testing"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/zpk"
)

// BenchmarkOrder times the headroom programme on Butterworth lowpass
// sections (closed-form poles) over a 200-point grid: 2ⁿ subsets.
func BenchmarkOrder(b *testing.B) {
	for _, n := range []int{8, 20} {
		secs, err := section.Factor(zpk.ZPK{Poles: butterworthPoles(n, 1), Gain: 1})
		if err != nil {
			b.Fatal(err)
		}
		grid := logGrid(1e-2, 1e2, 200)
		b.Run(fmt.Sprintf("order=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, _, err := section.Order(context.Background(), secs, grid); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
