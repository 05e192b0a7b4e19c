package circuit

import (
	"strconv"
)

// Stage-local node names of a conversion appended by
// [Stage.WithConversion], before the half suffixes "a" and "b": the FDA's
// input (summing) node and its output.
const (
	convSum = "cvm"
	convOut = "cvo"
)

// WithConversion returns the single-ended stage st followed by a
// single-ended to differential conversion: a fully differential op-amp
// with an input resistor and a feedback resistor of equal value in each
// half ([Stage.ToFullyDifferential] of a unity-gain inverter), half A's
// input on st's output and half B's on the reference. The new stage's Out
// and OutN are the FDA's outputs, so that its transfer (to V(Out) −
// V(OutN)) is −1 times st's. r gives the resistors' Value, Exact, Series
// and TolerancePct; their designators are the next two free R numbers
// (with the half suffixes A and B), the FDA's the next free U number.
//
// It returns an error wrapping [ErrInvalid] when st is not valid, is
// differential, takes a differential input or carries a converter
// driver, or when the designators would pass 99.
func (st Stage) WithConversion(r Part) (Stage, error) {
	if err := st.Validate(); err != nil {
		return Stage{}, err
	}
	if st.Differential() || st.DiffIn || st.HasDriver() {
		return Stage{}, invalidf("conversion: the stage is not a single-ended stage without a driver")
	}
	nextR, nextU := 1, 1
	for _, p := range st.Parts {
		if letter, n, _, ok := parseLocalRefHalf(p.Ref); ok && letter == 'R' && n >= nextR {
			nextR = n + 1
		}
	}
	for _, u := range st.OpAmps {
		if _, n, ok := parseLocalRef(u.Ref); ok && n >= nextU {
			nextU = n + 1
		}
	}
	if nextR+1 > maxLocalIndex || nextU > maxLocalIndex {
		return Stage{}, invalidf("conversion: no free designators")
	}
	rin, rf := r, r
	rin.Ref, rin.Kind, rin.A, rin.B = "R"+strconv.Itoa(nextR), Resistor, In, convSum
	rf.Ref, rf.Kind, rf.A, rf.B = "R"+strconv.Itoa(nextR+1), Resistor, convSum, convOut
	rin.Parasitic, rin.Driver, rf.Parasitic, rf.Driver = false, false, false, false
	inv := Stage{Topology: st.Topology, Parts: []Part{rin, rf},
		OpAmps: []OpAmp{{Ref: "U" + strconv.Itoa(nextU), Plus: Ground, Minus: convSum, Out: convOut}}, Out: convOut}
	fd, err := inv.ToFullyDifferential(false)
	if err != nil {
		return Stage{}, err
	}
	out := st
	out.Parts = make([]Part, 0, len(st.Parts)+len(fd.Parts))
	out.Parts = append(out.Parts, st.Parts...)
	for _, p := range fd.Parts {
		if p.A == In {
			p.A = st.Out
		}
		if p.B == In {
			p.B = st.Out
		}
		out.Parts = append(out.Parts, p)
	}
	out.OpAmps = append(append(make([]OpAmp, 0, len(st.OpAmps)+1), st.OpAmps...), fd.OpAmps...)
	out.Out, out.OutN = fd.Out, fd.OutN
	if err := out.Validate(); err != nil {
		return Stage{}, err
	}
	return out, nil
}

// SplitConversion splits a stage built by [Stage.WithConversion] (its
// outputs possibly crossed, see [Stage.CrossOutputs]) into its
// single-ended section (Out the node the conversion takes) and the
// conversion as a stage of its own (the form [Stage.ToFullyDifferential]
// builds for a single-ended input: half A's input on In, half B's on
// Ground). ok is false for any other stage, a fully differential stage of
// one FDA among them.
func (st Stage) SplitConversion() (se, conv Stage, ok bool) {
	if !st.Differential() || st.DiffIn || len(st.OpAmps) < 2 {
		return Stage{}, Stage{}, false
	}
	fda := -1
	for i, u := range st.OpAmps {
		if u.FullyDifferential() {
			if fda >= 0 {
				return Stage{}, Stage{}, false
			}
			fda = i
		}
	}
	if fda < 0 {
		return Stage{}, Stage{}, false
	}
	u := st.OpAmps[fda]
	// The conversion's input: a single-ended op-amp's output that a half
	// A part touches.
	seOut := map[string]bool{}
	for i, v := range st.OpAmps {
		if i != fda {
			seOut[v.Out] = true
		}
	}
	x := ""
	for _, p := range st.Parts {
		if HalfOf(p.Ref) != HalfA {
			continue
		}
		for _, n := range []string{p.A, p.B} {
			if seOut[n] {
				if x != "" && x != n {
					return Stage{}, Stage{}, false
				}
				x = n
			}
		}
	}
	if x == "" {
		return Stage{}, Stage{}, false
	}
	se = Stage{Topology: st.Topology, Out: x}
	conv = Stage{Topology: st.Topology, Out: st.Out, OutN: st.OutN, OpAmps: []OpAmp{u}}
	for i, v := range st.OpAmps {
		if i != fda {
			se.OpAmps = append(se.OpAmps, v)
		}
	}
	for _, p := range st.Parts {
		if HalfOf(p.Ref) == "" {
			se.Parts = append(se.Parts, p)
			continue
		}
		if p.A == x {
			p.A = In
		}
		if p.B == x {
			p.B = In
		}
		conv.Parts = append(conv.Parts, p)
	}
	if se.Validate() != nil || conv.Validate() != nil {
		return Stage{}, Stage{}, false
	}
	return se, conv, true
}
