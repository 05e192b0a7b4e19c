package topology

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// sallenKey realises a second-order lowpass or highpass as a Sallen-Key
// (voltage-controlled voltage source) stage with one non-inverting op-amp
// of gain K = 1 + Rf/Rg (a follower when K = 1).
//
// Lowpass: R1 (in–a), R2 (a–p), C1 (a–out, the feedback capacitor),
// C2 (p–ground):
//
//	H = K / (1 + s·[(R1 + R2)·C2 + (1 − K)·R1·C1] + s²·R1·R2·C1·C2)
//	ω0² = 1/(R1·R2·C1·C2),  1/Q = ω0·[(R1 + R2)·C2 + (1 − K)·R1·C1]
//
// Given C1, C2 and K, R1 solves [C2 + (1 − K)·C1]·R1² − R1/(Q·ω0) +
// 1/(ω0²·C1) = 0 and R2 = 1/(ω0²·C1·C2·R1). At K = 1 a real solution
// needs C1/C2 ≥ 4Q², with R1 = R2 at equality; for K > 1 it needs
// C2/C1 ≤ 1/(4Q²) + K − 1. The equal-component design (R1 = R2, C1 = C2)
// has K = 3 − 1/Q, Rf/Rg = 2 − 1/Q. These are the equations of TI
// "Active Low-Pass Filter Design" (SLOA049) and of Analog Devices'
// "Analog Filters" chapter (MT-220 series) of the Op Amp Applications
// Handbook, whose general-K procedure (m = 1/(4Q²) + K − 1, C2 = m·C1,
// R1 = 2Q/(ω0·C1), R2 = 1/(2Q·m·ω0·C1)) is the double root of the
// quadratic above; from memory.
//
// Highpass: C1 (in–a), C2 (a–p), R1 (a–out, the feedback resistor),
// R2 (p–ground):
//
//	H = K·s² / (s² + s·[(C1 + C2)/(R2·C1·C2) + (1 − K)/(R1·C1)] + ω0²)
//	ω0² = 1/(R1·R2·C1·C2)
//
// Given C1, C2 and K, R2 solves (1 − K)·ω0²·C2·R2² − (ω0/Q)·R2 +
// (C1 + C2)/(C1·C2) = 0, which has one positive root for every K ≥ 1; at
// K = 1 and C1 = C2 = C, R2 = 2Q/(ω0·C) and R1 = 1/(2Q·ω0·C) (the same
// sources, from memory).
//
// A section gain g below K uses an input divider that keeps ω0 and Q: for
// the lowpass R1 is split into R1/α (in–a) and R1/(1 − α) (a–ground),
// α = g/K, whose Thevenin equivalent is R1 with source α·Vin; for the
// highpass C1 is split into α·C1 (in–a) and (1 − α)·C1 (a–ground). Both
// capacitors of the highpass divider are series values, so α can only be
// approached from below; K = g/α ≥ 1 then makes up the rest with Rf/Rg so
// that the gain stays exact.
func sallenKey(tg target, o *options) (design, *Error) {
	if tg.order != 2 {
		return design{}, fail(SallenKey, ErrNoForm, "a second-order stage; no form for a first-order %s section (use rc-buffer or inverting-rc)", tg.kind)
	}
	switch tg.kind {
	case section.Lowpass:
		return skLowpass(tg, o)
	case section.Highpass:
		return skHighpass(tg, o)
	}
	return design{}, fail(SallenKey, ErrNoForm, "no %s form (lowpass and highpass only)", tg.kind)
}

// skReject collects why candidates were rejected, for the error message.
type skReject struct {
	minSens float64 // lowest Q sensitivity among candidates rejected for it
	sens    int
}

func (r *skReject) sensitivity(s float64) {
	if r.sens == 0 || s < r.minSens {
		r.minSens = s
	}
	r.sens++
}

func skLowpass(tg target, o *options) (design, *Error) {
	q2 := 4 * tg.q * tg.q
	if tg.g <= 1 || isOne(tg.g) {
		spread := o.caps[len(o.caps)-1] / o.caps[0]
		if q2 > spread*(1+winTol) {
			return design{}, fail(SallenKey, ErrLimits, "unity-gain lowpass needs C1/C2 ≥ 4Q² = %.4g but the capacitor window %s..%s with %s allows at most %.4g",
				q2, eng(o.cmin, "F"), eng(o.cmax, "F"), o.cs, spread)
		}
		alpha := tg.g
		if isOne(alpha) {
			alpha = 1
		}
		d, rej, ok := skLowpassSearch(tg, o, amplifier{k: 1}, alpha, false)
		if !ok {
			return design{}, fail(SallenKey, ErrLimits, "unity gain, C1/C2 ≥ 4Q² = %.4g: %s", q2, o.rejectMsg(tg.w0, rej))
		}
		d.form = fmt.Sprintf("unity gain (K = 1), C1/C2 = %.3g ≥ 4Q² = %.3g", d.c1c2, q2)
		if alpha < 1 {
			d.form += fmt.Sprintf(", input resistor split into a divider for gain %.4g", tg.g)
		}
		return d.design, nil
	}

	// g > 1: general K = g, else equal-component with a divider.
	amp, e := newAmplifier(SallenKey, o, tg.g)
	if e != nil {
		return design{}, e
	}
	d, rej, ok := skLowpassSearch(tg, o, amp, 1, false)
	if ok {
		d.form = fmt.Sprintf("gain K = 1 + Rf/Rg = %.4g, Q sensitivity to the gain resistors %.2g ≤ %d", amp.k, d.sens, MaxGainSensitivity)
		return d.design, nil
	}
	msg := fmt.Sprintf("gain %.4g as K = 1 + Rf/Rg: %s", tg.g, o.rejectMsg(tg.w0, rej))
	keq := 3 - 1/tg.q
	if tg.g <= keq {
		amp, e := newAmplifier(SallenKey, o, keq)
		if e == nil {
			alpha := tg.g / amp.k
			if alpha > 1-1e-3 { // g is K to rounding: no divider
				alpha = 1
			}
			d, rej2, ok := skLowpassSearch(tg, o, amp, alpha, true)
			if ok {
				d.form = fmt.Sprintf("equal-component (R1 ≈ R2, C1 = C2), K = 3 − 1/Q = %.4g, Q sensitivity to the gain resistors %.2g", amp.k, d.sens)
				if alpha < 1 {
					d.form += fmt.Sprintf(", input resistor split into a divider for gain %.4g", tg.g)
				}
				return d.design, nil
			}
			msg += fmt.Sprintf("; equal-component K = %.4g: %s", keq, o.rejectMsg(tg.w0, rej2))
		}
	}
	return design{}, fail(SallenKey, ErrLimits, "%s", msg)
}

// rejectMsg explains a Sallen-Key search that found nothing.
func (o *options) rejectMsg(w0 float64, r skReject) string {
	if r.sens > 0 {
		return fmt.Sprintf("Q sensitivity to the gain resistors is at least %.3g > %d for every part choice within %s",
			r.minSens, MaxGainSensitivity, o.window())
	}
	return o.limitsMsg(w0, "")
}

// skDesign is a Sallen-Key search result.
type skDesign struct {
	design
	score, sens, c1c2 float64
}

// skLowpassSearch searches capacitor pairs and rounded resistors for the
// Sallen-Key lowpass with the realised amplifier amp and divider ratio
// alpha (1: no divider). equal restricts C2 to C1.
func skLowpassSearch(tg target, o *options, amp amplifier, alpha float64, equal bool) (skDesign, skReject, bool) {
	var rej skReject
	k := amp.k
	rlim := 1/(4*tg.q*tg.q) + k - 1 // C2/C1 bound
	var p picker
	var best struct {
		c1, c2, r1a, r1b, r2, x1a, x1b, x2 float64
		w, q, g, sens                      float64
	}
	var c2buf [8]float64
	var ca, cb, cc [3]float64
	for _, c1 := range o.caps {
		c2s := c2buf[:0]
		if equal {
			c2s = append(c2s, c1)
		} else {
			lim := rlim * c1
			c2s = o.capsAtMost(c2s, lim, 3)
			if k > 1 {
				for _, f := range [...]float64{3, 10, 30} {
					c2s = o.capsAtMost(c2s, lim/f, 1)
				}
			}
		}
		for _, c2 := range c2s {
			pp := 1 / (tg.w0 * tg.w0 * c1 * c2) // R1·R2
			roots, nr := skLowpassR1(tg.w0, tg.q, k, c1, c2)
			for _, r1 := range roots[:nr] {
				x2 := pp / r1
				if !o.nearR(x2) {
					continue
				}
				x1a, x1b := r1, 0.0
				if alpha < 1 {
					x1a, x1b = r1/alpha, r1/(1-alpha)
				}
				na := o.rcands(x1a, &ca)
				nb := 1
				if alpha < 1 {
					nb = o.rcands(x1b, &cb)
				}
				n2 := o.rcands(x2, &cc)
				for _, r1a := range ca[:na] {
					for j := range nb {
						r1b := cb[j]
						rt, ar := r1a, 1.0
						if alpha < 1 {
							rt, ar = r1a*r1b/(r1a+r1b), r1b/(r1a+r1b)
						}
						for _, r2 := range cc[:n2] {
							w, qr := skLowpassPoles(rt, r2, c1, c2, k)
							if !(qr > 0) {
								continue
							}
							sens := qr * w * rt * c1 * (k - 1)
							if sens > MaxGainSensitivity {
								rej.sensitivity(sens)
								continue
							}
							g := ar * k
							s := errScore(w, tg.w0) + errScore(qr, tg.q) + errScore(g, tg.g)
							if !p.wants(s) {
								continue
							}
							tie := o.tieLog(r1a) + o.tieLog(r2)
							if alpha < 1 {
								tie += o.tieLog(r1b)
							}
							if p.take(s, tie) {
								best.c1, best.c2, best.r1a, best.r1b, best.r2 = c1, c2, r1a, r1b, r2
								best.x1a, best.x1b, best.x2 = x1a, x1b, x2
								best.w, best.q, best.g, best.sens = w, qr, g, sens
							}
						}
					}
				}
			}
		}
	}
	if !p.ok {
		return skDesign{}, rej, false
	}
	b := newBuilder(o, SallenKey)
	b.res(circuit.In, "a", best.r1a, best.x1a)
	if alpha < 1 {
		b.res("a", circuit.Ground, best.r1b, best.x1b)
	}
	b.res("a", "p", best.r2, best.x2)
	b.capa("a", "out", best.c1)
	b.capa("p", circuit.Ground, best.c2)
	amp.add(b, "p", "out")
	return skDesign{
		design: design{stage: b.done("out"), w0: best.w, q: best.q, g: best.g},
		score:  p.score, sens: best.sens, c1c2: best.c1 / best.c2,
	}, rej, true
}

func skHighpass(tg target, o *options) (design, *Error) {
	g := tg.g
	if !(g < 1) || isOne(g) {
		amp, e := newAmplifier(SallenKey, o, g)
		if e != nil {
			return design{}, e
		}
		d, rej, ok := skHighpassSearch(tg, o, amp, 0)
		if !ok {
			return design{}, fail(SallenKey, ErrLimits, "highpass, K = %.4g: %s", amp.k, o.rejectMsg(tg.w0, rej))
		}
		if amp.rf == 0 {
			d.form = "unity gain (K = 1), C1 ≈ C2"
		} else {
			d.form = fmt.Sprintf("gain K = 1 + Rf/Rg = %.4g, Q sensitivity to the gain resistors %.2g ≤ %d", amp.k, d.sens, MaxGainSensitivity)
		}
		return d.design, nil
	}
	// g < 1: C1 split into C1a (in–a) and C1b (a–ground), C1b/C1a = rho.
	var best skDesign
	var bestRej skReject
	found := false
	for _, rho := range splitRatios(o, (1-g)/g) {
		alpha := 1 / (1 + rho)
		amp, e := newAmplifier(SallenKey, o, g/alpha)
		if e != nil {
			continue
		}
		d, rej, ok := skHighpassSearch(tg, o, amp, rho)
		if !ok {
			bestRej = rej
			continue
		}
		if !found || d.score < best.score-tieEps {
			best, found = d, true
			best.form = fmt.Sprintf("input capacitor split into a divider (ratio %.4g)", alpha)
			if amp.rf != 0 {
				best.form += fmt.Sprintf(" with K = 1 + Rf/Rg = %.4g making up the exact gain %.4g", amp.k, g)
			} else {
				best.form = fmt.Sprintf("unity gain (K = 1), input capacitor split into a divider for gain %.4g", g)
			}
		}
	}
	if !found {
		return design{}, fail(SallenKey, ErrLimits, "highpass, gain %.4g by a capacitive divider: %s", g, o.rejectMsg(tg.w0, bestRej))
	}
	return best.design, nil
}

// splitRatios returns up to two capacitor ratios C1b/C1a ≥ rho0 that two
// series values can make, the smallest first (α = C1a/(C1a + C1b) at or
// just below the wanted gain).
func splitRatios(o *options, rho0 float64) []float64 {
	var out []float64
	for _, m := range o.cs.Values() {
		_, above := o.cs.Neighbours(m * rho0)
		r := above / m
		if math.IsNaN(r) || r < rho0*(1-1e-12) {
			continue
		}
		dup := false
		for _, x := range out {
			dup = dup || math.Abs(x/r-1) < 1e-9
		}
		if !dup {
			out = append(out, r)
		}
	}
	// Keep the two smallest.
	for i := range out {
		for j := i + 1; j < len(out); j++ {
			if out[j] < out[i] {
				out[i], out[j] = out[j], out[i]
			}
		}
	}
	return out[:min(2, len(out))]
}

// skHighpassSearch searches the Sallen-Key highpass with the realised
// amplifier amp; rho > 0 splits C1 into C1a and C1b = rho·C1a.
func skHighpassSearch(tg target, o *options, amp amplifier, rho float64) (skDesign, skReject, bool) {
	var rej skReject
	k := amp.k
	var p picker
	var best struct {
		c1a, c1b, c2, r1, r2, x1, x2 float64
		w, q, g, sens                float64
	}
	var c2buf [8]float64
	var ca, cb [3]float64
	for _, c1a := range o.caps {
		c1t, c1b, ar := c1a, 0.0, 1.0
		if rho > 0 {
			c1b = o.cs.Nearest(c1a * rho)
			if !o.inC(c1b) || math.Abs(c1b/(c1a*rho)-1) > 1e-6 {
				continue
			}
			c1t = c1a + c1b
			ar = c1a / c1t
		}
		for _, c2 := range o.capsNear(c2buf[:0], c1t, 2) {
			pp := 1 / (tg.w0 * tg.w0 * c1t * c2) // R1·R2
			roots, nr := skHighpassR2(tg.w0, tg.q, k, c1t, c2)
			for _, x2 := range roots[:nr] {
				x1 := pp / x2
				if !o.nearR(x1) || !o.nearR(x2) {
					continue
				}
				n1, n2 := o.rcands(x1, &ca), o.rcands(x2, &cb)
				for _, r1 := range ca[:n1] {
					for _, r2 := range cb[:n2] {
						w, qr := skHighpassPoles(r1, r2, c1t, c2, k)
						if !(qr > 0) {
							continue
						}
						sens := qr * (k - 1) / (w * r1 * c1t)
						if sens > MaxGainSensitivity {
							rej.sensitivity(sens)
							continue
						}
						g := ar * k
						s := errScore(w, tg.w0) + errScore(qr, tg.q) + errScore(g, tg.g)
						if p.wants(s) && p.take(s, o.tieLog(r1)+o.tieLog(r2)) {
							best.c1a, best.c1b, best.c2, best.r1, best.r2, best.x1, best.x2 = c1a, c1b, c2, r1, r2, x1, x2
							best.w, best.q, best.g, best.sens = w, qr, g, sens
						}
					}
				}
			}
		}
	}
	if !p.ok {
		return skDesign{}, rej, false
	}
	b := newBuilder(o, SallenKey)
	b.capa(circuit.In, "a", best.c1a)
	if rho > 0 {
		b.capa("a", circuit.Ground, best.c1b)
	}
	b.capa("a", "p", best.c2)
	b.res("a", "out", best.r1, best.x1)
	b.res("p", circuit.Ground, best.r2, best.x2)
	amp.add(b, "p", "out")
	return skDesign{
		design: design{stage: b.done("out"), w0: best.w, q: best.q, g: best.g},
		score:  p.score, sens: best.sens,
	}, rej, true
}

// skLowpassR1 returns the input resistors R1 (one or two solutions) of the
// Sallen-Key lowpass with gain k, feedback capacitor c1 and ground
// capacitor c2 that give ω0 and Q: the positive roots of
// [C2 + (1 − K)·C1]·R1² − R1/(Q·ω0) + 1/(ω0²·C1) = 0. R2 is then
// 1/(ω0²·C1·C2·R1).
func skLowpassR1(w0, q, k, c1, c2 float64) ([2]float64, int) {
	return positiveRoots(c2+(1-k)*c1, 1/(q*w0), 1/(w0*w0*c1))
}

// skLowpassPoles returns ω0 and Q of the Sallen-Key lowpass as built
// (Q ≤ 0 means the stage is unstable).
func skLowpassPoles(r1, r2, c1, c2, k float64) (w0, q float64) {
	w0 = 1 / math.Sqrt(r1*r2*c1*c2)
	return w0, 1 / (w0 * ((r1+r2)*c2 + (1-k)*r1*c1))
}

// skHighpassR2 returns the ground resistor R2 of the Sallen-Key highpass
// with gain k, input capacitor c1 and series capacitor c2 that gives ω0 and
// Q: the positive roots of (1 − K)·ω0²·C2·R2² − (ω0/Q)·R2 +
// (C1 + C2)/(C1·C2) = 0. R1 is then 1/(ω0²·C1·C2·R2).
func skHighpassR2(w0, q, k, c1, c2 float64) ([2]float64, int) {
	return positiveRoots((1-k)*w0*w0*c2, w0/q, (c1+c2)/(c1*c2))
}

// skHighpassPoles returns ω0 and Q of the Sallen-Key highpass as built.
func skHighpassPoles(r1, r2, c1, c2, k float64) (w0, q float64) {
	w0 = 1 / math.Sqrt(r1*r2*c1*c2)
	return w0, w0 / ((c1+c2)/(r2*c1*c2) + (1-k)/(r1*c1))
}
