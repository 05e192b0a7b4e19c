package circuit_test

import (
	"github.com/polewright/polewright/synth/circuit"
)

// Test circuits. Every builder uses stage-local nodes; the output node is
// "out" (renamed s{k}_out or out in a chain).

func res(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Resistor, A: a, B: b, Value: v, Exact: v, Series: "E96", TolerancePct: 1}
}

func capa(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Capacitor, A: a, B: b, Value: v, Exact: v, Series: "E24", TolerancePct: 5}
}

// rcBuffer is R1 from in to n1, C1 from n1 to ground, and a unity-gain
// follower U1 from n1 to out.
func rcBuffer(r, c float64) circuit.Stage {
	return circuit.Stage{
		Topology: "rc-buffer",
		Parts:    []circuit.Part{res("R1", "in", "n1", r), capa("C1", "n1", "0", c)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
		Out:      "out",
	}
}

// sallenKeyLP is the unity-gain Sallen-Key lowpass: R1 in→n1, R2 n1→n2,
// C1 n1→out (feedback), C2 n2→ground, follower U1 n2→out.
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

// sallenKeyHP is the unity-gain Sallen-Key highpass: C1 in→n1, C2 n1→n2,
// R1 n1→out (feedback), R2 n2→ground, follower U1 n2→out.
func sallenKeyHP(c1, c2, r1, r2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			capa("C1", "in", "n1", c1), capa("C2", "n1", "n2", c2),
			res("R1", "n1", "out", r1), res("R2", "n2", "0", r2),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
}

// mfbLP is the multiple-feedback lowpass: R1 in→n1, R2 n1→out (feedback),
// R3 n1→n2, C1 n1→ground, C2 n2→out (feedback), U1 with + at ground and −
// at n2.
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

// inverting is the inverting amplifier: R1 in→n1, R2 n1→out, U1 with + at
// ground and − at n1.
func inverting(r1, r2 float64) circuit.Stage {
	return circuit.Stage{
		Topology: "inverting",
		Parts:    []circuit.Part{res("R1", "in", "n1", r1), res("R2", "n1", "out", r2)},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n1", Out: "out"}},
		Out:      "out",
	}
}

// ideal and singlePole are the two op-amp models the tests use: a nullor,
// and a 1 MHz GBW, 100 dB (A0 = 1e5) single-pole amplifier.
var (
	ideal      = circuit.Model{Ideal: true}
	singlePole = circuit.Model{GBWHz: 1e6, DCGainDB: 100}
)
