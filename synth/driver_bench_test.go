package synth_test

import (
	"context"
	"os"
	"testing"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// BenchmarkSynthesizeSARDriver times the example SAR design (no Monte
// Carlo) with its driver, and the same spec without the driver.
func BenchmarkSynthesizeSARDriver(b *testing.B) {
	data, err := os.ReadFile("../testdata/examples/sar-driver-antialias.json")
	if err != nil {
		b.Fatal(err)
	}
	s, err := synth.ParseSpecBytes(data)
	if err != nil {
		b.Fatal(err)
	}
	s.MonteCarlo.Trials = 0
	other := s
	conv := *s.Converter
	conv.Architecture = synth.ArchitectureOther
	other.Converter = &conv
	for _, tc := range []struct {
		name string
		spec synth.Spec
	}{{"sar", s}, {"other", other}} {
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				circuit.ResetRootCache() // each design finds its own roots
				if _, err := synth.Synthesize(context.Background(), tc.spec); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
