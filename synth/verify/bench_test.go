package verify_test

import (
	"context"
	"fmt"
	"testing"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/verify"
	"github.com/polewright/polewright/synth/verify/internal/mcbench"
)

// BenchmarkMonteCarlo times the issue-5 target: the 8th-order reference
// chain (package mcbench: four unity-gain Sallen-Key stages), 10,000
// trials on the 200-point grid, all cores; and the same with ideal
// op-amps (the chain of the numpy comparison) and on one worker.
// testdata/bench/montecarlo.sh runs it beside numpy and ngspice.
func BenchmarkMonteCarlo(b *testing.B) {
	freq := mcbench.FreqHz()
	meets := mcbench.Meets(freq)
	for _, tc := range []struct {
		name    string
		m       circuit.Model
		workers int
		trials  int
	}{
		{"sallen-key-8th/single-pole", mcbench.SinglePole, 0, 10000},
		{"sallen-key-8th/ideal", mcbench.Ideal, 0, 10000},
		{"sallen-key-8th/single-pole/1-worker", mcbench.SinglePole, 1, 10000},
		{"sallen-key-8th/single-pole/1000-trials", mcbench.SinglePole, 0, 1000},
	} {
		ch := mcbench.Chain(tc.m)
		opt := verify.MonteCarloOptions{
			Trials: tc.trials, Seed: 1, FreqHz: freq, Workers: tc.workers,
			Edges: []verify.Edge{{Name: "passband_edge", FreqHz: mcbench.PassEdgeHz}, {Name: "stopband_edge", FreqHz: mcbench.StopEdgeHz}},
		}
		b.Run(fmt.Sprintf("%s/%dx%d", tc.name, tc.trials, len(freq)), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := verify.MonteCarlo(context.Background(), ch, verify.Tolerance{}, opt, verify.GridOnly(meets)); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkSensitivities times the sensitivities of one Sallen-Key stage
// of the reference chain (8 transfer functions).
func BenchmarkSensitivities(b *testing.B) {
	st := mcbench.Chain(mcbench.SinglePole).Stages[3]
	b.ReportAllocs()
	for b.Loop() {
		if _, err := verify.Sensitivities(st, mcbench.SinglePole); err != nil {
			b.Fatal(err)
		}
	}
}
