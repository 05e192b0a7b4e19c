package circuit

import (
	"strconv"
	"strings"
)

// Out is the chain-wide name of the node that carries the filter's output:
// the output node of the last stage.
const Out = "out"

// maxLocalIndex is the largest stage-local designator number: chain-wide
// designators give it exactly two digits.
const maxLocalIndex = 99

// refLetter is the designator letter of each part kind.
func refLetter(k PartKind) (byte, bool) {
	switch k {
	case Resistor:
		return 'R', true
	case Capacitor:
		return 'C', true
	}
	return 0, false
}

// parseLocalRef splits a stage-local designator such as "R3" into its
// letter and number. It accepts exactly one of the letters R, C, U followed
// by a decimal number 1..99 without leading zeros, and for R and C an
// optional half suffix A or B (the two halves of a fully differential
// stage: "R3A", "R3B").
func parseLocalRef(local string) (letter byte, index int, ok bool) {
	letter, index, _, ok = parseLocalRefHalf(local)
	return letter, index, ok
}

// parseLocalRefHalf is parseLocalRef that also returns the half suffix
// ("A", "B" or "").
func parseLocalRefHalf(local string) (letter byte, index int, half string, ok bool) {
	if n := len(local); n >= 3 && (local[n-1] == 'A' || local[n-1] == 'B') && (local[0] == 'R' || local[0] == 'C') {
		half = local[n-1:]
		local = local[:n-1]
	}
	if len(local) < 2 || len(local) > 3 {
		return 0, 0, "", false
	}
	letter = local[0]
	if letter != 'R' && letter != 'C' && letter != 'U' {
		return 0, 0, "", false
	}
	digits := local[1:]
	if digits[0] == '0' {
		return 0, 0, "", false
	}
	for i := 0; i < len(digits); i++ {
		if digits[i] < '0' || digits[i] > '9' {
			return 0, 0, "", false
		}
	}
	n, err := strconv.Atoi(digits)
	if err != nil || n < 1 || n > maxLocalIndex {
		return 0, 0, "", false
	}
	return letter, n, half, true
}

// Ref returns the chain-wide designator of the part or op-amp whose
// stage-local designator is local in stage number stage (1-based): the
// letter, the stage number and the local number in two digits, then the
// half suffix of a fully differential stage's part, so "R3" in stage 1 is
// "R103", "C1" in stage 12 is "C1201", "R2B" in stage 3 is "R302B" and
// "U1" in stage 2 is "U201". These are the designators of the bill of
// materials and of the SPICE deck, except that an op-amp is a subcircuit
// instance in the deck and carries SPICE's X prefix there: U201 is the
// element XU201 (see [SpiceName]).
//
// Ref returns "" when stage is not a stage of c or local is not a letter R,
// C or U followed by a number 1..99 (and, for R and C, an optional A or
// B); [Chain.Validate] reports such refs.
func (c Chain) Ref(stage int, local string) string {
	if stage < 1 || stage > len(c.Stages) {
		return ""
	}
	return globalRef(stage, local)
}

// globalRef is [Chain.Ref] without the stage range check.
func globalRef(stage int, local string) string {
	letter, n, half, ok := parseLocalRefHalf(local)
	if !ok || stage < 1 {
		return ""
	}
	var b strings.Builder
	b.WriteByte(letter)
	b.WriteString(strconv.Itoa(stage))
	if n < 10 {
		b.WriteByte('0')
	}
	b.WriteString(strconv.Itoa(n))
	b.WriteString(half)
	return b.String()
}

// SpiceName returns the name of the SPICE deck element for the chain-wide
// designator ref: ref itself for resistors and capacitors, and "X" + ref
// for op-amps (designators starting with U), which the deck instantiates
// as subcircuits.
func SpiceName(ref string) string {
	if strings.HasPrefix(ref, "U") {
		return "X" + ref
	}
	return ref
}

// Node returns the chain-wide name of the stage-local node local of stage
// number stage (1-based): [Ground] stays "0"; [In] is the output node of
// the previous stage, or "in" for the first stage ("inp" when the first
// stage is differentially driven, see [InP]); [InN] is the previous
// stage's negative output, or "inn" for the first stage; the output node
// of the last stage is [Out] ("out"), or [OutP] ("outp") and [OutNNode]
// ("outn") for its two outputs when it is differential; every other node
// n of stage k is "s{k}_n", e.g. "s2_n1".
//
// Node returns "" when stage is not a stage of c or local is empty.
func (c Chain) Node(stage int, local string) string {
	if stage < 1 || stage > len(c.Stages) || local == "" {
		return ""
	}
	st := c.Stages[stage-1]
	switch {
	case local == Ground:
		return Ground
	case local == In:
		if stage == 1 {
			if st.DiffIn {
				return InP
			}
			return In
		}
		return c.stageOut(stage - 1)
	case local == InN && st.DiffIn:
		if stage == 1 {
			return InN
		}
		return c.stageOutN(stage - 1)
	case local == st.Out:
		return c.stageOut(stage)
	case st.Differential() && local == st.OutN:
		return c.stageOutN(stage)
	}
	return "s" + strconv.Itoa(stage) + "_" + local
}

// Chain-wide node names of a differential chain's deck: the source's two
// halves and the last stage's two outputs.
const (
	// InP is the first stage's positive input when the source is
	// differential: +½ of the source on node in.
	InP = "inp"
	// OutP and OutNNode are the last differential stage's outputs; the
	// deck's out is v(outp) − v(outn).
	OutP     = "outp"
	OutNNode = "outn"
)

// Differential reports whether the chain's output is differential (its
// last stage's).
func (c Chain) Differential() bool {
	return len(c.Stages) > 0 && c.Stages[len(c.Stages)-1].Differential()
}

// stageOut is the chain-wide name of stage k's output node.
func (c Chain) stageOut(k int) string {
	if k == len(c.Stages) {
		if c.Stages[k-1].Differential() {
			return OutP
		}
		return Out
	}
	return "s" + strconv.Itoa(k) + "_" + c.Stages[k-1].Out
}

// stageOutN is the chain-wide name of differential stage k's negative
// output node.
func (c Chain) stageOutN(k int) string {
	if k == len(c.Stages) {
		return OutNNode
	}
	return "s" + strconv.Itoa(k) + "_" + c.Stages[k-1].OutN
}

// validNodeName reports whether a stage-local node name is usable in the
// deck: ASCII letters, digits and underscores.
func validNodeName(n string) bool {
	if n == "" {
		return false
	}
	for i := 0; i < len(n); i++ {
		ch := n[i]
		switch {
		case ch >= 'a' && ch <= 'z', ch >= 'A' && ch <= 'Z', ch >= '0' && ch <= '9', ch == '_':
		default:
			return false
		}
	}
	return true
}
