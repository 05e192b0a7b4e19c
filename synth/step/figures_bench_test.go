package step_test

import (
	"math"
	"testing"

	"github.com/polewright/polewright/synth/step"
)

// BenchmarkFigures is the figure: the step response of an
// order-8 Butterworth lowpass (with and without single-pole op-amps at
// 1 MHz) on 500 points, then its figures; budget 5 ms. Analyze works on
// the samples; Measure samples the response on its own grid and refines
// on the exact response.
func BenchmarkFigures(b *testing.B) {
	w := 2 * math.Pi * 1000
	secs := butterworthSections(8, w)
	ideal := make([]step.Stage, len(secs))
	for i, s := range secs {
		ideal[i] = step.FromSection(s)
	}
	built := withOpAmpPoles(secs, 2*math.Pi*1e6)
	tol := step.HalfLSBFrac(16)
	band := step.Band{Frac: tol, FullScale: 1}
	for _, tc := range []struct {
		name   string
		stages []step.Stage
	}{{"order=8/ideal", ideal}, {"order=8/opamp", built}} {
		b.Run(tc.name+"/response+analyze/n=500", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				ts := step.SettlingGrid(tc.stages, 500, tol)
				y, err := step.Response(tc.stages, ts)
				if err != nil {
					b.Fatal(err)
				}
				step.Analyze(ts, y, band)
			}
		})
		b.Run(tc.name+"/measure", func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := step.Measure(tc.stages, band); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
