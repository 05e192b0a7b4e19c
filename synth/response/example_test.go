package response_test

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/zpk"
)

// firstOrder is ωc/(s + ωc) with a 1 kHz corner.
var firstOrder = zpk.ZPK{
	Poles: []complex128{complex(-response.RadPerSec(1000), 0)},
	Gain:  response.RadPerSec(1000),
}

// resonator is ω0²/(s² + (ω0/Q)s + ω0²) with f0 = 1 kHz and Q = 10.
func resonator() zpk.ZPK {
	w0, q := response.RadPerSec(1000), 10.0
	s, w := -w0/(2*q), w0*math.Sqrt(1-1/(4*q*q))
	return zpk.ZPK{Poles: []complex128{complex(s, w), complex(s, -w)}, Gain: w0 * w0}
}

func ExampleRadPerSec() {
	fmt.Printf("%.4g rad/s\n", response.RadPerSec(1000))
	// Output:
	// 6283 rad/s
}

func ExampleLogSpaceHz() {
	fmt.Printf("%.4g\n", response.LogSpaceHz(nil, 10, 1e4, 4))
	// Output:
	// [10 100 1000 1e+04]
}

func ExampleMagnitudeDB() {
	db := response.MagnitudeDB(nil, firstOrder, []float64{100, 1000, 10000})
	fmt.Printf("%.4g\n", db)
	// Output:
	// [-0.04321 -3.01 -20.04]
}

func ExamplePhaseDeg() {
	deg := response.PhaseDeg(nil, firstOrder, []float64{100, 1000, 10000})
	fmt.Printf("%.4g\n", deg)
	// A pair of zeros on the axis at 2 kHz steps the phase by +180°.
	notch := resonator()
	wz := response.RadPerSec(2000)
	notch.Zeros = []complex128{complex(0, wz), complex(0, -wz)}
	fmt.Printf("%.4g\n", response.PhaseDeg(nil, notch, []float64{1999, 2001}))
	// Output:
	// [-5.711 -45 -84.29]
	// [-176.2 3.811]
}

func ExampleGroupDelayS() {
	tau := response.GroupDelayS(nil, firstOrder, []float64{1, 1000})
	// 1/ωc at DC, half of it at the corner.
	fmt.Printf("%.4g s\n", tau)
	// Output:
	// [0.0001592 7.958e-05] s
}

func ExampleGrid() {
	// 100 base points, 33 around the Q = 10 resonance, one band edge.
	g := response.Grid(resonator(), 10, 1e5, 100, 1234)
	fmt.Printf("%d points from %.4g to %.4g Hz\n", len(g), g[0], g[len(g)-1])
	// Output:
	// 134 points from 10 to 1e+05 Hz
}

func ExamplePeakDB() {
	f, db := response.PeakDB(resonator(), 10, 1e5)
	fmt.Printf("%.4g dB at %.4g Hz\n", db, f)
	// Output:
	// 20.01 dB at 997.5 Hz
}

// ExampleMagnitudePhaseDelay evaluates the Q = 10 resonator at its f0 and
// a decade either side in one pass. The closed forms with x = f/f0:
// |H|² = 1/((1 − x²)² + (x/Q)²), φ = −atan2(x/Q, 1 − x²) and
// τ = (1 + x²)/(Q·ω0·((1 − x²)² + (x/Q)²)): Q (20 dB), −90° and 2Q/ω0
// at f0.
func ExampleMagnitudePhaseDelay() {
	db, ph, tau := response.MagnitudePhaseDelay(nil, nil, nil, resonator(), []float64{100, 1000, 10000})
	fmt.Printf("%.4g dB\n%.4g°\n%.4g s\n", db, ph, tau)
	// Output:
	// [0.08685 20 -39.91] dB
	// [-0.5787 -90 -179.4]°
	// [1.64e-05 0.003183 1.64e-07] s
}
