package xform_test

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/xform"
	"github.com/polewright/polewright/synth/zpk"
)

// secondOrderButterworth is the 1 rad/s Butterworth prototype of order 2,
// poles (−1 ± j)/√2.
var secondOrderButterworth = zpk.ZPK{
	Poles: []complex128{complex(-math.Sqrt2/2, math.Sqrt2/2), complex(-math.Sqrt2/2, -math.Sqrt2/2)},
	Gain:  1,
}

func ExampleLowpassToLowpass() {
	h := xform.LowpassToLowpass(secondOrderButterworth, 1000)
	fmt.Printf("poles %.4g %.4g, gain %.4g\n", h.Poles[0], h.Poles[1], h.Gain)
	// Output:
	// poles (-707.1+707.1i) (-707.1-707.1i), gain 1e+06
}

func ExampleLowpassToHighpass() {
	h := xform.LowpassToHighpass(secondOrderButterworth, 1000)
	fmt.Printf("zeros %.4g %.4g\n", h.Zeros[0], h.Zeros[1])
	fmt.Printf("poles %.4g %.4g, gain %.4g\n", h.Poles[0], h.Poles[1], h.Gain)
	// Output:
	// zeros (0+0i) (0+0i)
	// poles (-707.1-707.1i) (-707.1+707.1i), gain 1
}

func ExampleLowpassToBandpass() {
	// First-order prototype 1/(s+1) to a band centred on 1000 rad/s, 100 rad/s wide.
	h := xform.LowpassToBandpass(zpk.ZPK{Poles: []complex128{-1}, Gain: 1}, 1000, 100)
	fmt.Printf("zeros %.4g\n", h.Zeros)
	fmt.Printf("poles %.4g %.4g, gain %.4g\n", h.Poles[0], h.Poles[1], h.Gain)
	fmt.Printf("|H(j1000)| = %.4g\n", h.MagnitudeAt(1000))
	// Output:
	// zeros [(0+0i)]
	// poles (-50+998.7i) (-50-998.7i), gain 100
	// |H(j1000)| = 1
}

func ExampleLowpassToBandstop() {
	h := xform.LowpassToBandstop(zpk.ZPK{Poles: []complex128{-1}, Gain: 1}, 1000, 100)
	fmt.Printf("zeros %.4g %.4g\n", h.Zeros[0], h.Zeros[1])
	fmt.Printf("|H(0)| = %.4g, |H(j1000)| = %.4g\n", h.MagnitudeAt(0), h.MagnitudeAt(1000))
	// Output:
	// zeros (0+1000i) (0-1000i)
	// |H(0)| = 1, |H(j1000)| = 0
}
