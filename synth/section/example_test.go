package section_test

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/zpk"
)

// ExampleOrderPeaks orders the sections of a 6th-order Butterworth
// lowpass (−3 dB at 1 rad/s) for headroom: ascending Q, each node
// peaking at no more than the output's 1.
func ExampleOrderPeaks() {
	var poles []complex128
	for k := range 6 {
		poles = append(poles, cmplx.Exp(complex(0, math.Pi*float64(2*k+7)/12)))
	}
	secs, err := section.Factor(zpk.ZPK{Poles: poles, Gain: 1})
	if err != nil {
		panic(err)
	}
	grid := make([]float64, 200)
	for i := range grid {
		grid[i] = 1e-3 * math.Pow(1e4, float64(i)/199) // Hz, around 1/(2π)
	}
	ordered, peaks, err := section.OrderPeaks(context.Background(), secs, grid)
	if err != nil {
		panic(err)
	}
	for i, s := range ordered {
		fmt.Printf("Q %.4f, node peak %.4f\n", s.Q(), peaks[i])
	}
	// Output:
	// Q 0.5176, node peak 1.0000
	// Q 0.7071, node peak 1.0000
	// Q 1.9319, node peak 1.0000
}

// ExampleExtremum refines the peak of a second-order lowpass with Q = 5
// from a point near it: the closed form Q²/√(1 − 1/(4Q²)) for |H|.
func ExampleExtremum() {
	q := 5.0
	p := complex(-1/(2*q), math.Sqrt(1-1/(4*q*q)))
	secs, err := section.Factor(zpk.ZPK{Poles: []complex128{p, cmplx.Conj(p)}, Gain: 1})
	if err != nil {
		panic(err)
	}
	peak := math.Sqrt(section.Extremum(secs, 0.9, 1.1, 1.02, true))
	fmt.Printf("%.10f %.10f\n", peak, q/math.Sqrt(1-1/(4*q*q)))
	// Output:
	// 5.0251890763 5.0251890763
}
