package step_test

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/step"
)

// The second-order Butterworth lowpass at 1 kHz: overshoot e^(−π) =
// 4.32 %, a 10–90 % rise of 2.148/ω0, and its settling to ±0.1 % and to
// ±½ LSB of a 16-bit converter.
func ExampleMeasure() {
	w := 2 * math.Pi * 1000
	p := complex(-w/math.Sqrt2, w/math.Sqrt2)
	stages := []step.Stage{step.FromSection(section.Section{Poles: []complex128{p, complex(real(p), -imag(p))}, Gain: w * w})}
	for _, tol := range []float64{1e-3, step.HalfLSBFrac(16)} {
		_, fig, err := step.Measure(stages, step.SettlingGrid(stages, 500, tol), tol)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("±%.3g: overshoot %.3f %%, rise %.1f µs, settled after %.1f µs\n", tol, fig.OvershootPct, fig.RiseTimeS*1e6, fig.SettlingS*1e6)
	}
	// Output:
	// ±0.001: overshoot 4.321 %, rise 341.9 µs, settled after 1629.5 µs
	// ±7.63e-06: overshoot 4.321 %, rise 341.9 µs, settled after 2547.9 µs
}

// Analyze works on samples: a first-order lowpass sampled over 20 time
// constants rises in τ·ln 9 and settles to ±1 % after τ·ln 100.
func ExampleAnalyze() {
	const tau = 1e-3
	ts := make([]float64, 2001)
	y := make([]float64, len(ts))
	for i := range ts {
		ts[i] = 20 * tau * float64(i) / 2000
		y[i] = -math.Expm1(-ts[i] / tau)
	}
	fig := step.Analyze(ts, y, 0.01)
	fmt.Printf("rise %.4f ms (τ·ln 9 = %.4f ms), settled after %.4f ms (τ·ln 100 = %.4f ms)\n",
		fig.RiseTimeS*1e3, tau*math.Log(9)*1e3, fig.SettlingS*1e3, tau*math.Log(100)*1e3)
	// Output:
	// rise 2.1972 ms (τ·ln 9 = 2.1972 ms), settled after 4.6052 ms (τ·ln 100 = 4.6052 ms)
}
