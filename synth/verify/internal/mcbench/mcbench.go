// Package mcbench builds the reference chain that the Monte Carlo
// benchmarks and the comparison script testdata/bench/montecarlo.sh time:
// an 8th-order Butterworth lowpass at 1 kHz as four unity-gain Sallen-Key
// stages (R1 = R2, C2 = 10 nF, C1 = 4Q²·C2, exact values; resistors 1 %,
// capacitors 5 %), analysed at Points log-spaced frequencies from StartHz
// to StopHz, with a mask that the nominal design meets.
package mcbench

import (
	"math"

	"github.com/polewright/polewright/synth/circuit"
)

// F0Hz is the cut-off of the reference filter.
const F0Hz = 1000

// The reference grid: Points log-spaced frequencies from StartHz to StopHz
// inclusive.
const (
	Points  = 200
	StartHz = 10
	StopHz  = 100e3
)

// Tolerances of the reference parts, in percent.
const (
	ResistorPct  = 1
	CapacitorPct = 5
)

// The mask: gain within ±PassRippleDB up to PassEdgeHz, loss at least
// StopLossDB from StopEdgeHz. The nominal Butterworth has 0.12 dB loss at
// 800 Hz and 49.9 dB at the first grid point above 2 kHz (2049 Hz); with
// 1 % resistors and 5 % capacitors, uniform, 94 % of the boards meet it.
const (
	PassEdgeHz   = 800
	PassRippleDB = 1
	StopEdgeHz   = 2000
	StopLossDB   = 48.5
)

// SinglePole is the op-amp model of the benchmark: 1 MHz GBW, 100 dB DC
// gain.
var SinglePole = circuit.Model{GBWHz: 1e6, DCGainDB: 100}

// Ideal is the nullor model.
var Ideal = circuit.Model{Ideal: true}

// Q returns the pole-pair quality factors of the 8th-order Butterworth
// lowpass, 1/(2·cos((2k−1)π/16)) for k = 1..4 (closed form, largest
// last, the order of the stages).
func Q() []float64 {
	q := make([]float64, 4)
	for k := 1; k <= 4; k++ {
		q[4-k] = 1 / (2 * math.Cos(float64(2*k-1)*math.Pi/16))
	}
	return q
}

// Chain returns the reference chain with op-amp model m.
func Chain(m circuit.Model) circuit.Chain {
	ch := circuit.Chain{Model: m}
	w0 := 2 * math.Pi * F0Hz
	for _, q := range Q() {
		c2 := 10e-9
		c1 := 4 * q * q * c2
		r := 1 / (w0 * math.Sqrt(c1*c2))
		part := func(ref string, k circuit.PartKind, a, b string, v, tol float64) circuit.Part {
			return circuit.Part{Ref: ref, Kind: k, A: a, B: b, Value: v, Exact: v, TolerancePct: tol}
		}
		ch.Stages = append(ch.Stages, circuit.Stage{
			Topology: "sallen-key",
			Parts: []circuit.Part{
				part("R1", circuit.Resistor, circuit.In, "n1", r, ResistorPct),
				part("R2", circuit.Resistor, "n1", "n2", r, ResistorPct),
				part("C1", circuit.Capacitor, "n1", "out", c1, CapacitorPct),
				part("C2", circuit.Capacitor, "n2", circuit.Ground, c2, CapacitorPct),
			},
			OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
			Out:    "out",
		})
	}
	return ch
}

// FreqHz returns the reference grid.
func FreqHz() []float64 {
	f := make([]float64, Points)
	for i := range f {
		f[i] = StartHz * math.Pow(StopHz/StartHz, float64(i)/(Points-1))
	}
	return f
}

// Meets returns the mask test on the grid freqHz: safe for concurrent use.
func Meets(freqHz []float64) func(db []float64) bool {
	return func(db []float64) bool {
		for i, f := range freqHz {
			switch {
			case f <= PassEdgeHz && (db[i] < -PassRippleDB || db[i] > PassRippleDB):
				return false
			case f >= StopEdgeHz && db[i] > -StopLossDB:
				return false
			}
		}
		return true
	}
}
