package explore_test

import (
	"context"
	"testing"

	"github.com/polewright/polewright/synth/explore"
)

// BenchmarkExplore times the exploration of the lowpass anti-alias spec
// (antiAlias: 72 combinations, of which 48 are built) with 1,000 Monte
// Carlo trials per candidate and without trials. Targets (issue 14): at
// most 2 s and 100 ms on 2 cores.
func BenchmarkExplore(b *testing.B) {
	for _, bc := range []struct {
		name, mc string
	}{
		{"trials-0", ``},
		{"trials-1000", `, "montecarlo": {"trials": 1000, "seed": 1}`},
	} {
		b.Run(bc.name, func(b *testing.B) {
			b.ReportAllocs()
			data := []byte(antiAlias + bc.mc + `}`)
			for b.Loop() {
				if _, err := explore.Explore(context.Background(), data); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
