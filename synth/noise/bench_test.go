package noise_test

import (
	"testing"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
)

// BenchmarkOutput is the figure: the output noise of an order-8
// chain (four Sallen-Key stages at 1 kHz) on 200 points from 10 Hz to
// 100 kHz, integrated from 10 Hz to 24 kHz (fs/2 of 48 kHz); budget 5 ms.
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
	}
}
