// Package benchchain builds the reference chain that the circuit
// benchmarks and bench_ngspice.sh time: an 8th-order Butterworth lowpass
// at 1 kHz as four unity-gain Sallen-Key stages, with exact part values,
// swept at 1,000 log-spaced points from 10 Hz to 100 kHz.
package benchchain

import (
	"math"

	"github.com/polewright/polewright/synth/circuit"
)

// F0Hz is the cut-off of the reference filter.
const F0Hz = 1000

// Points, StartHz and StopHz are the reference sweep: Points log-spaced
// frequencies from StartHz to StopHz inclusive.
const (
	Points  = 1000
	StartHz = 10
	StopHz  = 100e3
)

// butterworth8Q are the pole-pair quality factors of the 8th-order
// Butterworth lowpass, 1/(2·cos((2k−1)π/16)) for k = 1..4 (closed form,
// largest last).
func butterworth8Q() []float64 {
	q := make([]float64, 4)
	for k := 1; k <= 4; k++ {
		q[4-k] = 1 / (2 * math.Cos(float64(2*k-1)*math.Pi/16))
	}
	return q
}

// Chain returns the reference chain with op-amp model m. Each stage is a
// unity-gain Sallen-Key lowpass with R1 = R2 = R, ground capacitor C2 =
// 10 nF and feedback capacitor C1 = 4Q²·C2, so that Q = √(C1/C2)/2 and
// ω0 = 1/(R·√(C1·C2)) = 2π·F0Hz.
func Chain(m circuit.Model) circuit.Chain {
	ch := circuit.Chain{Model: m}
	w0 := 2 * math.Pi * F0Hz
	for _, q := range butterworth8Q() {
		c2 := 10e-9
		c1 := 4 * q * q * c2
		r := 1 / (w0 * math.Sqrt(c1*c2))
		part := func(ref string, k circuit.PartKind, a, b string, v float64, series string, tol float64) circuit.Part {
			return circuit.Part{Ref: ref, Kind: k, A: a, B: b, Value: v, Exact: v, Series: series, TolerancePct: tol}
		}
		ch.Stages = append(ch.Stages, circuit.Stage{
			Topology: "sallen-key",
			Parts: []circuit.Part{
				part("R1", circuit.Resistor, circuit.In, "n1", r, "", 1),
				part("R2", circuit.Resistor, "n1", "n2", r, "", 1),
				part("C1", circuit.Capacitor, "n1", "out", c1, "", 5),
				part("C2", circuit.Capacitor, "n2", circuit.Ground, c2, "", 5),
			},
			OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
			Out:    "out",
		})
	}
	return ch
}

// SinglePole is the op-amp model of the benchmark: 1 MHz GBW, 100 dB DC
// gain.
var SinglePole = circuit.Model{GBWHz: 1e6, DCGainDB: 100}

// FreqHz returns the reference sweep's frequencies.
func FreqHz() []float64 {
	f := make([]float64, Points)
	for i := range f {
		f[i] = StartHz * math.Pow(StopHz/StartHz, float64(i)/(Points-1))
	}
	return f
}
