package topology

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// stateVariable realises any second-order section with the
// Kerwin-Huelsman-Newcomb state-variable circuit (Kerwin, Huelsman and
// Newcomb, "State-variable synthesis for insensitive integrated circuit
// transfer functions", IEEE J. Solid-State Circuits SC-2, 1967; the
// equations below are derived here by nodal analysis and agree with the
// form in Analog Devices MT-220 and Williams & Taylor ch. 3, from memory).
//
// U1 is the summer: R1 (in–m), R2 (lp–m), R3 (hp–m) at its inverting
// input m, and the damping divider R4 (bp–p), R5 (p–ground) at its
// non-inverting input p; its output is hp. U2 and U3 are inverting
// integrators: R6 (hp–i1), C1 (i1–bp) and R7 (bp–i2), C2 (i2–lp). With
//
//	a = R3/R1, b = R3/R2, β = R5/(R4 + R5), c = β·(1 + a + b),
//	τ1 = R6·C1, τ2 = R7·C2, D(s) = s² + s·c/τ1 + b/(τ1·τ2):
//
//	hp = −a·s²/D,  bp = (a/τ1)·s/D,  lp = −(a/(τ1·τ2))/D
//	ω0² = b/(τ1·τ2),  Q = √(b·τ1/τ2)/c
//
// so ω0 is set by the integrators and R2, Q by the divider alone, and the
// gains are −a/b at DC (lowpass), −a at high frequency (highpass) and a/c
// at f0 (bandpass). Q needs β < 1, that is 1 + a + b > √b/Q; for low Q b is
// raised above its usual 1.
//
// For the notch kinds a fourth op-amp U4 sums hp and lp: R8 (hp–s),
// R9 (lp–s), R10 (out–s) at its inverting input s, giving
//
//	out = a·(kh·s² + kl/(τ1·τ2))/D,  kh = R10/R8, kl = R10/R9,
//
// that is k·(s² + ωz²)/D with k = a·kh and ωz² = kl/(kh·τ1·τ2): any zero
// frequency and any gain from two resistor ratios.
//
// The summer input gain a is 1 for the notch kinds; otherwise it is set by
// the section's gain. Internal nodes peak at about a·Q (hp, bp) for high
// Q, as in every state-variable filter.
func stateVariable(tg target, o *options) (design, *Error) {
	if tg.order != 2 {
		return design{}, fail(StateVariable, ErrNoForm, "a second-order stage; no form for a first-order %s section (use rc-buffer or inverting-rc)", tg.kind)
	}
	notch := hasAxisZeros(tg.kind)
	// summerGain returns a for the kind, given b and c.
	summerGain := func(b, c float64) float64 {
		switch tg.kind {
		case section.Lowpass:
			return tg.g * b
		case section.Highpass:
			return tg.g
		case section.Bandpass:
			return tg.g * c
		}
		return 1
	}
	b0 := 1.0
	beta := func(b float64) float64 {
		c := math.Sqrt(b) / tg.q
		return c / (1 + summerGain(b, c) + b)
	}
	for beta(b0) > 0.8 && b0 < 1e6 {
		b0 *= 2
	}
	if beta(b0) > 0.8 {
		return design{}, fail(StateVariable, ErrLimits, "Q %.3g is too low for the damping divider (β = %.3g)", tg.q, beta(b0))
	}

	// R5 sits near the middle of the window with R4/R5 = (1 − β)/β; R3 is
	// placed so that R3, R1 = R3/a and R2 = R3/b all fit, and R10 so that
	// R10, R8 = R10/kh and R9 = R10/kl do.
	divider := 1/beta(b0) - 1
	r5, ok := o.ratioBase(divider)
	if !ok {
		return design{}, fail(StateVariable, ErrLimits, "the damping divider R4/R5 = %.3g for Q %.3g (summer gain %.3g) does not fit the resistor window %s..%s",
			divider, tg.q, summerGain(b0, math.Sqrt(b0)/tg.q), eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
	}
	a0 := summerGain(b0, math.Sqrt(b0)/tg.q)
	bases := o.baseCands(o.centred(a0, b0))
	var sums []float64
	if notch {
		kh := tg.zeroScale() / a0
		sums = o.baseCands(o.centred(kh, kh*b0*tg.wz*tg.wz/(tg.w0*tg.w0)))
	}
	var p picker
	var best sv
	var top svTop // the best candidates of steps 1 and 2, for step 3
	var c6, c7, c2, c1, c4, c8, c9 [3]float64
	var d6, d7, d2, d1, d4, d8, d9 [3]float64 // their tie-break distances
	var c2buf [4]float64
	for _, c := range o.caps {
		x6 := math.Sqrt(b0) / (tg.w0 * c)
		if !o.nearR(x6) {
			continue
		}
		n6 := o.rcandsTie(x6, &c6, &d6)
		// The second integrator's capacitor: equal, or a neighbour (which
		// breaks the lattice of series ratios that equal values keep ω0 on).
		for _, cc := range o.capsNear(c2buf[:0], c, 1) {
			x7 := math.Sqrt(b0) / (tg.w0 * cc)
			n7 := o.rcandsTie(x7, &c7, &d7)
			for _, r3 := range bases {
				var cur sv
				cur.c, cur.c2, cur.x6, cur.x7, cur.r3 = c, cc, x6, x7, r3
				// Step 1: integrators and R2 for ω0.
				var p1 picker
				for i6, r6 := range c6[:n6] {
					for i7, r7 := range c7[:n7] {
						t1, t2 := r6*c, r7*cc
						x2 := r3 / (tg.w0 * tg.w0 * t1 * t2)
						n2 := o.rcandsTie(x2, &c2, &d2)
						for i2, r2 := range c2[:n2] {
							w := math.Sqrt(r3 / r2 / (t1 * t2))
							s := errScore(w, tg.w0)
							if p1.wants(s) && p1.take(s, d6[i6]+d7[i7]+d2[i2]) {
								cur.r6, cur.r7, cur.r2, cur.x2, cur.w = r6, r7, r2, x2, w
							}
						}
					}
				}
				if !p1.ok {
					continue
				}
				t1, t2 := cur.r6*c, cur.r7*cc
				br := r3 / cur.r2
				cneed := math.Sqrt(br*t1/t2) / tg.q
				// Step 2: summer gain R1 and damping R4 for Q and the gain.
				var p2 picker
				cur.x1 = r3 / summerGain(br, cneed)
				n1 := o.rcandsTie(cur.x1, &c1, &d1)
				for i1, r1 := range c1[:n1] {
					a := r3 / r1
					bt := cneed / (1 + a + br)
					if !(bt < 1) {
						continue
					}
					x4 := r5 * (1 - bt) / bt
					n4 := o.rcandsTie(x4, &c4, &d4)
					for i4, r4 := range c4[:n4] {
						cr := r5 / (r4 + r5) * (1 + a + br)
						qr := math.Sqrt(br*t1/t2) / cr
						var g float64
						switch tg.kind {
						case section.Lowpass:
							g = a / br
						case section.Highpass:
							g = a
						case section.Bandpass:
							g = a / cr
						}
						s := errScore(qr, tg.q)
						if !notch {
							s += errScore(g, tg.g)
						}
						if p2.wants(s) && p2.take(s, d1[i1]+d4[i4]) {
							cur.r1, cur.r4, cur.x4, cur.q, cur.g = r1, r4, x4, qr, g
						}
					}
				}
				if !p2.ok {
					continue
				}
				score := errScore(cur.w, tg.w0) + p2.score
				tie := p1.tie + p2.tie + o.tieLog(r3)
				if notch {
					top.offer(cur, score, tie)
					continue
				}
				if p.wants(score) && p.take(score, tie) {
					best = cur
				}
			}
		}
	}
	// Step 3 (notch kinds), for the best few of steps 1 and 2: the summing
	// weights for the zeros and the gain.
	for _, tc := range top.c[:top.n] {
		cur := tc.cur
		t1, t2 := cur.r6*cur.c, cur.r7*cur.c2
		br := cur.r3 / cur.r2
		a := cur.r3 / cur.r1
		kh := tg.zeroScale() / a
		kl := kh * tg.wz * tg.wz * t1 * t2
		var p3 picker
		for _, r10 := range sums {
			x8, x9 := r10/kh, r10/kl
			n8, n9 := o.rcandsTie(x8, &c8, &d8), o.rcandsTie(x9, &c9, &d9)
			for i8, r8 := range c8[:n8] {
				for i9, r9 := range c9[:n9] {
					khr, klr := r10/r8, r10/r9
					wz := math.Sqrt(klr / (khr * t1 * t2))
					g := a * khr
					if tg.kind != section.HighpassNotch {
						g = a * klr / br
					}
					s := errScore(wz, tg.wz) + errScore(g, tg.g)
					if p3.wants(s) && p3.take(s, d8[i8]+d9[i9]+o.tieLog(r10)) {
						cur.r8, cur.r9, cur.r10, cur.x8, cur.x9, cur.wz, cur.g = r8, r9, r10, x8, x9, wz, g
					}
				}
			}
		}
		if p3.ok && p.wants(tc.score+p3.score) && p.take(tc.score+p3.score, tc.tie+p3.tie) {
			best = cur
		}
	}
	if !p.ok {
		return design{}, fail(StateVariable, ErrLimits, "%s", o.limitsMsg(tg.w0, fmt.Sprintf("summer gain R3/R1 = %.3g, R3/R2 = %.3g, damping divider R4/R5 = %.3g", a0, b0, divider)))
	}

	b := newBuilder(o, StateVariable)
	b.res(circuit.In, "m", best.r1, best.x1)
	b.res("lp", "m", best.r2, best.x2)
	b.res("hp", "m", best.r3, best.r3)
	b.res("bp", "p", best.r4, best.x4)
	b.res("p", circuit.Ground, r5, r5)
	b.amp("p", "m", "hp")
	b.res("hp", "i1", best.r6, best.x6)
	b.capa("i1", "bp", best.c)
	b.amp(circuit.Ground, "i1", "bp")
	b.res("bp", "i2", best.r7, best.x7)
	b.capa("i2", "lp", best.c2)
	b.amp(circuit.Ground, "i2", "lp")
	d := design{w0: best.w, q: best.q, g: best.g, wz: best.wz}
	var out string
	switch tg.kind {
	case section.Lowpass:
		out, d.inverting = "lp", true
		d.form = "lowpass output (U3), inverting"
	case section.Highpass:
		out, d.inverting = "hp", true
		d.form = "highpass output (U1), inverting"
	case section.Bandpass:
		out = "bp"
		d.form = "bandpass output (U2), non-inverting at f0"
	default:
		b.res("hp", "s", best.r8, best.x8)
		b.res("lp", "s", best.r9, best.x9)
		b.res("out", "s", best.r10, best.r10)
		b.amp(circuit.Ground, "s", "out")
		out = "out"
		d.form = fmt.Sprintf("%s output: U4 sums highpass and lowpass (R10/R8 = %.4g, R10/R9 = %.4g) for zeros at %s",
			tg.kind, best.r10/best.r8, best.r10/best.r9, fmtHz(best.wz))
	}
	d.form = "Kerwin-Huelsman-Newcomb state-variable (summer and two integrators), " + d.form
	d.stage = b.done(out)
	return d, nil
}

// sv is a state-variable candidate: its parts and exact values, and its
// realised ω0, Q, gain and zero frequency.
type sv struct {
	c, c2, r1, r2, r3, r4, r6, r7, r8, r9, r10 float64
	x1, x2, x4, x6, x7, x8, x9                 float64
	w, q, g, wz                                float64
}

// svTop keeps the svTopN lowest-scoring candidates.
type svTop struct {
	c [svTopN]struct {
		cur        sv
		score, tie float64
	}
	n int
}

const svTopN = 8

// offer keeps the candidate if it is among the best so far.
func (t *svTop) offer(cur sv, score, tie float64) {
	i := t.n
	if i == svTopN {
		if score >= t.c[i-1].score {
			return
		}
		i--
	} else {
		t.n++
	}
	for ; i > 0 && t.c[i-1].score > score; i-- {
		t.c[i] = t.c[i-1]
	}
	t.c[i].cur, t.c[i].score, t.c[i].tie = cur, score, tie
}
