package step_test

import (
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/step"
)

// The step response of a second-order Butterworth lowpass at 1 kHz
// overshoots by e^(−π) = 4.32 %.
func ExampleResponse() {
	w := 2 * math.Pi * 1000
	p := complex(-w/math.Sqrt2, w/math.Sqrt2)
	sec := section.Section{Poles: []complex128{p, complex(real(p), -imag(p))}, Gain: w * w}
	stages := []step.Stage{step.FromSection(sec)}

	ts := step.TimeGrid(stages, 2000)
	y, err := step.Response(stages, ts)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("span %.4g ms\n", ts[len(ts)-1]*1e3)
	fmt.Printf("overshoot %.3g %%\n", (slices.Max(y)-step.DCGain(stages))*100)
	fmt.Printf("final value %.4g\n", y[len(y)-1])
	// Output:
	// span 2.251 ms
	// overshoot 4.32 %
	// final value 1
}

// A stage as built, here a first-order lowpass whose op-amp adds a pole at
// 100 times its own frequency: H = 1/((1 + x)(1 + x/100)). In units of
// τ = 1/ScaleRadPerSec, y(t) = 1 − (100/99)·e^(−t/τ) + (1/99)·e^(−100t/τ).
func ExampleFromRational() {
	r := circuit.Rational{Num: []float64{1}, Den: []float64{1, 1.01, 0.01}, ScaleRadPerSec: 2 * math.Pi * 100, SectionOrder: 1}
	stages := []step.Stage{step.FromRational(r)}
	tau := 1 / r.ScaleRadPerSec
	y, err := step.Response(stages, []float64{0, tau, 5 * tau})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.4f %.4f %.4f\n", y[0], y[1], y[2])
	// Output:
	// 0.0000 0.6284 0.9932
}

// A Model builds the cascade once for its figures and its plotted
// response: here the second-order Butterworth lowpass of ExampleResponse,
// settling to ±0.1 % of its peak.
func ExampleNewModel() {
	w := 2 * math.Pi * 1000
	p := complex(-w/math.Sqrt2, w/math.Sqrt2)
	sec := section.Section{Poles: []complex128{p, complex(real(p), -imag(p))}, Gain: w * w}
	m, err := step.NewModel([]step.Stage{step.FromSection(sec)})
	if err != nil {
		fmt.Println(err)
		return
	}
	fig, err := m.Measure(step.Band{Frac: 0.001})
	if err != nil {
		fmt.Println(err)
		return
	}
	y, err := m.Response(step.Grid(step.SettleMargin*fig.SettlingS, 500))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("overshoot %.3g %%, settled after %.3g ms\n", fig.OvershootPct, fig.SettlingS*1e3)
	fmt.Printf("peak of the plotted response %.4f\n", slices.Max(y))
	// Output:
	// overshoot 4.32 %, settled after 1.62 ms
	// peak of the plotted response 1.0432
}
