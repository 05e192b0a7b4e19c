package proto_test

import (
	"errors"
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/proto"
)

// A fourth-order 1 dB Chebyshev I prototype: 1 dB of loss at the 1 rad/s
// passband edge, and |H(0)| = 10^(−1/20) because the order is even.
func ExampleLowpass() {
	h, err := proto.Lowpass(proto.Chebyshev1, 4, 1, 0)
	if err != nil {
		panic(err)
	}
	for _, p := range h.Poles {
		fmt.Printf("pole %.4g\n", p)
	}
	fmt.Printf("gain %.4g\n", h.Gain)
	fmt.Printf("loss at 1 rad/s %.4g dB, |H(0)| %.4g\n", -20*math.Log10(h.MagnitudeAt(1)), h.MagnitudeAt(0))
	// Output:
	// pole (-0.3369+0.4073i)
	// pole (-0.3369-0.4073i)
	// pole (-0.1395+0.9834i)
	// pole (-0.1395-0.9834i)
	// gain 0.2457
	// loss at 1 rad/s 1 dB, |H(0)| 0.8913
}

// An elliptic prototype has its zeros on the jω axis beyond the stopband
// edge, where the loss first reaches attenDB.
func ExampleLowpass_elliptic() {
	h, err := proto.Lowpass(proto.Elliptic, 3, 0.5, 40)
	if err != nil {
		panic(err)
	}
	ws, err := proto.StopbandEdge(proto.Elliptic, 3, 0.5, 40)
	if err != nil {
		panic(err)
	}
	fmt.Printf("zeros %.4g\n", h.Zeros)
	fmt.Printf("poles %.4g\n", h.Poles)
	fmt.Printf("stopband edge %.4g rad/s, loss there %.4g dB\n", ws, -20*math.Log10(h.MagnitudeAt(ws)))
	// Output:
	// zeros [(0+3.103i) (0-3.103i)]
	// poles [(-0.2903+1.03i) (-0.2903-1.03i) (-0.6591+0i)]
	// stopband edge 2.711 rad/s, loss there 40 dB
}

// The lowest order meeting 3 dB up to 1 rad/s and 30 dB from 4 rad/s
// (linear-phase with its default 0.05° phase ripple), then two masks that
// cannot be met.
func ExampleMinOrder() {
	for _, a := range proto.Approximations() {
		n, err := proto.MinOrder(a, 3, 30, 4)
		if err != nil {
			panic(err)
		}
		fmt.Printf("%-12s %d\n", a, n)
	}
	_, err := proto.MinOrder(proto.Butterworth, 1, 60, 1.3318)
	var oe *proto.OrderError
	if errors.As(err, &oe) {
		fmt.Println(oe.Needed, err)
	}
	_, err = proto.MinOrder(proto.Bessel, 1, 30, 2)
	if errors.As(err, &oe) {
		fmt.Println(oe.Unreachable, err)
	}
	// Output:
	// butterworth  3
	// chebyshev1   3
	// chebyshev2   3
	// bessel       4
	// elliptic     2
	// legendre     3
	// gaussian     5
	// linear-phase 3
	// 27 needs order 27, more than the limit of 20
	// true cannot be met by any order: at this frequency no order gives more than 4.444 dB (the limit is 20)
}

// A linear-phase prototype with 0.5° of phase ripple: its phase lag follows
// a pure delay to within ±0.5° from DC up to the band edge.
func ExampleLinearPhaseDelay() {
	h, err := proto.Lowpass(proto.LinearPhase, 3, 3.0103, 0, proto.PhaseErrorDeg(0.5))
	if err != nil {
		panic(err)
	}
	delay, band, err := proto.LinearPhaseDelay(3, 3.0103, 0.5)
	if err != nil {
		panic(err)
	}
	fmt.Printf("poles %.4f\n", h.Poles)
	fmt.Printf("delay %.4f s, phase within ±0.5° up to %.4f rad/s\n", delay, band)
	// Output:
	// poles [(-0.6969+1.1318i) (-0.6969-1.1318i) (-0.8257+0.0000i)]
	// delay 1.9480 s, phase within ±0.5° up to 1.3563 rad/s
}

// Optimum-L and Gaussian prototypes of order 3, both 3.0103 dB down at
// 1 rad/s: the optimum-L falls faster beyond the edge, the Gaussian
// slower (its poles lie further from the jω axis). The optimum-L loss at
// 2 rad/s is 10·log10(1 + L_3(4)) = 10·log10(149) with L_3 = 3ω⁶ − 3ω⁴ + ω².
func ExampleLowpass_optimumLAndGaussian() {
	for _, a := range []proto.Approximation{proto.Legendre, proto.Gaussian} {
		h, err := proto.Lowpass(a, 3, 3.0103, 0)
		if err != nil {
			panic(err)
		}
		fmt.Printf("%-8s poles %.4f, loss at 2 rad/s %.2f dB\n", a, h.Poles, -20*math.Log10(h.MagnitudeAt(2)))
	}
	// Output:
	// legendre poles [(-0.3452+0.9009i) (-0.3452-0.9009i) (-0.6203+0.0000i)], loss at 2 rad/s 21.73 dB
	// gaussian poles [(-1.3745+0.9407i) (-1.3745-0.9407i) (-1.5112+0.0000i)], loss at 2 rad/s 10.55 dB
}
