package noise_test

import (
	"testing"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
)

// BenchmarkOutput is the figure: the output noise of an order-8
// chain (four Sallen-Key stages at 1 kHz) on 200 points from 10 Hz to
// 100 kHz, integrated from 10 Hz to 24 kHz (fs/2 of 48 kHz); budget 5 ms.
// The sampled cases integrate from 0 Hz to 24 kHz and add the noise the
// words of a 48 kHz converter carry, and of one sampling at 3.072 MHz
// for 48 kHz words (OutputSampled).
func BenchmarkOutput(b *testing.B) {
	freq := logspace(10, 1e5, 200)
	for _, tc := range []struct {
		name string
		m    circuit.Model
	}{{"order-8/single-pole/200pt", singlePole}, {"order-8/ideal/200pt", ideal}} {
		ch := butterworth8(1000, tc.m)
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := noise.Output(ch, noise.DefaultOpAmpNoise(), 0, freq, [2]float64{10, 24e3}); err != nil {
					b.Fatal(err)
				}
			}
		})
		for _, s := range []struct {
			name string
			s    noise.Sampling
		}{{"sampled-48k", noise.Sampling{SampleRateHz: 48e3}}, {"sampled-3.072M-48k", noise.Sampling{SampleRateHz: 3.072e6, OutputRateHz: 48e3}}} {
			b.Run(tc.name+"/"+s.name, func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := noise.OutputSampled(ch, noise.DefaultOpAmpNoise(), 0, freq, [2]float64{0, 24e3}, s.s); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
