package topology

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// Allpass and AllpassInverted are the stages of all-pass sections (kind
// allpass), which [Realize] accepts for those sections only; they are not
// among [Names], the topologies a spec may ask for. Allpass gives the
// first-order section's non-inverting form and the second-order section's
// (inverting) form; AllpassInverted the first-order section's inverting
// form, with which a chain puts its polarity right.
const (
	Allpass         = "allpass"
	AllpassInverted = "allpass-inverted"
)

// realizeAllpass builds an all-pass section: first order on one op-amp
// (inverted on request), second order on two (always inverting).
func realizeAllpass(tg target, inverted bool, o *options) (design, *Error) {
	if tg.order == 1 {
		d, e := allpassFirst(tg, o, inverted)
		if e == nil {
			d.form = "all-pass section: " + d.form
		}
		return d, e
	}
	if inverted {
		return design{}, fail(AllpassInverted, ErrNoForm, "the inverted form is first order; the second-order all-pass stage inverts already")
	}
	d, e := allpassSecond(tg, o)
	if e == nil {
		d.form = "all-pass section: " + d.form
	}
	return d, e
}

// allpassFirst realises the first-order all-pass (a − s)/(a + s), a =
// 1/(R3·C1), on one op-amp: equal resistors R1 (in–m) and R2 (m–out) make
// the op-amp's gain −1 from its input and 2 from its + input, and the +
// input takes the input through an RC lowpass, R3 (in–p), C1 (p–ground):
//
//	H = 2/(1 + s·R3·C1) − 1 = (1 − s·R3·C1)/(1 + s·R3·C1)
//
// The inverted form swaps R3 and C1 (a CR highpass into the + input):
//
//	H = 2·s·R3·C1/(1 + s·R3·C1) − 1 = −(1 − s·R3·C1)/(1 + s·R3·C1)
//
// The classic one-op-amp first-order all-pass (phase shifter), e.g. TI's
// "Op Amps for Everyone", ch. 16, first-order all-pass (from memory; the
// equations above are the nodal analysis with an ideal op-amp). R1 and R2
// are one series value, so their ratio is exact and the magnitude one at
// every frequency whatever the rounding; only a moves with the rounding of
// R3.
func allpassFirst(tg target, o *options, inverted bool) (design, *Error) {
	top := Allpass
	if inverted {
		top = AllpassInverted
	}
	var p picker
	var best struct{ c, r, x, w float64 }
	var cands [3]float64
	for _, c := range o.caps {
		x := 1 / (tg.w0 * c)
		if !o.nearR(x) {
			continue
		}
		for _, r := range cands[:o.rcands(x, &cands)] {
			w := 1 / (r * c)
			s := errScore(w, tg.w0)
			if p.wants(s) && p.take(s, o.tieLog(r)) {
				best.c, best.r, best.x, best.w = c, r, x, w
			}
		}
	}
	if !p.ok {
		return design{}, fail(top, ErrLimits, "%s", o.limitsMsg(tg.w0, "first-order all-pass, a = 1/(R3·C1)"))
	}
	b := newBuilder(o, Allpass)
	b.res(circuit.In, "m", o.rbase, o.rbase)
	b.res("m", "out", o.rbase, o.rbase)
	form := "first-order all-pass on one op-amp: equal R1, R2 set gains −1 and 2, "
	if inverted {
		b.capa(circuit.In, "p", best.c)
		b.res("p", circuit.Ground, best.r, best.x)
		form += "a CR highpass R3·C1 into the + input (inverting form: −(1 − s·R3·C1)/(1 + s·R3·C1))"
	} else {
		b.res(circuit.In, "p", best.r, best.x)
		b.capa("p", circuit.Ground, best.c)
		form += "an RC lowpass R3·C1 into the + input: (1 − s·R3·C1)/(1 + s·R3·C1)"
	}
	b.amp("p", "m", "out")
	return design{stage: b.done("out"), form: form, inverting: inverted, w0: best.w, g: 1}, nil
}

// allpassGainBandpass is the gain at f0 asked of the bandpass inside the
// second-order all-pass: 2 makes the summer's three resistors equal.
const allpassGainBandpass = 2

// allpassSecond realises the second-order all-pass
// (s² − s·ω0/Q + ω0²)/(s² + s·ω0/Q + ω0²), inverted, on two op-amps, from
// the identity A(s) = 1 − 2·T(s), T(s) = (s·ω0/Q)/(s² + s·ω0/Q + ω0²) the
// unit-peak bandpass (a closed form: 1 − 2T has the numerator D(s) −
// 2·s·ω0/Q, the denominator's mirror image). U1 is the multiple-feedback
// (Delyiannis-Friend) bandpass of this package, gain −g·T(s) with g = 2
// at f0 (within its limit Q²·(1 + Ca/Cb) for Q ≥ ½ at Ca/Cb ≥ 7); U2 sums
// the input through R4 and the bandpass through R5 into R6:
//
//	v(out) = −(R6/R4)·v(in) − (R6/R5)·v(bp) = −[1 − (R6/R5)·g·T(s)]·v(in)
//
// with R4 = R6 (one series value: an exact ratio) and R5 = R6·g/2, g the
// bandpass's gain as built, the pair R5, R6 chosen for the ratio. This
// bandpass-and-summer all-pass is the textbook construction of an
// all-pass from a bandpass (e.g. Huelsman & Allen, "Introduction to the
// Theory and Design of Active Filters", 1980, ch. on all-pass functions;
// from memory). The magnitude is one at every frequency when
// (R6/R5)·g = 2 exactly; a ratio error ε gives |H(jω0)| = 1 + 2ε.
func allpassSecond(tg target, o *options) (design, *Error) {
	// The magnitude's flatness rests on (R6/R5)·g = 2, a ratio of two
	// series values (about 2.4 % apart in E96) against the bandpass's
	// rounded gain; so the bandpass is designed for gains 2·(1 + δ), δ
	// within ±2 % in steps of 0.4 %, and the pair with the least error of
	// ω0, Q and (with weight allpassFlatWeight) of that product wins.
	// Exact values need only δ = 0.
	steps := []float64{0}
	if !o.exact {
		steps = steps[:0]
		for j := -5; j <= 5; j++ {
			steps = append(steps, 0.004*float64(j))
		}
	}
	var best struct {
		d            design
		r6, r5, r5x  float64
		score        float64
		ok           bool
		lastBPReason string
	}
	for _, dl := range steps {
		bp := target{order: 2, kind: section.Bandpass, w0: tg.w0, q: tg.q, g: allpassGainBandpass * (1 + dl)}
		d, e := mfbBandpass(bp, o)
		if e != nil {
			best.lastBPReason = e.Reason
			continue
		}
		r6, r5, r5x, ok := o.ratioPair(d.g / 2)
		if !ok {
			continue
		}
		s := errScore(d.w0, tg.w0) + errScore(d.q, tg.q) + allpassFlatWeight*errScore(r6/r5*d.g, 2)
		if !best.ok || s < best.score-tieEps {
			best.d, best.r6, best.r5, best.r5x, best.score, best.ok = d, r6, r5, r5x, s, true
		}
	}
	if !best.ok {
		if best.lastBPReason != "" {
			return design{}, fail(Allpass, ErrLimits, "the bandpass inside the all-pass: %s", best.lastBPReason)
		}
		return design{}, fail(Allpass, ErrLimits, "the summer needs R5/R6 ≈ 1, which two resistors in %s..%s cannot make", eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
	}
	d, r6, r5, r5x := best.d, best.r6, best.r5, best.r5x
	st := d.stage
	st.Topology = Allpass
	b := &builder{o: o, st: st}
	for i := range b.st.Parts {
		pt := &b.st.Parts[i]
		pt.A, pt.B = renameNode(pt.A, "out", "bp"), renameNode(pt.B, "out", "bp")
		if pt.Kind == circuit.Resistor {
			b.nr++
		} else {
			b.nc++
		}
	}
	for i := range b.st.OpAmps {
		u := &b.st.OpAmps[i]
		u.Plus, u.Minus, u.Out = renameNode(u.Plus, "out", "bp"), renameNode(u.Minus, "out", "bp"), renameNode(u.Out, "out", "bp")
		b.nu++
	}
	b.res(circuit.In, "n", r6, r6)
	b.res("bp", "n", r5, r5x)
	b.res("n", "out", r6, r6)
	b.amp(circuit.Ground, "n", "out")
	form := fmt.Sprintf("second-order all-pass on two op-amps, 1 − 2·bandpass: %s, then a summer with R4 = R6 and R5/R6 = %.4g (gain/2; |H(jω0)| = %.4g), inverting",
		d.form, r5/r6, math.Abs(1-r6/r5*d.g))
	// The reference gain is the DC gain R6/R4 = 1.
	return design{stage: b.done("out"), form: form, inverting: true, w0: d.w0, q: d.q, g: 1}, nil
}

// allpassFlatWeight weighs the all-pass's flatness, (R6/R5)·g against 2,
// in the second-order all-pass's part search, beside ω0 and Q: a ratio
// error ε moves |H(jω0)| by 2ε, while f0 and Q errors only move the delay.
const allpassFlatWeight = 16

func renameNode(n, from, to string) string {
	if n == from {
		return to
	}
	return n
}

// ratioPair returns resistors top, bottom with bottom/top as close as the
// series allows to ratio, both in the window, near its middle, and the
// exact value bottom was rounded from.
func (o *options) ratioPair(ratio float64) (top, bottom, bottomx float64, ok bool) {
	lo := max(o.rmin, o.rmin/ratio)
	hi := min(o.rmax, o.rmax/ratio)
	if !(lo <= hi*(1+winTol)) || !finite(ratio) || !(ratio > 0) {
		return 0, 0, 0, false
	}
	ideal := o.rmid / math.Sqrt(ratio)
	tx := math.Min(math.Max(ideal, lo), hi)
	if o.exact {
		return tx, ratio * tx, ratio * tx, true
	}
	var p picker
	var c [3]float64
	for t := range o.rs.Decades(max(lo, tx/3.2), min(hi, tx*3.2)) {
		x := ratio * t
		for _, v := range c[:o.rcands(x, &c)] {
			s := errScore(v/t, ratio)
			if p.wants(s) && p.take(s, o.tieLog(v)+o.tieLog(t)) {
				top, bottom, bottomx = t, v, x
			}
		}
	}
	return top, bottom, bottomx, p.ok
}
