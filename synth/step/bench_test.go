package step_test

import (
	"fmt"
	"math"
	"testing"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/step"
)

// butterworthSections returns the sections of an order-n Butterworth
// lowpass at w rad/s (n even).
func butterworthSections(n int, w float64) []section.Section {
	var secs []section.Section
	for k := range n / 2 {
		theta := math.Pi * float64(2*k+n+1) / float64(2*n)
		p := complex(w*math.Cos(theta), w*math.Sin(theta))
		secs = append(secs, section.Section{Poles: []complex128{p, complex(real(p), -imag(p))}, Gain: w * w})
	}
	return secs
}

// withOpAmpPoles returns the stages of secs with a pole at wa added to each,
// as a single-pole op-amp in a unity-gain stage does.
func withOpAmpPoles(secs []section.Section, wa float64) []step.Stage {
	out := make([]step.Stage, len(secs))
	for i, s := range secs {
		st := step.FromSection(s)
		k := st.ScaleRadPerSec / wa // Den·(1 + x·k)
		den := make([]float64, len(st.Den)+1)
		for j, c := range st.Den {
			den[j] += c
			den[j+1] += c * k
		}
		st.Den = den
		out[i] = st
	}
	return out
}

func BenchmarkResponse(b *testing.B) {
	w := 2 * math.Pi * 1000
	for _, order := range []int{2, 4, 8, 16} {
		secs := butterworthSections(order, w)
		ideal := make([]step.Stage, len(secs))
		for i, s := range secs {
			ideal[i] = step.FromSection(s)
		}
		built := withOpAmpPoles(secs, 2*math.Pi*1e6)
		for _, tc := range []struct {
			name   string
			stages []step.Stage
		}{{"ideal", ideal}, {"opamp", built}} {
			for _, n := range []int{500, 5000} {
				b.Run(fmt.Sprintf("order=%d/%s/n=%d", order, tc.name, n), func(b *testing.B) {
					b.ReportAllocs()
					for b.Loop() {
						ts := step.TimeGrid(tc.stages, n)
						if _, err := step.Response(tc.stages, ts); err != nil {
							b.Fatal(err)
						}
					}
				})
			}
		}
	}
}
