// Package circuittest builds the textbook stages that the tests of the
// circuit, noise and verification packages analyse: stage-local nodes, the
// input "in", ground "0", the output "out". Resistors are E96 at 1 %,
// capacitors E24 at 5 %.
package circuittest

import (
	"math"

	"github.com/polewright/polewright/synth/circuit"
)

// Models the tests use: a nullor, and a 1 MHz GBW, 100 dB (A0 = 1e5)
// single-pole amplifier.
var (
	Ideal      = circuit.Model{Ideal: true}
	SinglePole = circuit.Model{GBWHz: 1e6, DCGainDB: 100}
)

// Res returns resistor ref of v Ohm between nodes a and b.
func Res(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Resistor, A: a, B: b, Value: v, Exact: v, Series: "E96", TolerancePct: 1}
}

// Cap returns capacitor ref of v Farad between nodes a and b.
func Cap(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Capacitor, A: a, B: b, Value: v, Exact: v, Series: "E24", TolerancePct: 5}
}

// RCBuffer is R1 from in to n1, C1 from n1 to ground, and a unity-gain
// follower U1 from n1 to out: f0 = 1/(2πRC).
func RCBuffer(r, c float64) circuit.Stage {
	return circuit.Stage{
		Topology: "rc-buffer",
		Parts:    []circuit.Part{Res("R1", "in", "n1", r), Cap("C1", "n1", "0", c)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
		Out:      "out",
	}
}

// SallenKeyLP is the unity-gain Sallen-Key lowpass: R1 in→n1, R2 n1→n2,
// C1 n1→out (feedback), C2 n2→ground, follower U1 n2→out.
func SallenKeyLP(r1, r2, c1, c2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			Res("R1", "in", "n1", r1), Res("R2", "n1", "n2", r2),
			Cap("C1", "n1", "out", c1), Cap("C2", "n2", "0", c2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
}

// SallenKeyHP is the unity-gain Sallen-Key highpass: C1 in→n1, C2 n1→n2,
// R1 n1→out (feedback), R2 n2→ground, follower U1 n2→out.
func SallenKeyHP(c1, c2, r1, r2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			Cap("C1", "in", "n1", c1), Cap("C2", "n1", "n2", c2),
			Res("R1", "n1", "out", r1), Res("R2", "n2", "0", r2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
}

// MFBLP is the multiple-feedback lowpass: R1 in→n1, R2 n1→out (feedback),
// R3 n1→n2, C1 n1→ground, C2 n2→out (feedback), U1 with + at ground and −
// at n2.
func MFBLP(r1, r2, r3, c1, c2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "multiple-feedback",
		Parts: []circuit.Part{
			Res("R1", "in", "n1", r1), Res("R2", "n1", "out", r2), Res("R3", "n1", "n2", r3),
			Cap("C1", "n1", "0", c1), Cap("C2", "n2", "out", c2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n2", Out: "out"}},
		Out:    "out",
	}
}

// Inverting is the inverting amplifier: R1 in→n1, R2 n1→out, U1 with + at
// ground and − at n1 (a gain stage, no pole).
func Inverting(r1, r2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "inverting",
		Parts:    []circuit.Part{Res("R1", "in", "n1", r1), Res("R2", "n1", "out", r2)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n1", Out: "out"}},
		Out:      "out",
	}
}

// Butterworth8 is an 8th-order Butterworth lowpass at f0Hz as four
// unity-gain Sallen-Key stages, lowest Q first: R1 = R2 = R, C2 = 10 nF,
// C1 = 4Q²·C2, so that Q = √(C1/C2)/2 and ω0 = 1/(R·√(C1·C2)), with
// Q_k = 1/(2·cos((2k−1)π/16)) (closed form).
func Butterworth8(f0Hz float64) []circuit.Stage {
	var st []circuit.Stage
	w0 := 2 * math.Pi * f0Hz
	for k := 4; k >= 1; k-- {
		q := 1 / (2 * math.Cos(float64(2*k-1)*math.Pi/16))
		c2 := 10e-9
		c1 := 4 * q * q * c2
		r := 1 / (w0 * math.Sqrt(c1*c2))
		st = append(st, SallenKeyLP(r, r, c1, c2))
	}
	return st
}
