package explore_test

import (
	"context"
	"syscall"
	"testing"
	"time"

	"github.com/polewright/polewright/synth/circuit"
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
			start := cpuTime()
			for b.Loop() {
				circuit.ResetRootCache() // each exploration finds its own roots
				if _, err := explore.Explore(context.Background(), data); err != nil {
					b.Fatal(err)
				}
			}
			// The process's CPU time per exploration: what the run costs
			// whatever else shares the machine (ns/op is wall time).
			b.ReportMetric(float64((cpuTime()-start).Milliseconds())/float64(b.N), "cpu-ms/op")
		})
	}
}

// cpuTime is the process's user and system CPU time so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
