package topology

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// isOne reports whether a gain is unity to within rounding.
func isOne(g float64) bool { return math.Abs(g-1) <= 1e-9 }

// amplifier is the non-inverting gain K = 1 + Rf/Rg of a stage's output
// op-amp: a follower when K = 1.
type amplifier struct {
	k, rf, rg, rfx, rgx float64
}

// newAmplifier returns the realised amplifier for the wanted gain k ≥ 1.
func newAmplifier(top string, o *options, k float64) (amplifier, *Error) {
	if isOne(k) || k < 1 {
		return amplifier{k: 1}, nil
	}
	rf, rg, rfx, rgx, ok := o.gainPair(k)
	if !ok {
		return amplifier{}, fail(top, ErrLimits, "gain %.4g needs Rf/Rg = %.4g, which two resistors in %s..%s cannot make",
			k, k-1, eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
	}
	return amplifier{k: 1 + rf/rg, rf: rf, rg: rg, rfx: rfx, rgx: rgx}, nil
}

// gainSplit returns the amplifier a stage with a resistive input divider
// uses for the reference gain g > 0, and the divider ratio α = g/K ≤ 1
// before it (1: no divider):
//
//   - g ≤ 1: a follower, α = g;
//   - g > 1: K = g, α = 1, when Rf/Rg = g − 1 fits the resistor window;
//   - 1 < g < 2 with g − 1 too small a ratio for two resistors in the
//     window (below MinOhm/MaxOhm): K = g·(1 + δ), δ = √(MinOhm/MaxOhm),
//     and α = g/K, so that Rf/Rg ≥ δ and the divider's ratio 1/δ both lie
//     in the middle of the window's ratios (about 15 by default); the
//     divider gives back the extra gain exactly.
//
// α is computed from the realised K, so that the divider makes up any
// rounding of Rf/Rg.
func gainSplit(top string, o *options, g float64) (amplifier, float64, *Error) {
	switch {
	case isOne(g):
		return amplifier{k: 1}, 1, nil
	case g < 1:
		return amplifier{k: 1}, g, nil
	}
	amp, e := newAmplifier(top, o, g)
	if e == nil {
		return amp, 1, nil
	}
	if g >= 2 {
		return amplifier{}, 1, e // too much gain: a divider cannot help
	}
	d := math.Sqrt(o.rmin / o.rmax)
	amp, e2 := newAmplifier(top, o, g*(1+d))
	if e2 != nil || !(g < amp.k) {
		return amplifier{}, 1, e
	}
	return amp, g / amp.k, nil
}

// add wires the op-amp with its input at plus and its output at out; the
// gain resistors (Rf from out to m, Rg from m to ground) when K > 1.
func (a amplifier) add(b *builder, plus, out string) {
	if a.rf == 0 {
		b.amp(plus, out, out)
		return
	}
	b.res(out, "m", a.rf, a.rfx)
	b.res("m", circuit.Ground, a.rg, a.rgx)
	b.amp(plus, "m", out)
}

// rcBuffer realises a first-order section as an RC (lowpass) or CR
// (highpass) network followed by a non-inverting op-amp.
//
// Lowpass: R1 from in to p, C1 from p to ground, ω0 = 1/(R1·C1). A gain
// g < 1 splits R1 into a divider R1 (in–p), R2 (p–ground) with Thevenin
// equivalent R1‖R2 = R and ratio R2/(R1 + R2) = g, so R1 = R/g and
// R2 = R/(1 − g): the time constant is kept and the gain set by resistors.
//
// Highpass: C1 from in to a, R from a to ground, ω0 = 1/(R·C1). A gain
// g < 1 taps R: R1 from a to p and R2 from p to ground with
// R1 + R2 = R and R2/(R1 + R2) = g; the buffer reads the tap. (Splitting C1
// into a capacitive divider instead would tie the gain to a ratio of two
// capacitor series values, which cannot be made exact.)
//
// A gain g > 1 in either is the non-inverting amplifier g = 1 + Rf/Rg;
// just above one, where Rf/Rg = g − 1 is too small a ratio for the
// window, a larger K with the divider ([gainSplit]).
// These are the elementary RC circuits of any text, e.g. Williams & Taylor,
// "Electronic Filter Design Handbook", ch. 3 (from memory).
func rcBuffer(tg target, o *options) (design, *Error) {
	if tg.order != 1 {
		return design{}, fail(RCBuffer, ErrNoForm, "a first-order stage; no form for a second-order %s section", tg.kind)
	}
	amp, alpha, e := gainSplit(RCBuffer, o, tg.g)
	if e != nil {
		return design{}, e
	}
	lp := tg.kind == section.Lowpass
	var p picker
	var best struct{ c, r1, r2, r1x, r2x, w, g float64 }
	var ca, cb [3]float64
	for _, c := range o.caps {
		rx := 1 / (tg.w0 * c)
		if !o.nearR(rx) && alpha == 1 {
			continue
		}
		var x1, x2 float64
		switch {
		case alpha == 1:
			x1 = rx
		case lp:
			x1, x2 = rx/alpha, rx/(1-alpha)
		default:
			x1, x2 = rx*(1-alpha), rx*alpha
		}
		n1 := o.rcands(x1, &ca)
		n2 := 1
		if alpha < 1 {
			n2 = o.rcands(x2, &cb)
		}
		for _, r1 := range ca[:n1] {
			for j := range n2 {
				r2 := cb[j]
				var rt, a float64
				switch {
				case alpha == 1:
					rt, a, r2 = r1, 1, 0
				case lp:
					rt, a = r1*r2/(r1+r2), r2/(r1+r2)
				default:
					rt, a = r1+r2, r2/(r1+r2)
				}
				w := 1 / (rt * c)
				g := a * amp.k
				s := errScore(w, tg.w0) + errScore(g, tg.g)
				if !p.wants(s) {
					continue
				}
				tie := o.tieLog(r1)
				if r2 > 0 {
					tie += o.tieLog(r2)
				}
				if p.take(s, tie) {
					best.c, best.r1, best.r2, best.r1x, best.r2x, best.w, best.g = c, r1, r2, x1, x2, w, g
				}
			}
		}
	}
	if !p.ok {
		what := ""
		if alpha < 1 {
			what = fmt.Sprintf("gain %.4g by a resistive divider", tg.g)
		}
		return design{}, fail(RCBuffer, ErrLimits, "%s", o.limitsMsg(tg.w0, what))
	}
	b := newBuilder(o, RCBuffer)
	var form string
	plus := "p"
	switch {
	case lp:
		form = "RC lowpass"
		b.res(circuit.In, "p", best.r1, best.r1x)
		if best.r2 > 0 {
			b.res("p", circuit.Ground, best.r2, best.r2x)
			form = fmt.Sprintf("RC lowpass with its resistor split into a divider for gain %.4g", best.g)
		}
		b.capa("p", circuit.Ground, best.c)
	case best.r2 > 0:
		b.capa(circuit.In, "a", best.c)
		b.res("a", "p", best.r1, best.r1x)
		b.res("p", circuit.Ground, best.r2, best.r2x)
		form = fmt.Sprintf("CR highpass with its resistor tapped for gain %.4g", best.g)
	default:
		plus = "a"
		b.capa(circuit.In, "a", best.c)
		b.res("a", circuit.Ground, best.r1, best.r1x)
		form = "CR highpass"
	}
	if amp.rf != 0 {
		form += fmt.Sprintf(", then a non-inverting gain 1 + Rf/Rg = %.4g", amp.k)
	} else {
		form += ", then a follower"
	}
	amp.add(b, plus, "out")
	return design{stage: b.done("out"), form: form, w0: best.w, g: best.g}, nil
}

// invertingRC realises a first-order section with one inverting op-amp
// (non-inverting input grounded, virtual ground at m):
//
//	lowpass:  R1 (in–m), R2 ‖ C1 (m–out):  H = −(R2/R1)/(1 + s·R2·C1)
//	highpass: C1 + R1 in series (in–a–m), R2 (m–out):
//	          H = −(R2/R1)·s·R1·C1/(1 + s·R1·C1)
//
// The textbook inverting integrator and differentiator with their
// limiting resistors, e.g. Williams & Taylor, ch. 3 (from memory).
func invertingRC(tg target, o *options) (design, *Error) {
	if tg.order != 1 {
		return design{}, fail(InvertingRC, ErrNoForm, "a first-order stage; no form for a second-order %s section", tg.kind)
	}
	lp := tg.kind == section.Lowpass
	var p picker
	var best struct{ c, r1, r2, r1x, r2x, w, g float64 }
	var ca, cb [3]float64
	for _, c := range o.caps {
		rt := 1 / (tg.w0 * c) // the resistor that sets the time constant
		if !o.nearR(rt) {
			continue
		}
		var x1, x2 float64 // R1 (input), R2 (feedback)
		if lp {
			x2, x1 = rt, rt/tg.g
		} else {
			x1, x2 = rt, rt*tg.g
		}
		n1, n2 := o.rcands(x1, &ca), o.rcands(x2, &cb)
		for _, r1 := range ca[:n1] {
			for _, r2 := range cb[:n2] {
				w := 1 / (r1 * c)
				if lp {
					w = 1 / (r2 * c)
				}
				g := r2 / r1
				s := errScore(w, tg.w0) + errScore(g, tg.g)
				if p.wants(s) && p.take(s, o.tieLog(r1)+o.tieLog(r2)) {
					best.c, best.r1, best.r2, best.r1x, best.r2x, best.w, best.g = c, r1, r2, x1, x2, w, g
				}
			}
		}
	}
	if !p.ok {
		return design{}, fail(InvertingRC, ErrLimits, "%s", o.limitsMsg(tg.w0, fmt.Sprintf("gain %.4g = R2/R1", tg.g)))
	}
	b := newBuilder(o, InvertingRC)
	var form string
	if lp {
		b.res(circuit.In, "m", best.r1, best.r1x)
		b.res("m", "out", best.r2, best.r2x)
		b.capa("m", "out", best.c)
		form = fmt.Sprintf("inverting lowpass, gain −R2/R1 = −%.4g, pole R2·C1", best.g)
	} else {
		b.capa(circuit.In, "a", best.c)
		b.res("a", "m", best.r1, best.r1x)
		b.res("m", "out", best.r2, best.r2x)
		form = fmt.Sprintf("inverting highpass, gain −R2/R1 = −%.4g, pole R1·C1", best.g)
	}
	b.amp(circuit.Ground, "m", "out")
	return design{stage: b.done("out"), form: form, inverting: true, w0: best.w, g: best.g}, nil
}
