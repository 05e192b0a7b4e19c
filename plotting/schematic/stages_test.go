package schematic

import "github.com/polewright/polewright/synth/circuit"

// The stages below are hand-made netlists of each form the topology
// package builds, with the node names and part roles of a textbook
// drawing; values are plausible, not designed.

func res(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Resistor, A: a, B: b, Value: v, Exact: v, Series: "E96", TolerancePct: 1}
}

func capa(ref, a, b string, v float64) circuit.Part {
	return circuit.Part{Ref: ref, Kind: circuit.Capacitor, A: a, B: b, Value: v, Exact: v, Series: "E12", TolerancePct: 5}
}

func amp(ref, plus, minus, out string) circuit.OpAmp {
	return circuit.OpAmp{Ref: ref, Plus: plus, Minus: minus, Out: out}
}

const gnd = circuit.Ground

type namedStage struct {
	name string
	st   circuit.Stage
}

func stages() []namedStage {
	return []namedStage{
		{"rc-buffer lowpass follower", circuit.Stage{Topology: "rc-buffer",
			Parts:  []circuit.Part{res("R1", "in", "p", 10.2e3), capa("C1", "p", gnd, 4.7e-9)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "out", "out")}, Out: "out"}},
		{"rc-buffer lowpass divider and gain", circuit.Stage{Topology: "rc-buffer",
			Parts: []circuit.Part{res("R1", "in", "p", 20e3), res("R2", "p", gnd, 20e3), capa("C1", "p", gnd, 10e-9),
				res("R3", "out", "m", 10e3), res("R4", "m", gnd, 10e3)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "m", "out")}, Out: "out"}},
		{"rc-buffer highpass tapped", circuit.Stage{Topology: "rc-buffer",
			Parts:  []circuit.Part{capa("C1", "in", "a", 22e-9), res("R1", "a", "p", 4.99e3), res("R2", "p", gnd, 10e3)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "out", "out")}, Out: "out"}},
		{"rc-buffer highpass", circuit.Stage{Topology: "rc-buffer",
			Parts:  []circuit.Part{capa("C1", "in", "a", 22e-9), res("R1", "a", gnd, 7.15e3)},
			OpAmps: []circuit.OpAmp{amp("U1", "a", "out", "out")}, Out: "out"}},
		{"inverting-rc lowpass", circuit.Stage{Topology: "inverting-rc",
			Parts:  []circuit.Part{res("R1", "in", "m", 10e3), res("R2", "m", "out", 22.1e3), capa("C1", "m", "out", 1e-9)},
			OpAmps: []circuit.OpAmp{amp("U1", gnd, "m", "out")}, Out: "out"}},
		{"inverting-rc highpass", circuit.Stage{Topology: "inverting-rc",
			Parts:  []circuit.Part{capa("C1", "in", "a", 100e-9), res("R1", "a", "m", 1e3), res("R2", "m", "out", 10e3)},
			OpAmps: []circuit.OpAmp{amp("U1", gnd, "m", "out")}, Out: "out"}},
		{"sallen-key lowpass unity", sallenKeyLowpass()},
		{"sallen-key lowpass gain and divider", circuit.Stage{Topology: "sallen-key",
			Parts: []circuit.Part{res("R1", "in", "a", 15e3), res("R2", "a", gnd, 30.1e3), res("R3", "a", "p", 10e3),
				capa("C1", "a", "out", 10e-9), capa("C2", "p", gnd, 10e-9), res("R4", "out", "m", 5.9e3), res("R5", "m", gnd, 10e3)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "m", "out")}, Out: "out"}},
		{"sallen-key highpass unity", circuit.Stage{Topology: "sallen-key",
			Parts: []circuit.Part{capa("C1", "in", "a", 10e-9), capa("C2", "a", "p", 10e-9),
				res("R1", "a", "out", 5.62e3), res("R2", "p", gnd, 22.6e3)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "out", "out")}, Out: "out"}},
		{"sallen-key highpass divider and gain", circuit.Stage{Topology: "sallen-key",
			Parts: []circuit.Part{capa("C1", "in", "a", 6.8e-9), capa("C2", "a", gnd, 3.3e-9), capa("C3", "a", "p", 10e-9),
				res("R1", "a", "out", 5.62e3), res("R2", "p", gnd, 22.6e3), res("R3", "out", "m", 2.2e3), res("R4", "m", gnd, 10e3)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "m", "out")}, Out: "out"}},
		{"multiple-feedback lowpass", circuit.Stage{Topology: "multiple-feedback",
			Parts: []circuit.Part{res("R1", "in", "a", 10e3), res("R2", "a", "out", 10e3), res("R3", "a", "m", 4.99e3),
				capa("C1", "m", "out", 1e-9), capa("C2", "a", gnd, 22e-9)},
			OpAmps: []circuit.OpAmp{amp("U1", gnd, "m", "out")}, Out: "out"}},
		{"multiple-feedback highpass", circuit.Stage{Topology: "multiple-feedback",
			Parts: []circuit.Part{capa("C1", "in", "a", 10e-9), capa("C2", "a", "out", 10e-9), capa("C3", "a", "m", 10e-9),
				res("R1", "a", gnd, 2.2e3), res("R2", "m", "out", 100e3)},
			OpAmps: []circuit.OpAmp{amp("U1", gnd, "m", "out")}, Out: "out"}},
		{"multiple-feedback bandpass", circuit.Stage{Topology: "multiple-feedback",
			Parts: []circuit.Part{res("R1", "in", "a", 31.6e3), res("R2", "a", gnd, 1.05e3), res("R3", "m", "out", 200e3),
				capa("C1", "a", "m", 10e-9), capa("C2", "a", "out", 10e-9)},
			OpAmps: []circuit.OpAmp{amp("U1", gnd, "m", "out")}, Out: "out"}},
		{"state-variable lowpass", stateVariable("lp", false)},
		{"state-variable highpass", stateVariable("hp", false)},
		{"state-variable bandpass", stateVariable("bp", false)},
		{"state-variable notch", stateVariable("out", true)},
		{"allpass first order", circuit.Stage{Topology: "allpass",
			Parts:  []circuit.Part{res("R1", "in", "m", 15e3), res("R2", "m", "out", 15e3), res("R3", "in", "p", 10.5e3), capa("C1", "p", gnd, 15e-9)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "m", "out")}, Out: "out"}},
		{"allpass first order inverted", circuit.Stage{Topology: "allpass",
			Parts:  []circuit.Part{res("R1", "in", "m", 15e3), res("R2", "m", "out", 15e3), capa("C1", "in", "p", 15e-9), res("R3", "p", gnd, 10.5e3)},
			OpAmps: []circuit.OpAmp{amp("U1", "p", "m", "out")}, Out: "out"}},
		{"allpass second order", circuit.Stage{Topology: "allpass",
			Parts: []circuit.Part{res("R1", "in", "a", 1.58e3), res("R2", "a", gnd, 31.6e3), res("R3", "m", "bp", 3.65e3),
				capa("C1", "a", "m", 150e-9), capa("C2", "a", "bp", 27e-9),
				res("R4", "in", "n", 14.3e3), res("R5", "bp", "n", 14e3), res("R6", "n", "out", 14.3e3)},
			OpAmps: []circuit.OpAmp{amp("U1", gnd, "m", "bp"), amp("U2", gnd, "n", "out")}, Out: "out"}},
		// The one-op-amp notch (package topology's oneAmpNotch): the
		// Delyiannis-Friend core R1, R2, R3, C1, C2, the + input divider
		// R4, R5 and the feedforward R6 and C3 in each placement.
		{"one-amp-notch lowpass-notch", oneAmpNotch(true, true, false, true)},
		{"one-amp-notch highpass-notch", oneAmpNotch(true, false, true, false)},
		{"one-amp-notch notch without divider", oneAmpNotch(false, true, false, false)},
		// The three-op-amp notch (package topology's twoIntegratorNotch):
		// integrator U1 (R3, C2), inverter U2 (R5, R6), lossy integrator
		// U3 at the output (R1, C1, loop R2), feedforward C3 and R4.
		{"two-integrator-notch", circuit.Stage{Topology: "two-integrator-notch",
			Parts: []circuit.Part{res("R1", "out", "i1", 11.8e3), res("R2", "inv", "i1", 12.1e3), res("R3", "out", "i2", 18.7e3),
				res("R4", "in", "i2", 12.1e3), res("R5", "lp", "i3", 14.7e3), res("R6", "i3", "inv", 14.7e3),
				capa("C1", "i1", "out", 6.8e-9), capa("C2", "i2", "lp", 560e-12), capa("C3", "in", "i1", 100e-12)},
			OpAmps: []circuit.OpAmp{amp("U1", gnd, "i2", "lp"), amp("U2", gnd, "i3", "inv"), amp("U3", gnd, "i1", "out")}, Out: "out"}},
	}
}

// oneAmpNotch is the one-op-amp notch: with divider the + input is the tap
// p of R4, R5 (else the stage input), r6g puts R6 from m to ground (else
// from the input), c3 adds C3, c3in from the input to m (else to ground).
func oneAmpNotch(divider, r6g, c3, c3in bool) circuit.Stage {
	st := circuit.Stage{Topology: "one-amp-notch",
		Parts: []circuit.Part{res("R1", "in", "a", 5.9e3), res("R2", "a", gnd, 2.1e3), res("R3", "m", "out", 57.6e3)},
		Out:   "out"}
	plus := "in"
	if divider {
		plus = "p"
		st.Parts = append(st.Parts, res("R4", "in", "p", 2e3), res("R5", "p", gnd, 1.1e3))
	}
	if r6g {
		st.Parts = append(st.Parts, res("R6", "m", gnd, 31.6e3))
	} else {
		st.Parts = append(st.Parts, res("R6", "in", "m", 31.6e3))
	}
	st.Parts = append(st.Parts, capa("C1", "a", "out", 680e-12), capa("C2", "a", "m", 820e-12))
	switch {
	case c3in:
		st.Parts = append(st.Parts, capa("C3", "in", "m", 180e-12))
	case c3:
		st.Parts = append(st.Parts, capa("C3", "m", gnd, 180e-12))
	}
	st.OpAmps = []circuit.OpAmp{amp("U1", plus, "m", "out")}
	return st
}

func sallenKeyLowpass() circuit.Stage {
	return circuit.Stage{Topology: "sallen-key",
		Parts: []circuit.Part{res("R1", "in", "a", 10.2e3), res("R2", "a", "p", 10.2e3),
			capa("C1", "a", "out", 4.7e-9), capa("C2", "p", gnd, 2.2e-10)},
		OpAmps: []circuit.OpAmp{amp("U1", "p", "out", "out")}, Out: "out"}
}

// stateVariable is the summer and two integrators with the output at out
// (lp, hp or bp), and with notch a fourth op-amp summing hp and lp.
func stateVariable(out string, notch bool) circuit.Stage {
	st := circuit.Stage{Topology: "state-variable",
		Parts: []circuit.Part{res("R1", "in", "m", 10e3), res("R2", "lp", "m", 10e3), res("R3", "hp", "m", 10e3),
			res("R4", "bp", "p", 30.1e3), res("R5", "p", gnd, 1e3), res("R6", "hp", "i1", 15.8e3),
			capa("C1", "i1", "bp", 10e-9), res("R7", "bp", "i2", 15.8e3), capa("C2", "i2", "lp", 10e-9)},
		OpAmps: []circuit.OpAmp{amp("U1", "p", "m", "hp"), amp("U2", gnd, "i1", "bp"), amp("U3", gnd, "i2", "lp")},
		Out:    out}
	if notch {
		st.Parts = append(st.Parts, res("R8", "hp", "s", 10e3), res("R9", "lp", "s", 12.1e3), res("R10", "out", "s", 10e3))
		st.OpAmps = append(st.OpAmps, amp("U4", gnd, "s", "out"))
	}
	return st
}
