package topology

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// multipleFeedback realises a second-order lowpass, highpass or bandpass
// as a multiple-feedback (infinite-gain, Rauch) stage: one op-amp with its
// non-inverting input grounded, a node a, and the inverting input m. With
// admittances Y1 (in–a), Y2 (a–ground), Y3 (a–m), Y4 (a–out), Y5 (m–out)
// nodal analysis gives
//
//	H = −Y1·Y3 / (Y5·(Y1 + Y2 + Y3 + Y4) + Y3·Y4).
//
// Lowpass, Y1 = 1/R1, Y2 = s·C2, Y3 = 1/R3, Y4 = 1/R2, Y5 = s·C1:
//
//	H = −(R2/R1)·ω0² / (s² + s·(1/R1 + 1/R2 + 1/R3)/C2 + ω0²),  ω0² = 1/(R2·R3·C1·C2)
//
// With R1 = R2/g, R2 solves ω0²·C1·C2·R2² − (ω0·C2/Q)·R2 + (1 + g) = 0,
// which needs C2/C1 ≥ 4Q²·(1 + g) (TI SLOA049 "Active Low-Pass Filter
// Design"; Analog Devices MT-220 "Analog Filters"; from memory).
//
// Highpass, Y1 = s·C1, Y2 = 1/R1, Y3 = s·C3, Y4 = s·C2, Y5 = 1/R2:
//
//	H = −(C1/C2)·s² / (s² + s·(C1 + C2 + C3)/(R2·C2·C3) + ω0²),  ω0² = 1/(R1·R2·C2·C3)
//
// so R2 = Q·(C1 + C2 + C3)/(ω0·C2·C3) and R1 = 1/(ω0²·C2·C3·R2) (same
// sources). The gain is the capacitor ratio C1/C2, and no resistor of the
// circuit can trim it: at high frequency only the capacitors carry
// signal, an input divider of capacitors has the gain C1a/C2 of its upper
// capacitor, and one of resistors, or a tap of R1 or R2, adds an s or s⁰
// term to the numerator. Two series capacitors make g only by
// coincidence (g = 1, 10, 1.5, …), so otherwise the stage takes the
// nearest C1/C2 = r below g and trims the gain up by positive feedback:
// the + input, grounded in the plain form, goes to the tap of a divider
// Ra (out–p), Rb (p–ground), λ = Rb/(Ra + Rb) (the positive-feedback
// arrangement of the Delyiannis-Friend bandpass, which Friend used to
// enhance Q, from memory; the equations here were derived by nodal
// analysis with v(m) = λ·v(out)):
//
//	H = −C1·C3·s² / (C3·D2·s² + [(1 − λ)·S·G2 − λ·C3·G1]·s + (1 − λ)·G1·G2)
//	D2 = C2 − λ·(C1 + C2),  S = C1 + C2 + C3,  G1 = 1/R1,  G2 = 1/R2
//
// The gain is g = C1/D2, so λ = (1 − r/g)/(1 + r), a resistor ratio that
// exact resistors make exact; ω0² = (1 − λ)·G1·G2/(C3·D2) and
// ω0/Q = [(1 − λ)·S·G2 − λ·C3·G1]/(C3·D2) give G1·G2 = P =
// ω0²·C3·D2/(1 − λ) and G2 as the positive root of
// (1 − λ)·S·G2² − (ω0·C3·D2/Q)·G2 − λ·C3·P = 0 ([mfbHighpassR]); λ = 0
// is the plain form. D2 > 0 is also the
// condition for the op-amp's net feedback to stay negative at high
// frequency. Positive feedback makes Q depend on a difference, so the
// Q sensitivity to either divider resistor, λ·(1 − λ)·|∂ln Q/∂λ|, is held
// to [MaxGainSensitivity] as for Sallen-Key's gain resistors; with
// series resistors the divider is rounded first (Ra/Rb = 1/λ − 1, the
// pair of [options.gainPair]) and R1, R2 are solved for the λ as built.
//
// Bandpass (Delyiannis-Friend), Y1 = 1/R1, Y2 = 1/R2 (optional),
// Y3 = s·Ca (a–m), Y4 = s·Cb (a–out), Y5 = 1/R3:
//
//	H = −(s/(R1·Cb)) / (s² + s·(Ca + Cb)/(R3·Ca·Cb) + 1/((R1‖R2)·R3·Ca·Cb))
//
// R3 = Q·(Ca + Cb)/(ω0·Ca·Cb) sets Q, the gain at f0 is
// |H(jω0)| = Q/(ω0·R1·Cb), so R1 = Q/(ω0·g·Cb), and R2 makes up
// R1‖R2 = 1/(ω0²·R3·Ca·Cb). Without R2 the gain at f0 is Q²·(1 + Ca/Cb),
// 2Q² at equal capacitors: that is the form's gain limit, and R2 (the
// Thevenin split of R1) is the input divider that brings the gain below
// it. Ca ≥ Cb, at most [MaxBandpassCapRatio]·Cb (Delyiannis 1969, Friend
// 1970, in the form of TI's "Op Amps for Everyone" ch. 16 and MT-220;
// from memory).
func multipleFeedback(tg target, o *options) (design, *Error) {
	if tg.order != 2 {
		return design{}, fail(MultipleFeedback, ErrNoForm, "a second-order stage; no form for a first-order %s section (use rc-buffer or inverting-rc)", tg.kind)
	}
	switch tg.kind {
	case section.Lowpass:
		return mfbLowpass(tg, o)
	case section.Highpass:
		return mfbHighpass(tg, o)
	case section.Bandpass:
		return mfbBandpass(tg, o)
	}
	return design{}, fail(MultipleFeedback, ErrNoForm, "no %s form (lowpass, highpass and bandpass only)", tg.kind)
}

func mfbLowpass(tg target, o *options) (design, *Error) {
	g := tg.g
	ratio := 4 * tg.q * tg.q * (1 + g)
	spread := o.caps[len(o.caps)-1] / o.caps[0]
	if ratio > spread*(1+winTol) {
		return design{}, fail(MultipleFeedback, ErrLimits, "lowpass needs C2/C1 ≥ 4Q²·(1 + g) = %.4g but the capacitor window %s..%s with %s allows at most %.4g",
			ratio, eng(o.cmin, "F"), eng(o.cmax, "F"), o.cs, spread)
	}
	var p picker
	var best struct {
		c1, c2, r1, r2, r3, x1, x2, x3 float64
		w, q, g                        float64
	}
	var c2buf [8]float64
	var ca, cb, cc [3]float64
	for _, c1 := range o.caps {
		for _, c2 := range o.capsAtLeast(c2buf[:0], ratio*c1, 3) {
			roots, nr := mfbLowpassR2(tg.w0, tg.q, g, c1, c2)
			for _, x2 := range roots[:nr] {
				x1 := x2 / g
				x3 := 1 / (tg.w0 * tg.w0 * c1 * c2 * x2)
				if !o.nearR(x1) || !o.nearR(x2) || !o.nearR(x3) {
					continue
				}
				n1, n2, n3 := o.rcands(x1, &ca), o.rcands(x2, &cb), o.rcands(x3, &cc)
				for _, r1 := range ca[:n1] {
					for _, r2 := range cb[:n2] {
						for _, r3 := range cc[:n3] {
							w, qr, gr := mfbLowpassPoles(r1, r2, r3, c1, c2)
							s := errScore(w, tg.w0) + errScore(qr, tg.q) + errScore(gr, g)
							if p.wants(s) && p.take(s, o.tieLog(r1)+o.tieLog(r2)+o.tieLog(r3)) {
								best.c1, best.c2, best.r1, best.r2, best.r3 = c1, c2, r1, r2, r3
								best.x1, best.x2, best.x3 = x1, x2, x3
								best.w, best.q, best.g = w, qr, gr
							}
						}
					}
				}
			}
		}
	}
	if !p.ok {
		return design{}, fail(MultipleFeedback, ErrLimits, "lowpass, C2/C1 ≥ 4Q²·(1 + g) = %.4g: %s", ratio, o.limitsMsg(tg.w0, ""))
	}
	b := newBuilder(o, MultipleFeedback)
	b.res(circuit.In, "a", best.r1, best.x1)
	b.res("a", "out", best.r2, best.x2)
	b.res("a", "m", best.r3, best.x3)
	b.capa("m", "out", best.c1)
	b.capa("a", circuit.Ground, best.c2)
	b.amp(circuit.Ground, "m", "out")
	return design{
		stage: b.done("out"), inverting: true, w0: best.w, q: best.q, g: best.g,
		form: fmt.Sprintf("inverting lowpass, gain −R2/R1 = −%.4g, C2/C1 = %.3g ≥ 4Q²·(1 + g) = %.3g", best.g, best.c2/best.c1, ratio),
	}, nil
}

func mfbHighpass(tg target, o *options) (design, *Error) {
	g := tg.g
	var p picker
	var rej skReject
	var best struct {
		c1, c2, c3, r1, r2, x1, x2 float64
		ra, rb, xa, xb             float64 // positive-feedback divider (0: none)
		w, q, g, lam, sens         float64
	}
	var c1buf, c3buf [8]float64
	var ca, cb [3]float64
	// C1/C2 at or below the gain, in passes, each only when the ones
	// before found nothing: C1/C2 = g itself (the plain form, no
	// divider), then the nearest ratio below g for each C2 (the least
	// trim λ), then the next two smaller ones.
	for pass := range 3 {
		if p.ok {
			break
		}
		for _, c2 := range o.caps {
			c1s := o.capsAtMost(c1buf[:0], g*c2, 3)
			exact := len(c1s) > 0 && math.Abs(c1s[0]/(g*c2)-1) <= winTol
			switch {
			case pass == 0 && exact:
				c1s = c1s[:1]
			case pass == 0:
				c1s = nil
			case exact: // its ratio was pass 0's
				c1s = c1s[1:]
			}
			switch {
			case pass == 1:
				c1s = c1s[:min(1, len(c1s))]
			case pass == 2:
				c1s = c1s[min(1, len(c1s)):]
			}
			for _, c1 := range c1s {
				var lam, ra, rb, xa, xb float64
				if math.Abs(c1/(g*c2)-1) > winTol {
					if o.noDivider {
						continue
					}
					// λ = (1 − r/g)/(1 + r), r = C1/C2, by Ra/Rb = 1/λ − 1.
					r := c1 / c2
					var ok bool
					if ra, rb, xa, xb, ok = o.gainPair((1 + r) / (1 - r/g)); !ok {
						continue
					}
					lam = rb / (ra + rb) // as built
				}
				// C3 near C1 (the usual C1 = C3), or equal to C2.
				c3s := o.capsNear(c3buf[:0], c1, 2)
				if c2 != c1 {
					c3s = append(c3s, c2)
				}
				for _, c3 := range c3s {
					x1, x2 := mfbHighpassR(tg.w0, tg.q, lam, c1, c2, c3)
					if !o.nearR(x1) || !o.nearR(x2) {
						continue
					}
					if sx := mfbHighpassSens(x1, x2, c1, c2, c3, lam); sx > MaxGainSensitivity {
						rej.sensitivity(sx) // the design before rounding
						continue
					}
					n1, n2 := o.rcands(x1, &ca), o.rcands(x2, &cb)
					for _, r1 := range ca[:n1] {
						for _, r2 := range cb[:n2] {
							w, qr, gr := mfbHighpassPoles(r1, r2, c1, c2, c3, lam)
							if !(qr > 0) {
								continue
							}
							sens := mfbHighpassSens(r1, r2, c1, c2, c3, lam)
							if sens > MaxGainSensitivity {
								rej.sensitivity(sens)
								continue
							}
							s := errScore(w, tg.w0) + errScore(qr, tg.q) + errScore(gr, g)
							if !p.wants(s) {
								continue
							}
							tie := o.tieLog(r1) + o.tieLog(r2)
							if lam > 0 {
								tie += o.tieLog(ra) + o.tieLog(rb)
							}
							if p.take(s, tie) {
								best.c1, best.c2, best.c3, best.r1, best.r2, best.x1, best.x2 = c1, c2, c3, r1, r2, x1, x2
								best.ra, best.rb, best.xa, best.xb = ra, rb, xa, xb
								best.w, best.q, best.g, best.lam, best.sens = w, qr, gr, lam, sens
							}
						}
					}
				}
			}
		}
	}
	if !p.ok {
		msg := o.limitsMsg(tg.w0, "")
		if rej.sens > 0 {
			msg = fmt.Sprintf("the Q sensitivity to the positive-feedback divider is at least %.3g > %d for every part choice within %s",
				rej.minSens, MaxGainSensitivity, o.window())
		}
		// The plain form's least spread, at C3 = C1 + C2.
		if sp := 4 * tg.q * tg.q * (1 + g); sp > o.rmax/o.rmin*(1+winTol) {
			msg += fmt.Sprintf("; without the divider, C1/C2 = g needs R2/R1 ≥ 4Q²·(1 + g) = %.4g, more than the window's ratio %.4g", sp, o.rmax/o.rmin)
		}
		return design{}, fail(MultipleFeedback, ErrLimits, "highpass, gain C1/(C2 − λ·(C1 + C2)) = %.4g with C1/C2 ≤ %.4g: %s", g, g, msg)
	}
	b := newBuilder(o, MultipleFeedback)
	b.capa(circuit.In, "a", best.c1)
	b.capa("a", "out", best.c2)
	b.capa("a", "m", best.c3)
	b.res("a", circuit.Ground, best.r1, best.x1)
	b.res("m", "out", best.r2, best.x2)
	form := fmt.Sprintf("inverting highpass, gain −C1/C2 = −%.4g", best.g)
	if best.lam > 0 {
		b.res("out", "p", best.ra, best.xa)
		b.res("p", circuit.Ground, best.rb, best.xb)
		b.amp("p", "m", "out")
		form = fmt.Sprintf("inverting highpass, C1/C2 = %.4g trimmed to the gain −C1/(C2 − λ·(C1 + C2)) = −%.4g by positive feedback λ = Rb/(Ra + Rb) = %.4g to the + input, Q sensitivity to the divider %.2g ≤ %d",
			best.c1/best.c2, best.g, best.lam, best.sens, MaxGainSensitivity)
	} else {
		b.amp(circuit.Ground, "m", "out")
	}
	return design{stage: b.done("out"), inverting: true, w0: best.w, q: best.q, g: best.g, form: form}, nil
}

func mfbBandpass(tg target, o *options) (design, *Error) {
	g := tg.g
	q2 := tg.q * tg.q
	need := g/q2 - 1 // Ca/Cb must exceed this
	if need > MaxBandpassCapRatio {
		return design{}, fail(MultipleFeedback, ErrLimits, "bandpass gain %.4g at f0 exceeds the limit Q²·(1 + Ca/Cb) = %.4g with Ca/Cb ≤ %d (2Q² = %.4g at equal capacitors)",
			g, q2*(1+MaxBandpassCapRatio), MaxBandpassCapRatio, 2*q2)
	}
	var p picker
	var best struct {
		ca, cb, r1, r2, r3, x1, x2, x3 float64
		w, q, g                        float64
	}
	var cabuf [8]float64
	var c1, c2, c3 [3]float64
	for i, cb := range o.caps {
		cas := cabuf[:0]
		if need <= 1 {
			// Equal capacitors and the next values up.
			for j := i; j < min(len(o.caps), i+3); j++ {
				cas = append(cas, o.caps[j])
			}
		} else {
			cas = o.capsAtLeast(cas, need*cb, 3)
		}
		for _, ca := range cas {
			if ca > MaxBandpassCapRatio*cb*(1+winTol) {
				continue
			}
			x1, x2, x3, ok := mfbBandpassR(tg.w0, tg.q, g, ca, cb)
			if !ok {
				continue // the gain is above this pair's limit
			}
			divider := !math.IsInf(x2, 1)
			if !divider {
				x2 = 0
			}
			if !o.nearR(x1) || !o.nearR(x3) || (divider && !o.nearR(x2)) {
				continue
			}
			n1, n3 := o.rcands(x1, &c1), o.rcands(x3, &c3)
			n2 := 1
			if divider {
				n2 = o.rcands(x2, &c2)
			}
			for _, r1 := range c1[:n1] {
				for j := range n2 {
					r2 := c2[j]
					rpr := r1
					if divider {
						rpr = r1 * r2 / (r1 + r2)
					} else {
						r2 = 0
					}
					for _, r3 := range c3[:n3] {
						w, qr, gr := mfbBandpassPoles(r1, rpr, r3, ca, cb)
						s := errScore(w, tg.w0) + errScore(qr, tg.q) + errScore(gr, g)
						if !p.wants(s) {
							continue
						}
						tie := o.tieLog(r1) + o.tieLog(r3)
						if divider {
							tie += o.tieLog(r2)
						}
						if p.take(s, tie) {
							best.ca, best.cb, best.r1, best.r2, best.r3 = ca, cb, r1, r2, r3
							best.x1, best.x2, best.x3 = x1, x2, x3
							best.w, best.q, best.g = w, qr, gr
						}
					}
				}
			}
		}
	}
	if !p.ok {
		// Resistor spreads at Ca = Cb, the least the search tries:
		// R3/(R1‖R2) = Q²·(1 + Ca/Cb)·(1 + Cb/Ca) and
		// R1/(R1‖R2) = Q²·(1 + Ca/Cb)/g.
		what, spread := "", o.rmax/o.rmin*(1+winTol)
		switch {
		case 2*q2/g > spread:
			what = fmt.Sprintf("even at Ca = Cb the input divider needs R1/(R1‖R2) = 2Q²/g = %.4g, more than the window's ratio %.4g", 2*q2/g, o.rmax/o.rmin)
		case 4*q2 > spread:
			what = fmt.Sprintf("even at Ca = Cb it needs R3/(R1‖R2) = 4Q² = %.4g, more than the window's ratio %.4g", 4*q2, o.rmax/o.rmin)
		}
		return design{}, fail(MultipleFeedback, ErrLimits, "bandpass, gain %.4g at f0 (limit Q²·(1 + Ca/Cb)): %s", g, o.limitsMsg(tg.w0, what))
	}
	b := newBuilder(o, MultipleFeedback)
	b.res(circuit.In, "a", best.r1, best.x1)
	if best.r2 > 0 {
		b.res("a", circuit.Ground, best.r2, best.x2)
	}
	b.res("m", "out", best.r3, best.x3)
	b.capa("a", "m", best.ca)
	b.capa("a", "out", best.cb)
	b.amp(circuit.Ground, "m", "out")
	limit := q2 * (1 + best.ca/best.cb)
	form := fmt.Sprintf("inverting bandpass (Delyiannis-Friend), gain −%.4g at f0 within its limit Q²·(1 + Ca/Cb) = %.4g", best.g, limit)
	if best.r2 > 0 {
		form += ", R2 divides the input down to it"
	}
	return design{stage: b.done("out"), inverting: true, w0: best.w, q: best.q, g: best.g, form: form}, nil
}

// mfbLowpassR2 returns the feedback resistor R2 (one or two solutions) of
// the multiple-feedback lowpass with gain g, feedback capacitor c1 and
// ground capacitor c2: the positive roots of
// ω0²·C1·C2·R2² − (ω0·C2/Q)·R2 + (1 + g) = 0. Then R1 = R2/g and
// R3 = 1/(ω0²·C1·C2·R2).
func mfbLowpassR2(w0, q, g, c1, c2 float64) ([2]float64, int) {
	return positiveRoots(w0*w0*c1*c2, w0*c2/q, 1+g)
}

// mfbLowpassPoles returns ω0, Q and the DC gain magnitude R2/R1 of the
// multiple-feedback lowpass as built.
func mfbLowpassPoles(r1, r2, r3, c1, c2 float64) (w0, q, g float64) {
	w0 = 1 / math.Sqrt(r2*r3*c1*c2)
	return w0, w0 * c2 / (1/r1 + 1/r2 + 1/r3), r2 / r1
}

// mfbHighpassR returns R1 (a–ground) and R2 (m–out) of the
// multiple-feedback highpass with capacitors c1 (input), c2 (a–out) and c3
// (a–m) and the positive-feedback fraction lam (0: + input grounded): with
// D2 = C2 − λ·(C1 + C2), S = C1 + C2 + C3, P = G1·G2 = ω0²·C3·D2/(1 − λ)
// and B = ω0·C3·D2/Q, G2 is the positive root of
// (1 − λ)·S·G2² − B·G2 − λ·C3·P = 0 and G1 = P/G2. At λ = 0,
// R2 = Q·S/(ω0·C2·C3) and R1 = 1/(ω0²·C2·C3·R2).
func mfbHighpassR(w0, q, lam, c1, c2, c3 float64) (r1, r2 float64) {
	d2 := c2 - lam*(c1+c2)
	s := c1 + c2 + c3
	pp := w0 * w0 * c3 * d2 / (1 - lam)
	bb := w0 * c3 * d2 / q
	a := (1 - lam) * s
	g2 := (bb + math.Sqrt(bb*bb+4*a*lam*c3*pp)) / (2 * a)
	return g2 / pp, 1 / g2
}

// mfbHighpassPoles returns ω0, Q and the high-frequency gain magnitude
// C1/(C2 − λ·(C1 + C2)) of the multiple-feedback highpass as built, from
//
//	H = −C1·C3·s² / (C3·D2·s² + [(1 − λ)·S·G2 − λ·C3·G1]·s + (1 − λ)·G1·G2);
//
// Q ≤ 0 means the stage is unstable.
func mfbHighpassPoles(r1, r2, c1, c2, c3, lam float64) (w0, q, g float64) {
	g1, g2 := 1/r1, 1/r2
	d2 := c2 - lam*(c1+c2)
	t := (1-lam)*(c1+c2+c3)*g2 - lam*c3*g1
	if !(d2 > 0) || !(t > 0) {
		return 0, 0, 0
	}
	w0 = math.Sqrt((1 - lam) * g1 * g2 / (c3 * d2))
	return w0, w0 * c3 * d2 / t, c1 / d2
}

// mfbHighpassSens returns |S^Q_R| of either divider resistor of the
// positive-feedback multiple-feedback highpass, λ·(1 − λ)·|∂ln Q/∂λ| with
// ∂ln Q/∂λ = −1/(2·(1 − λ)) − (C1 + C2)/(2·D2) + (S·G2 + C3·G1)/T
// (T the s coefficient above); 0 without the divider.
func mfbHighpassSens(r1, r2, c1, c2, c3, lam float64) float64 {
	if lam == 0 {
		return 0
	}
	g1, g2 := 1/r1, 1/r2
	s := c1 + c2 + c3
	d2 := c2 - lam*(c1+c2)
	t := (1-lam)*s*g2 - lam*c3*g1
	return lam * (1 - lam) * math.Abs(-1/(2*(1-lam))-(c1+c2)/(2*d2)+(s*g2+c3*g1)/t)
}

// mfbBandpassR returns R1 (input), R2 (a–ground, +Inf when not needed) and
// R3 (feedback) of the multiple-feedback bandpass with gain g at f0 and
// capacitors ca (a–m), cb (a–out); ok is false when g is above the pair's
// limit Q²·(1 + Ca/Cb).
func mfbBandpassR(w0, q, g, ca, cb float64) (r1, r2, r3 float64, ok bool) {
	r3 = q * (ca + cb) / (w0 * ca * cb)
	r1 = q / (w0 * g * cb)
	rp := 1 / (w0 * w0 * r3 * ca * cb) // R1‖R2
	inv2 := 1/rp - 1/r1
	switch {
	case inv2 < -1e-9/rp:
		return 0, 0, 0, false
	case inv2 <= 1e-9/rp:
		return r1, math.Inf(1), r3, true
	}
	return r1, 1 / inv2, r3, true
}

// mfbBandpassPoles returns ω0, Q and the gain magnitude at ω0 of the
// multiple-feedback bandpass as built, with rp = R1‖R2.
func mfbBandpassPoles(r1, rp, r3, ca, cb float64) (w0, q, g float64) {
	w0 = 1 / math.Sqrt(rp*r3*ca*cb)
	q = w0 * r3 * ca * cb / (ca + cb)
	return w0, q, q / (w0 * r1 * cb)
}
