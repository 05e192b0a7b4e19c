package synth

import (
	"context"
	"testing"
)

// BenchmarkStepResponse times (*Design).stepResponse alone, the step
// report of BenchmarkSynthesize's order-8 specs (the ideal and as-built
// figures by step.Measure and both responses on the report's grid).
func BenchmarkStepResponse(b *testing.B) {
	for _, approx := range []string{"butterworth", "elliptic"} {
		b.Run(approx+"-8", func(b *testing.B) {
			spec := Spec{
				Response: Lowpass, Approximation: approx, Order: 8, PassbandHz: []float64{1000},
				PassbandRippleDB: 1, StopbandAttenDB: 60,
				Topology: "auto", ResistorSeries: "E96", CapacitorSeries: "E12",
				OpAmp:  OpAmp{GBWHz: 10e6, DCGainDB: 100, NoiseVPerRtHz: 10e-9, NoiseAPerRtHz: 1e-12, SlewVPerS: 10e6},
				Values: "series", Tolerance: Tolerance{Distribution: "uniform"}, MonteCarlo: MonteCarlo{Seed: 1},
				ResistorRangeOhm: [2]float64{1e3, 220e3}, CapacitorRangeFarad: [2]float64{100e-12, 1e-6},
			}
			d, err := Synthesize(context.Background(), spec)
			if err != nil {
				b.Fatal(err)
			}
			ch, err := d.Chain()
			if err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			for b.Loop() {
				// As verifyDesign does: the chain's transfer functions, then
				// the report.
				tfs, err := ch.TransferFunctions()
				if err != nil {
					b.Fatal(err)
				}
				d.stepResponse(tfs)
			}
		})
	}
}
