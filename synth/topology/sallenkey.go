package topology

import (
	"fmt"
	"math"
	"sort"

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
// capacitors of the highpass divider are series values, so α = 1/(1 + ρ),
// ρ = C1b/C1a, can only be approached from below; K = g/α = g·(1 + ρ) ≥ 1
// then makes up the rest with Rf/Rg so that the gain stays exact. ρ is
// taken among the ratios two series capacitors make for which K − 1 is a
// ratio two resistors in the window can make, at least MinOhm/MaxOhm
// ([splitRatios]; the nearest ratio to (1 − g)/g may need K − 1 of a few
// parts in a thousand). A gain just above one, whose Rf/Rg = g − 1 is too
// small a ratio for the window, is built the same way: a divider and a
// larger K (for the lowpass the resistive divider, [gainSplit]).
//
// With K > 1 the Q sensitivity to the gain resistors,
// S = Q·ω0·R1·C1·(K − 1) (lowpass) or Q·(K − 1)/(ω0·R1·C1) (highpass), is
// held to [MaxGainSensitivity] for the design before rounding, so that
// rounding cannot buy a lower sensitivity with a wrong Q. Its least value
// over the capacitor ratio, as C2/C1 → 0, is (√(1 + 4Q²·(K − 1)) − 1)/2
// in both, so no general-K stage exists once Q²·(K − 1) > 12.
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

	// g > 1: general K = g (just above one, a larger K with a divider),
	// else equal-component with a divider.
	amp, alpha, e := gainSplit(SallenKey, o, tg.g)
	if e != nil {
		return design{}, e
	}
	d, rej, ok := skLowpassSearch(tg, o, amp, alpha, false)
	if ok {
		d.form = fmt.Sprintf("gain K = 1 + Rf/Rg = %.4g, Q sensitivity to the gain resistors %.2g ≤ %d", amp.k, d.sens, MaxGainSensitivity)
		if alpha < 1 {
			d.form += fmt.Sprintf(", input resistor split into a divider for gain %.4g (Rf/Rg = g − 1 alone would be too small a ratio)", tg.g)
		}
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
				// The rule applies to the design before rounding, so that
				// rounding cannot trade Q for a lower sensitivity.
				if sx := tg.q * tg.w0 * r1 * c1 * (k - 1); sx > MaxGainSensitivity {
					rej.sensitivity(sx)
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
	direct := "" // why K = g without a divider failed
	if !(g < 1) || isOne(g) {
		amp, e := newAmplifier(SallenKey, o, g)
		if e == nil {
			d, rej, ok := skHighpassSearch(tg, o, amp, 0)
			if ok {
				if amp.rf == 0 {
					d.form = "unity gain (K = 1), C1 ≈ C2"
				} else {
					d.form = fmt.Sprintf("gain K = 1 + Rf/Rg = %.4g, Q sensitivity to the gain resistors %.2g ≤ %d", amp.k, d.sens, MaxGainSensitivity)
				}
				return d.design, nil
			}
			direct = fmt.Sprintf("highpass, K = %.4g: %s", amp.k, o.rejectMsg(tg.w0, rej))
		} else {
			direct = e.Reason
		}
		// Then a divider and a larger K: just above one, g − 1 is too
		// small a ratio for Rf/Rg; at high Q, K > 1 narrows the spread
		// R2/R1, 4Q² at K = 1 and C1 = C2.
	}
	// C1 split into C1a (in–a) and C1b (a–ground), C1b/C1a = ρ, and
	// K = g·(1 + ρ) ≥ 1 making up the gain exactly.
	var best skDesign
	var rej skReject
	found, tried := false, 0
	for _, rho := range splitRatios(o, g) {
		amp, e := newAmplifier(SallenKey, o, g*(1+rho))
		if e != nil {
			continue
		}
		tried++
		d, r, ok := skHighpassSearch(tg, o, amp, rho)
		if r.sens > 0 {
			rej.sensitivity(r.minSens)
		}
		if !ok {
			continue
		}
		// The ratios ascend, so on a tie the least K wins: the least
		// noise gain and the least Q sensitivity.
		if found && d.score >= best.score-tieEps {
			continue
		}
		best, found = d, true
		alpha := 1 / (1 + rho)
		if amp.rf != 0 {
			best.form = fmt.Sprintf("input capacitor split into a divider (ratio %.4g) with K = 1 + Rf/Rg = %.4g making up the exact gain %.4g, Q sensitivity to the gain resistors %.2g", alpha, amp.k, g, d.sens)
		} else {
			best.form = fmt.Sprintf("unity gain (K = 1), input capacitor split into a divider for gain %.4g", g)
		}
		if direct != "" {
			best.form += " (without the divider, " + direct + ")"
		}
	}
	if !found {
		msg := fmt.Sprintf("highpass, gain %.4g by a capacitive divider C1a/(C1a + C1b) and K = 1 + Rf/Rg making up the rest", g)
		if direct != "" {
			msg = direct + "; " + msg
		}
		if tried == 0 {
			return design{}, fail(SallenKey, ErrLimits, "%s: no %s capacitor ratio gives a K that two resistors in %s..%s make", msg, o.cs, eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
		}
		return design{}, fail(SallenKey, ErrLimits, "%s: %s", msg, o.rejectMsg(tg.w0, rej))
	}
	return best.design, nil
}

// splitRatios returns the ratios ρ = C1b/C1a of two capacitor series
// values tried for the Sallen-Key highpass divider α = 1/(1 + ρ) ahead of
// the gain K = g·(1 + ρ): ρ0 = (1 − g)/g itself when two series values
// make it (K = 1, no gain resistors), then for each of the four bounds
// t = m, m^¾, m^½, m^¼, m = MinOhm/MaxOhm (the least ratio two
// resistors in the window make), the two smallest ratios with K − 1 ≥ t
// and ρ ≥ t: K from just above one (least noise gain, least Q
// sensitivity) to where the gain resistors and the divider sit nearer the
// middle of the window, and where at high Q a larger K narrows the
// resistor spread, ascending. Exact resistors make every K exact; the
// search takes the best score and, among scores within tieEps of it, the
// least K.
func splitRatios(o *options, g float64) []float64 {
	var out []float64
	add := func(r float64) {
		for _, x := range out {
			if math.Abs(x/r-1) < 1e-9 {
				return
			}
		}
		out = append(out, r)
	}
	ms := o.cs.Values()
	if rho0 := (1 - g) / g; rho0 > 0 && !isOne(g) {
		for _, m := range ms {
			if v := o.cs.Nearest(m * rho0); math.Abs(v/(m*rho0)-1) <= 1e-10 {
				add(v / m)
				break
			}
		}
	}
	kmax := (1 + o.rmax/o.rmin) / g // K − 1 ≤ MaxOhm/MinOhm
	m := o.rmin / o.rmax
	for _, e := range [...]float64{1, 0.75, 0.5, 0.25} {
		t := math.Pow(m, e) * (1 + 1e-6)
		lo := max((1+t)/g-1, t)
		var rs []float64
		for _, mm := range ms {
			_, above := o.cs.Neighbours(mm * lo)
			if r := above / mm; r >= lo*(1-1e-12) && 1+r <= kmax {
				rs = append(rs, r)
			}
		}
		sort.Float64s(rs)
		n := 0
		for i, r := range rs {
			if n == 2 {
				break
			}
			if i > 0 && math.Abs(r/rs[i-1]-1) < 1e-9 {
				continue
			}
			add(r)
			n++
		}
	}
	sort.Float64s(out)
	return out
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
		c2s := o.capsNear(c2buf[:0], c1t, 2)
		if k > 1 {
			// A smaller C2 lowers the Q sensitivity to the gain resistors.
			for _, f := range [...]float64{3, 10, 30} {
				c2s = o.capsAtMost(c2s, c1t/f, 1)
			}
		}
		for _, c2 := range c2s {
			pp := 1 / (tg.w0 * tg.w0 * c1t * c2) // R1·R2
			roots, nr := skHighpassR2(tg.w0, tg.q, k, c1t, c2)
			for _, x2 := range roots[:nr] {
				x1 := pp / x2
				if !o.nearR(x1) || !o.nearR(x2) {
					continue
				}
				if sx := tg.q * (k - 1) / (tg.w0 * x1 * c1t); sx > MaxGainSensitivity {
					rej.sensitivity(sx) // before rounding, as in the lowpass
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
