package verify_test

import (
	"context"
	"fmt"
	"testing"

	"github.com/polewright/polewright/synth"
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

// BenchmarkMonteCarloNotch20 times the costliest chain the server admits
// (the serving issue's worst case): an order-20 Butterworth bandstop of
// state-variable notch stages (twenty stages of twelve parts and four
// single-pole op-amps, each expanded at 2^16 vertices), Gaussian parts, on
// one worker and the 200-point grid. The 200-trial run is mostly the
// expansion; the difference of the two over 1,800 is the cost of a trial.
func BenchmarkMonteCarloNotch20(b *testing.B) {
	spec, err := synth.ParseSpecBytes([]byte(`{"response": "bandstop", "approximation": "butterworth", "order": 20,
		"passband_hz": [900, 1100], "topology": "state-variable", "tolerance": {"distribution": "gaussian"}}`))
	if err != nil {
		b.Fatal(err)
	}
	d, err := synth.SynthesizeTo(context.Background(), spec, synth.Circuits)
	if err != nil {
		b.Fatal(err)
	}
	ch, err := d.Chain()
	if err != nil {
		b.Fatal(err)
	}
	freq := mcbench.FreqHz()
	for _, trials := range []int{200, 2000} {
		opt := verify.MonteCarloOptions{Trials: trials, Seed: 1, FreqHz: freq, Workers: 1}
		tol := verify.Tolerance{Distribution: verify.Gaussian}
		b.Run(fmt.Sprintf("%dx%d/1-worker", trials, len(freq)), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := verify.MonteCarlo(context.Background(), ch, tol, opt, verify.GridOnly(func([]float64) bool { return true })); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
