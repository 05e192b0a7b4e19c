package noise_test

import (
	"math"

	"github.com/polewright/polewright/synth/circuit"
)

// Test circuits, in the layout of package circuit's tests: stage-local
// nodes, the output node "out".

func res(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Resistor, A: a, B: b, Value: v, Exact: v, Series: "E96", TolerancePct: 1}
}

func capa(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Capacitor, A: a, B: b, Value: v, Exact: v, Series: "E24", TolerancePct: 5}
}

// rcBuffer is R1 from in to n1, C1 from n1 to ground and a follower U1.
func rcBuffer(r, c float64) circuit.Stage {
	return circuit.Stage{
		Topology: "rc-buffer",
		Parts:    []circuit.Part{res("R1", "in", "n1", r), capa("C1", "n1", "0", c)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
		Out:      "out",
	}
}

// sallenKeyLP is the unity-gain Sallen-Key lowpass: R1 in→n1, R2 n1→n2,
// C1 n1→out, C2 n2→ground, follower U1.
func sallenKeyLP(r1, r2, c1, c2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			res("R1", "in", "n1", r1), res("R2", "n1", "n2", r2),
			capa("C1", "n1", "out", c1), capa("C2", "n2", "0", c2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
}

// mfbLP is the multiple-feedback lowpass: R1 in→n1, R2 n1→out, R3 n1→n2,
// C1 n1→ground, C2 n2→out, U1 with + at ground and − at n2.
func mfbLP(r1, r2, r3, c1, c2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "multiple-feedback",
		Parts: []circuit.Part{
			res("R1", "in", "n1", r1), res("R2", "n1", "out", r2), res("R3", "n1", "n2", r3),
			capa("C1", "n1", "0", c1), capa("C2", "n2", "out", c2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n2", Out: "out"}},
		Out:    "out",
	}
}

// inverting is the inverting amplifier R1 in→n1, R2 n1→out, U1 with + at
// ground.
func inverting(r1, r2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "inverting",
		Parts:    []circuit.Part{res("R1", "in", "n1", r1), res("R2", "n1", "out", r2)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n1", Out: "out"}},
		Out:      "out",
	}
}

// butterworth8 is an 8th-order Butterworth lowpass at f0Hz as four
// unity-gain Sallen-Key stages: R1 = R2 = R, C2 = 10 nF, C1 = 4Q²·C2, so
// that Q = √(C1/C2)/2 and ω0 = 1/(R·√(C1·C2)); Q_k = 1/(2cos((2k−1)π/16))
// (closed form), the highest Q last.
func butterworth8(f0Hz float64, m circuit.Model) circuit.Chain {
	ch := circuit.Chain{Model: m}
	w0 := 2 * math.Pi * f0Hz
	for k := 4; k >= 1; k-- {
		q := 1 / (2 * math.Cos(float64(2*k-1)*math.Pi/16))
		c2 := 10e-9
		c1 := 4 * q * q * c2
		r := 1 / (w0 * math.Sqrt(c1*c2))
		ch.Stages = append(ch.Stages, sallenKeyLP(r, r, c1, c2))
	}
	return ch
}

// Test values (package circuit's test circuits).
const (
	rcR, rcC               = 10e3, 10e-9
	skR1, skR2, skC1, skC2 = 10e3, 22e3, 22e-9, 10e-9
	mfR1, mfR2, mfR3       = 10e3, 10e3, 4.7e3
	mfC1, mfC2             = 47e-9, 2.2e-9
)

var (
	ideal      = circuit.Model{Ideal: true}
	singlePole = circuit.Model{GBWHz: 1e6, DCGainDB: 100}
)

// logspace returns n log-spaced frequencies from lo to hi inclusive.
func logspace(lo, hi float64, n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return f
}
