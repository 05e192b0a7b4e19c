package step_test

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/step"
)

// The second-order Butterworth lowpass at 1 kHz: overshoot e^(−π) =
// 4.32 %, a 10–90 % rise of 2.148/ω0, and its settling to ±0.1 % and to
// ±½ LSB of a 16-bit converter, of a full scale of 1 (its passband gain).
func ExampleMeasure() {
	w := 2 * math.Pi * 1000
	p := complex(-w/math.Sqrt2, w/math.Sqrt2)
	stages := []step.Stage{step.FromSection(section.Section{Poles: []complex128{p, complex(real(p), -imag(p))}, Gain: w * w})}
	for _, tol := range []float64{1e-3, step.HalfLSBFrac(16)} {
		fig, err := step.Measure(stages, step.Band{Frac: tol, FullScale: 1})
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

// A second-order bandpass at 1 kHz with Q = 5 steps up and rings down to
// 0: it has no overshoot or rise time (no final value to speak of), but
// an undershoot, e^(−π/√(4Q² − 1)) = 72.9 % of its peak, and a settling
// time to ±0.1 % of that peak.
func ExampleMeasure_bandpass() {
	w, q := 2*math.Pi*1000, 5.0
	stages := []step.Stage{{Num: []float64{0, 1 / q}, Den: []float64{1, 1 / q, 1}, ScaleRadPerSec: w}}
	fig, err := step.Measure(stages, step.Band{Frac: 1e-3})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("peak %.4f, undershoot %.1f %%, settled after %.2f ms; overshoot %v, rise %v\n",
		fig.PeakAbs, fig.UndershootPct, fig.SettlingS*1e3, fig.OvershootPct, fig.RiseTimeS)
	// Output:
	// peak 0.1725, undershoot 72.9 %, settled after 10.90 ms; overshoot NaN, rise NaN
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
	fig := step.Analyze(ts, y, step.Band{Frac: 0.01})
	fmt.Printf("rise %.4f ms (τ·ln 9 = %.4f ms), settled after %.4f ms (τ·ln 100 = %.4f ms)\n",
		fig.RiseTimeS*1e3, tau*math.Log(9)*1e3, fig.SettlingS*1e3, tau*math.Log(100)*1e3)
	// Output:
	// rise 2.1972 ms (τ·ln 9 = 2.1972 ms), settled after 4.6052 ms (τ·ln 100 = 4.6052 ms)
}
