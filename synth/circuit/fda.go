package circuit

import "slices"

// Half suffixes of a fully differential stage's parts and nodes: the
// half driven from In (A) and the half driven from InN (B).
const (
	HalfA = "A"
	HalfB = "B"
)

// ToFullyDifferential returns the fully differential form of a stage of
// one op-amp whose non-inverting input is Ground (an inverting stage:
// multiple-feedback, inverting RC): two halves with the same part values
// around one fully differential op-amp. Half A is st with each part's
// designator suffixed A ("R1A") and each node n other than In and Ground
// renamed n+"a"; half B is the same with B, "b", and In replaced by
// [InN] (diffIn) or by Ground (a single-ended input: half B's input is
// the reference, so the stage converts a single-ended signal to a
// differential one). The op-amp's Minus is half A's copy of st's Minus,
// its Plus half B's, its Out and OutN the halves' copies of st's Out,
// which are the stage's Out and OutN.
//
// By symmetry (the bisection theorem: with matched halves a differential
// drive leaves the midline at the reference) each half then behaves as
// st with its op-amp's + input at the reference, for the ideal and for
// the single-pole model alike (V(Out) = −½·A·2·V(Minus) per half), so
// V(Out) − V(OutN) = H(s)·(V(In) − V(InN)) with H the transfer of st.
// The stage's section order, and so its design, is st's.
//
// It returns an error wrapping [ErrInvalid] when st is not valid, has a
// converter driver, or does not have exactly one op-amp with Plus at
// Ground and Out the stage's output.
func (st Stage) ToFullyDifferential(diffIn bool) (Stage, error) {
	if err := st.Validate(); err != nil {
		return Stage{}, err
	}
	if len(st.OpAmps) != 1 || st.OpAmps[0].Plus != Ground || st.OpAmps[0].Out != st.Out || st.OpAmps[0].FullyDifferential() || st.HasDriver() || st.DiffIn {
		return Stage{}, invalidf("fully differential form: the stage is not one inverting op-amp (+ input at ground) driving its output")
	}
	rename := func(n, half string) string {
		switch n {
		case Ground:
			return Ground
		case In:
			if half == HalfA {
				return In
			}
			if diffIn {
				return InN
			}
			return Ground
		}
		if half == HalfA {
			return n + "a"
		}
		return n + "b"
	}
	out := Stage{Topology: st.Topology, DiffIn: diffIn, Parts: make([]Part, 0, 2*len(st.Parts))}
	for _, half := range []string{HalfA, HalfB} {
		for _, p := range st.Parts {
			q := p
			q.Ref = p.Ref + half
			q.A, q.B = rename(p.A, half), rename(p.B, half)
			if q.A == q.B { // both ends at ground: a part across the reference
				continue
			}
			out.Parts = append(out.Parts, q)
		}
	}
	u := st.OpAmps[0]
	out.OpAmps = []OpAmp{{Ref: u.Ref, Plus: rename(u.Minus, HalfB), Minus: rename(u.Minus, HalfA),
		Out: rename(u.Out, HalfA), OutN: rename(u.Out, HalfB)}}
	out.Out, out.OutN = out.OpAmps[0].Out, out.OpAmps[0].OutN
	if err := out.Validate(); err != nil {
		return Stage{}, err
	}
	return out, nil
}

// SingleEndedInput returns a differentially driven stage built by
// [Stage.ToFullyDifferential] with half B's input moved from [InN] to
// Ground and DiffIn cleared: the first stage of a chain whose source is
// single-ended. It returns st itself when st has no DiffIn.
func (st Stage) SingleEndedInput() Stage {
	if !st.DiffIn {
		return st
	}
	out := st
	out.DiffIn = false
	out.Parts = slices.Clone(st.Parts)
	for i := range out.Parts {
		p := &out.Parts[i]
		if p.A == InN {
			p.A = Ground
		}
		if p.B == InN {
			p.B = Ground
		}
	}
	return out
}

// HalfOf returns the half suffix ([HalfA], [HalfB]) of a stage-local
// designator of a fully differential stage's part, or "".
func HalfOf(local string) string {
	_, _, half, _ := parseLocalRefHalf(local)
	return half
}

// CrossOutputs returns a differential stage with its outputs taken
// crossed (Out and OutN swapped): the stage's transfer changes sign, which
// a differential signal's polarity allows for free. It returns st itself
// for a stage that is not differential.
func (st Stage) CrossOutputs() Stage {
	if !st.Differential() {
		return st
	}
	out := st
	out.Out, out.OutN = st.OutN, st.Out
	return out
}

// inputEnds returns, for a differential stage built by
// [Stage.ToFullyDifferential], the indices of half B's parts whose input
// end is InN (DiffIn) or, on a conversion stage ([Stage.SingleEndedInput]),
// Ground where the half A twin touches In, with which end (0: A, 1: B).
func (st Stage) inputEnds() (idx []int, end []int) {
	twinOnIn := map[string]bool{}
	for _, p := range st.Parts {
		if HalfOf(p.Ref) == HalfA && (p.A == In || p.B == In) {
			twinOnIn[p.Ref[:len(p.Ref)-1]] = true
		}
	}
	for i, p := range st.Parts {
		if HalfOf(p.Ref) != HalfB {
			continue
		}
		for e, n := range []string{p.A, p.B} {
			if n == InN || !st.DiffIn && n == Ground && twinOnIn[p.Ref[:len(p.Ref)-1]] {
				idx, end = append(idx, i), append(end, e)
			}
		}
	}
	return idx, end
}

// InputModes returns a differential stage driven differentially (In at
// +½, InN at −½ of the source: the differential gain) and driven in
// common mode (both halves' inputs on In: the common-mode to differential
// conversion), whatever its own input (DiffIn, or a conversion stage's
// half B input on Ground). With matched halves the second's transfer is
// zero; mismatch makes it the share of a common-mode input that reaches
// the differential output. It returns an error wrapping [ErrInvalid] for
// a stage that is not differential or whose half B has no input part.
func (st Stage) InputModes() (diff, common Stage, err error) {
	if !st.Differential() {
		return Stage{}, Stage{}, invalidf("input modes: the stage is not differential")
	}
	idx, end := st.inputEnds()
	if len(idx) == 0 {
		return Stage{}, Stage{}, invalidf("input modes: half B has no input part")
	}
	diff, common = st, st
	diff.Parts, common.Parts = slices.Clone(st.Parts), slices.Clone(st.Parts)
	diff.DiffIn, common.DiffIn = true, false
	for k, i := range idx {
		for _, c := range []struct {
			parts []Part
			node  string
		}{{diff.Parts, InN}, {common.Parts, In}} {
			if end[k] == 0 {
				c.parts[i].A = c.node
			} else {
				c.parts[i].B = c.node
			}
		}
	}
	return diff, common, nil
}

// matchedHalf returns half A of a differential stage whose two halves
// are matched (the form [Stage.ToFullyDifferential] builds: every part of
// half B the mirror of its half A twin, same kind and value, the FDA's
// inputs and outputs mirrored), as the single-op-amp stage whose
// op-amp's + input is at the reference, and the sign of the stage's
// transfer relative to that half's (−1 when the outputs are crossed).
// By the bisection theorem the stage's differential transfer is then
// sign times the half's, exactly, for the ideal and the single-pole model
// and with the model's parasitics (each half carries its own), while the
// common-mode input of a conversion stage does not reach the output. ok is
// false for any stage not of that form, or with a mismatch.
func (st Stage) matchedHalf() (half Stage, sign float64, ok bool) {
	if !st.Differential() || len(st.OpAmps) != 1 || st.HasDriver() {
		return Stage{}, 0, false
	}
	u := st.OpAmps[0]
	if !u.FullyDifferential() {
		return Stage{}, 0, false
	}
	mirror := func(n string) string {
		switch {
		case n == Ground:
			return Ground
		case n == In && st.DiffIn:
			return InN
		case n == In:
			return Ground
		case len(n) > 1 && n[len(n)-1] == 'a':
			return n[:len(n)-1] + "b"
		}
		return "" // not a half A node
	}
	if mirror(u.Minus) != u.Plus || mirror(u.Out) != u.OutN {
		return Stage{}, 0, false
	}
	switch {
	case st.Out == u.Out && st.OutN == u.OutN:
		sign = 1
	case st.Out == u.OutN && st.OutN == u.Out:
		sign = -1
	default:
		return Stage{}, 0, false
	}
	n := len(st.Parts)
	if n%2 != 0 {
		return Stage{}, 0, false
	}
	half = Stage{Topology: st.Topology, Parts: make([]Part, 0, n/2), Out: u.Out,
		OpAmps: []OpAmp{{Ref: u.Ref, Plus: Ground, Minus: u.Minus, Out: u.Out}}}
	for _, p := range st.Parts {
		if HalfOf(p.Ref) != HalfA {
			continue
		}
		base := p.Ref[:len(p.Ref)-1]
		i := slices.IndexFunc(st.Parts, func(q Part) bool { return q.Ref == base+HalfB })
		if i < 0 {
			return Stage{}, 0, false
		}
		q := st.Parts[i]
		if q.Kind != p.Kind || q.Value != p.Value || q.Parasitic || p.Parasitic {
			return Stage{}, 0, false
		}
		ma, mb := mirror(p.A), mirror(p.B)
		if !(q.A == ma && q.B == mb || q.A == mb && q.B == ma) || ma == "" || mb == "" {
			return Stage{}, 0, false
		}
		half.Parts = append(half.Parts, p)
	}
	if 2*len(half.Parts) != n {
		return Stage{}, 0, false
	}
	return half, sign, true
}
