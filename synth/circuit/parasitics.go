package circuit

import (
	"math"
	"slices"
)

// Parasitics of the op-amp model enter every analysis of this package as
// parts of the stage, so that the response, the slopes, the source
// transfers (noise), the DC solution and (through [Stage.WithParasitics])
// the Monte Carlo all see one circuit:
//
//   - Model.InputCapacitanceFarad: a capacitor from each op-amp input to
//     ground, except an input that is ground or a stage input (driven by
//     an ideal source, where it changes nothing);
//   - Model.OutputResistanceOhm: the amplifier drives an internal node
//     (named by [ParasiticNode]) and a resistor of that value joins it to
//     the op-amp's output node, so the op-amp's equation holds at the
//     internal node and the stage's loads hang on the resistor; a fully
//     differential op-amp has one on each output ([ParasiticNodeN]).
//
// Parasitic parts follow the stage's own parts (their indices are
// len(st.Parts) and up), carry Parasitic = true and zero tolerance, and are
// neither on the bill of materials nor in the deck's netlist (the deck
// writes them inside the op-amp subcircuit), nor noise sources: the output
// resistance stands for the amplifier's open-loop output stage, whose
// noise the input-referred densities already hold.

// ParasiticNode returns the name of op-amp ref's internal output node in
// a stage with parasitics ("ro_U1").
func ParasiticNode(ref string) string { return "ro_" + ref }

// ParasiticNodeN is [ParasiticNode] for the negative output of a fully
// differential op-amp ("ro_U1n").
func ParasiticNodeN(ref string) string { return "ro_" + ref + "n" }

// HasParasitics reports whether the model adds parts to a stage.
func (m Model) HasParasitics() bool {
	return m.InputCapacitanceFarad > 0 || m.OutputResistanceOhm > 0
}

// WithParasitics returns st with the model's parasitic parts appended (see
// the rules above); st itself when the model has none. The result is for
// analysis, not for [Stage.Validate]: its Out is no longer an op-amp
// output when the output resistance is set.
func (st Stage) WithParasitics(m Model) Stage {
	if !m.HasParasitics() {
		return st
	}
	aug := st
	// One allocation of the parts with room for the parasitic ones: the
	// analyses call this for every stage (growing the slice was a few
	// per cent of a board design).
	extra := 0
	for _, u := range st.OpAmps {
		extra += 3 // two input capacitors and an output resistor at most
		if u.FullyDifferential() {
			extra++
		}
	}
	aug.Parts = append(make([]Part, 0, len(st.Parts)+extra), st.Parts...)
	aug.OpAmps = slices.Clone(st.OpAmps)
	n := 0
	if c := m.InputCapacitanceFarad; c > 0 {
		for _, u := range st.OpAmps {
			for _, node := range []string{u.Plus, u.Minus} {
				if node == Ground || node == In || node == InN {
					continue
				}
				n++
				aug.Parts = append(aug.Parts, Part{Ref: "CX" + u.Ref + node, Kind: Capacitor, A: node, B: Ground,
					Value: c, Exact: c, Parasitic: true})
			}
		}
	}
	if r := m.OutputResistanceOhm; r > 0 {
		for i, u := range st.OpAmps {
			inner := ParasiticNode(u.Ref)
			aug.OpAmps[i].Out = inner
			aug.Parts = append(aug.Parts, Part{Ref: "RX" + u.Ref, Kind: Resistor, A: inner, B: u.Out,
				Value: r, Exact: r, Parasitic: true})
			if u.FullyDifferential() {
				innerN := ParasiticNodeN(u.Ref)
				aug.OpAmps[i].OutN = innerN
				aug.Parts = append(aug.Parts, Part{Ref: "RX" + u.Ref + "N", Kind: Resistor, A: innerN, B: u.OutN,
					Value: r, Exact: r, Parasitic: true})
			}
		}
	}
	return aug
}

// withParasitics is the form of WithParasitics that this package's nodal
// analyses compile, for a checked stage whose node table is t: the input
// capacitors are appended as parts (they join existing nodes, so t is
// returned unchanged), and the output resistance is left to [compile],
// which writes each op-amp's equation with the internal node eliminated:
// with I the amplifier's output current into Out, V(internal) =
// V(Out) + Ro·I, so the equation reads
//
//	(V(Out) + Ro·I)/A(s) − V(+) + V(−) = 0
//
// and the current I (an unknown already) replaces the internal node's
// voltage and balance. The circuit is the same as WithParasitics's, node
// for node (the tests compare the two), in a system smaller by one
// unknown per amplifier output, which every analysis pays for at the
// matrix size cubed.
func (st Stage) withParasitics(m Model, t *nodeTable) (Stage, *nodeTable) {
	if !(m.InputCapacitanceFarad > 0) {
		return st, t
	}
	caps := m
	caps.OutputResistanceOhm = 0
	return st.WithParasitics(caps), t
}

// validParasitics checks the model's parasitic and DC fields.
func (m Model) validParasitics() error {
	for _, f := range []struct {
		name string
		v    float64
	}{
		{"InputCapacitanceFarad", m.InputCapacitanceFarad},
		{"OutputResistanceOhm", m.OutputResistanceOhm},
		{"BiasA", math.Abs(m.BiasA)},
		{"OffsetV", math.Abs(m.OffsetV)},
	} {
		if !(f.v >= 0) || math.IsInf(f.v, 1) {
			return invalidf("model: %s %v is not finite (and, for a part, >= 0)", f.name, f.v)
		}
	}
	return nil
}
