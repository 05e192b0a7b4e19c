package topology

import (
	"fmt"
	"math"
	"sort"
	"sync"

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
//	τ1 = R6·C1, τ2 = R7·C2, ρ = τ1/τ2, D(s) = s² + s·c/τ1 + b/(τ1·τ2):
//
//	hp = −a·s²/D,  bp = (a/τ1)·s/D,  lp = −(a/(τ1·τ2))/D
//	ω0² = b/(τ1·τ2),  Q = √(b·ρ)/c
//
// so ω0 is set by the integrators and R2, Q by the divider alone, and the
// gains are −a/b at DC (lowpass), −a at high frequency (highpass) and a/c
// at f0 (bandpass). Q needs β < 1, that is 1 + a + b > √(b·ρ)/Q. For the
// lowpass, highpass and bandpass the integrators are equal (ρ = 1), a is
// set by the section's gain, and for low Q b is raised above its usual 1
// (in octaves, until β ≤ 0.8).
//
// For the notch kinds a fourth op-amp U4 sums hp and lp: R8 (hp–s),
// R9 (lp–s), R10 (out–s) at its inverting input s, giving
//
//	out = a·(kh·s² + kl/(τ1·τ2))/D,  kh = R10/R8, kl = R10/R9,
//
// that is k·(s² + ωz²)/D with k = a·kh and ωz² = kl/(kh·τ1·τ2), so
//
//	kh = k/a,  kl/kh = b·(ωz/ω0)²,  gain k (highpass-notch, at ∞) or
//	a·kl/b (lowpass-notch and notch, at DC).
//
// The weights differ by b·(ωz/ω0)², which for zeros far from f0 is more
// than two resistors of the window can span (1e4 at ωz = 100·ω0 against
// 220 for 1 kΩ..220 kΩ), and very low or very high Q need a damping
// divider outside the window at a = b = ρ = 1 (Q = 0.08 needs β = 4.2 > 1,
// Q = 50 needs R4/R5 = 149). The notch kinds therefore choose the shape:
// a (the summer's input gain is free, as k = a·kh), b and ρ in octaves,
// and, when the weights still span too much, a T-network on the weaker
// path (svGrid and svEnv.choose give the rule). With a T-network R8 (or
// R9) runs from hp (or lp) to a node t, R11 from t to s and R12 from t to
// ground; its transfer resistance (the current into the virtual ground s
// per volt at the source, by nodal analysis at t) is
//
//	R_T = R8 + R11 + R8·R11/R12 = 2·Rt + Rt²/R12 for R8 = R11 = Rt,
//
// so that three resistors of the window give up to about 220² times their
// smallest value, and the weight is R10/R_T as for a plain resistor (the
// T-network of inverting-amplifier practice, from memory; rederived here).
// Each form realises the section's transfer function exactly with exact
// resistors. The internal nodes peak at about a·Q (hp), a·Q/√(b·ρ) (bp)
// and a·Q/b (lp) for high Q, as in every state-variable filter; hp tends
// to a and lp to a/b of the input at high frequency and DC, which the
// choice of shape keeps near one.
func stateVariable(tg target, o *options) (design, *Error) {
	if tg.order != 2 {
		return design{}, fail(StateVariable, ErrNoForm, "a second-order stage; no form for a first-order %s section (use rc-buffer or inverting-rc)", tg.kind)
	}
	if !hasAxisZeros(tg.kind) {
		sh, e := svPlainShape(tg)
		if e != nil {
			return design{}, e
		}
		return svSearch(tg, o, sh)
	}
	env := newSVEnv(tg, o)
	sh, enough := env.choose()
	if sh.margin < 0 {
		return design{}, fail(StateVariable, ErrLimits, "%s", env.outside(sh))
	}
	d, e := svSearch(tg, o, sh)
	if e == nil || !enough {
		return d, e
	}
	// The first shape with enough margin found no part values (coarse
	// series, capacitors at the window's edge): try the widest one.
	if alt := env.widest(); alt != sh {
		if d, e2 := svSearch(tg, o, alt); e2 == nil {
			return d, nil
		}
	}
	return design{}, e
}

// svPlainShape is the shape of the lowpass, highpass and bandpass: equal
// integrators, a set by the gain, b = 1 or the smallest octave above it
// that gives β ≤ 0.8.
func svPlainShape(tg target) (svShape, *Error) {
	sh := svShape{b: 1, rho: 1}
	beta := func(b float64) float64 {
		c := math.Sqrt(b) / tg.q
		return c / (1 + tg.plainSummerGain(b, c) + b)
	}
	for beta(sh.b) > 0.8 && sh.b < 1e6 {
		sh.b *= 2
	}
	if beta(sh.b) > 0.8 {
		return sh, fail(StateVariable, ErrLimits, "Q %.3g is too low for the damping divider (β = %.3g)", tg.q, beta(sh.b))
	}
	sh.a = tg.plainSummerGain(sh.b, math.Sqrt(sh.b)/tg.q)
	return sh, nil
}

// plainSummerGain returns a = R3/R1 of the lowpass, highpass and bandpass
// for given b and c (gains a/b, a and a/c).
func (tg target) plainSummerGain(b, c float64) float64 {
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

// Paths of the notch summer that may carry a T-network.
const (
	svNoTee = iota
	svTeeHP // R8 is the T: hp–t, t–s, t–ground
	svTeeLP // R9 is the T: lp–t, t–s, t–ground
)

// svShape is the arrangement of a state-variable stage: the ratios its
// exact part values follow from.
type svShape struct {
	a, b, rho float64 // summer input gain R3/R1, R3/R2 and τ1/τ2
	tee       int     // notch kinds: svNoTee, or the path with a T-network
	r10, rt   float64 // notch kinds: exact R10 and T series resistors
	margin    float64 // ln of the smallest ratio of an exact resistor to its nearer window bound
	limit     int     // the constraint that sets margin (svLim...)
}

// The constraints of a notch shape, for messages.
const (
	svLimSummer  = iota // R1, R2, R3
	svLimQ              // β < 1
	svLimDivider        // R4, R5
	svLimTau1           // R6 with C1 in the window
	svLimTau2           // R7 with C2
	svLimSum            // R8, R9, R10
	svLimTee            // R10, the strong path and the T-network
)

// svGridEntry is one shape of the notch search grid in octaves: a = 2^ia,
// b = 2^ib, ρ = 2^ir, with its preference cost.
type svGridEntry struct {
	ia, ib, ir, tee int8
	cost            float64
}

// Grid bounds in octaves.
const (
	svMaxA   = 3 // a from 1/8 to 8
	svMaxB   = 4 // b from 1/16 to 16
	svMaxRho = 8 // ρ from 1/256 to 256
)

// svGrid returns the notch shapes in order of preference (our rule): the
// classic a = b = ρ = 1 first, then by the cost |log2 a| + |log2 b| +
// |log2 ρ|/2 (ρ is mostly a capacitor ratio and moves only the bandpass
// node's level), plus one per octave by which the internal level at high
// frequency (hp, a) or DC (lp, a/b) exceeds the input (headroom), plus 3
// for a T-network (two more resistors). Among equal costs the shape that
// moves a less comes first, then b, then ρ (so a T-network before a ratio
// of equal cost), then the smaller octave. The grid is a from 1/8 to 8, b
// from 1/16 to 16 and ρ from 1/256 to 256.
var svGrid = sync.OnceValue(func() []svGridEntry {
	var g []svGridEntry
	for tee := range 2 {
		for ia := -svMaxA; ia <= svMaxA; ia++ {
			for ib := -svMaxB; ib <= svMaxB; ib++ {
				for ir := -svMaxRho; ir <= svMaxRho; ir++ {
					c := math.Abs(float64(ia)) + math.Abs(float64(ib)) + math.Abs(float64(ir))/2 +
						float64(max(0, ia, ia-ib)) + 3*float64(tee)
					g = append(g, svGridEntry{int8(ia), int8(ib), int8(ir), int8(tee), c})
				}
			}
		}
	}
	key := func(e svGridEntry) [4]int {
		abs := func(v int8) int { return int(max(v, -v)) }
		return [4]int{abs(e.ia), abs(e.ib), abs(e.ir), int(e.ia)*64 + int(e.ib)*8 + int(e.ir)}
	}
	sort.SliceStable(g, func(i, j int) bool {
		if g[i].cost != g[j].cost {
			return g[i].cost < g[j].cost
		}
		ki, kj := key(g[i]), key(g[j])
		for n := range ki {
			if ki[n] != kj[n] {
				return ki[n] < kj[n]
			}
		}
		return false
	})
	return g
})

// svEnv holds the logarithms a notch shape is judged by.
type svEnv struct {
	tg          target
	o           *options
	lo, hi, mid float64 // ln rmin, ln rmax and their mean
	lcmin       float64 // ln cmin
	lcmax       float64 // ln cmax
	lq, lw0     float64 // ln Q, ln ω0
	lk, lr2     float64 // ln k, 2·ln(ωz/ω0)
	need        float64 // the margin that is enough (ln)
}

func newSVEnv(tg target, o *options) *svEnv {
	e := &svEnv{tg: tg, o: o, lo: math.Log(o.rmin), hi: math.Log(o.rmax),
		lcmin: math.Log(o.cmin), lcmax: math.Log(o.cmax),
		lq: math.Log(tg.q), lw0: math.Log(tg.w0), lk: math.Log(tg.zeroScale()), lr2: 2 * math.Log(tg.wz/tg.w0)}
	e.mid = (e.lo + e.hi) / 2
	// Enough: a quarter more than the bound, or two series steps, so that
	// the rounded values and their neighbours stay inside.
	e.need = math.Log(1.25)
	if !o.exact {
		e.need = max(e.need, 2*math.Log(o.rstep))
	}
	return e
}

// choose returns the first shape of svGrid whose margin is enough, and
// whether there is one; else the widest shape (the largest margin, the
// first such in svGrid order). Enough is a quarter more than the window's
// bounds (or two series steps for a coarse series): every exact resistor
// is then at least 1.25 kΩ and at most 176 kΩ in the default window, so
// its rounded values and their neighbours stay inside.
func (e *svEnv) choose() (svShape, bool) {
	best := svShape{margin: math.Inf(-1)}
	for _, g := range svGrid() {
		sh := e.eval(g)
		if sh.margin >= e.need {
			return sh, true
		}
		if sh.margin > best.margin {
			best = sh
		}
	}
	return best, false
}

// widest returns the shape with the largest margin.
func (e *svEnv) widest() svShape {
	best := svShape{margin: math.Inf(-1)}
	for _, g := range svGrid() {
		if sh := e.eval(g); sh.margin > best.margin {
			best = sh
		}
	}
	return best
}

// winM returns the margin of a resistor ln value: the ln distance to the
// nearer window bound (negative outside).
func (e *svEnv) winM(l float64) float64 { return min(l-e.lo, e.hi-l) }

// eval builds the exact design of one shape in logarithms, as the search
// will: R3 centred for R1 = R3/a and R2 = R3/b, R4/R5 = 1/β − 1 straddling
// the middle, R6 and R7 as near the middle as a capacitor in the window
// allows, R10 centred for R8 and R9 (or placed for the T-network), and
// returns it with its margin: the smallest ln distance of any resistor to
// the window edge.
func (e *svEnv) eval(g svGridEntry) svShape {
	la, lb, lr := float64(g.ia)*math.Ln2, float64(g.ib)*math.Ln2, float64(g.ir)*math.Ln2
	sh := svShape{a: math.Ldexp(1, int(g.ia)), b: math.Ldexp(1, int(g.ib)), rho: math.Ldexp(1, int(g.ir)), tee: int(g.tee), margin: math.Inf(1)}
	lnW := e.hi - e.lo
	upd := func(m float64, lim int) {
		if m < sh.margin {
			sh.margin, sh.limit = m, lim
		}
	}
	// R3, R1, R2.
	upd((lnW-(max(0, la, lb)-min(0, la, lb)))/2, svLimSummer)
	// The damping divider.
	lbeta := (lb+lr)/2 - e.lq - math.Log(1+sh.a+sh.b)
	if !(lbeta < -1e-9) {
		sh.margin, sh.limit = math.Inf(-1), svLimQ
		return sh
	}
	upd((lnW-math.Abs(math.Log(math.Expm1(-lbeta))))/2, svLimDivider)
	// The integrators: τ1 = √(b·ρ)/ω0, τ2 = √(b/ρ)/ω0.
	for i, lt := range [2]float64{(lb+lr)/2 - e.lw0, (lb-lr)/2 - e.lw0} {
		r := min(max(e.mid, lt-e.lcmax), lt-e.lcmin)
		upd(e.winM(r), svLimTau1+i)
	}
	// The summer: kh = k/a, kl = kh·b·(ωz/ω0)².
	lkh := e.lk - la
	lkl := lkh + lb + e.lr2
	if sh.tee == svNoTee {
		hi, lo := max(0, lkh, lkl), min(0, lkh, lkl)
		upd((lnW-(hi-lo))/2, svLimSum)
		sh.r10 = math.Exp(e.mid + (hi+lo)/2)
		return sh
	}
	ls, lw := lkl, lkh
	sh.tee = svTeeHP
	if lkl < lkh {
		ls, lw, sh.tee = lkh, lkl, svTeeLP
	}
	u, lt, m := e.teeFit(ls, lw)
	upd(m, svLimTee)
	sh.r10, sh.rt = math.Exp(u), math.Exp(lt)
	return sh
}

// teeFit places R10 (ln u), the strong path R10/ks (ks = e^ls) and a
// T-network of transfer resistance R10/kw (kw = e^lw): series resistors Rt
// (ln lt) and the shunt Rt²/(R_T − 2·Rt). With all three in the window Rt
// and the shunt straddle its middle, Rt = (R_T·rmin·rmax)^(1/3), and the
// T's margin is about (2·ln rmax − ln rmin − ln R_T)/3: it falls as R10
// rises while those of R10 and the strong path rise with it from the
// bottom of the window, so the best R10 is where two of them meet or
// where R10 and the strong path are centred. It returns the best of
// those three and its margin.
func (e *svEnv) teeFit(ls, lw float64) (u, lt, m float64) {
	m = math.Inf(-1)
	for _, uc := range [3]float64{e.mid + lw/4, e.mid + (lw+3*ls)/4, e.mid + ls/2} {
		lT := uc - lw
		lrt := min(max((lT+e.lo+e.hi)/3, e.lo), e.hi)
		x := lrt - lT // ln(Rt/R_T): below −ln 2 for a positive shunt
		if !(x < -math.Ln2-1e-9) {
			continue
		}
		lsh := 2*lrt - lT - math.Log1p(-2*math.Exp(x))
		mm := min(e.winM(uc), e.winM(uc-ls), e.winM(lrt), e.winM(lsh))
		if mm > m {
			u, lt, m = uc, lrt, mm
		}
	}
	return u, lt, m
}

// outside explains why no notch shape fits: the widest one's limiting
// constraint.
func (e *svEnv) outside(sh svShape) string {
	tg := e.tg
	what := fmt.Sprintf("%s with zeros at %.3g·f0: even the widest state-variable arrangement (R3/R1 = %.3g, R3/R2 = %.3g, τ1/τ2 = %.3g", tg.kind, tg.wz/tg.w0, sh.a, sh.b, sh.rho)
	if sh.tee != svNoTee {
		what += ", a T-network in the summer"
	}
	what += ") "
	kh := tg.zeroScale() / sh.a
	kl := kh * sh.b * sq(tg.wz/tg.w0)
	switch sh.limit {
	case svLimQ:
		what += fmt.Sprintf("cannot reach Q %.3g with the damping divider", tg.q)
	case svLimDivider:
		beta := math.Sqrt(sh.b*sh.rho) / (tg.q * (1 + sh.a + sh.b))
		what += fmt.Sprintf("needs the damping divider R4/R5 = %.3g for Q %.3g", 1/beta-1, tg.q)
	case svLimTau1, svLimTau2:
		t := math.Sqrt(sh.b*sh.rho) / tg.w0
		if sh.limit == svLimTau2 {
			t = math.Sqrt(sh.b/sh.rho) / tg.w0
		}
		what += fmt.Sprintf("needs an integrator time constant of %s", eng(t, "s"))
	case svLimSum:
		what += fmt.Sprintf("needs summing weights R10/R8 = %.3g and R10/R9 = %.3g", kh, kl)
	case svLimTee:
		what += fmt.Sprintf("needs summing weights R10/R8 = %.3g and R10/R9 = %.3g, beyond a T-network", kh, kl)
	default:
		what += fmt.Sprintf("needs the summer ratios R3/R1 = %.3g, R3/R2 = %.3g", sh.a, sh.b)
	}
	return e.o.limitsMsg(tg.w0, what)
}

// svSearch finds the part values of one shape. The three rounding steps
// are those of the package comment.
func svSearch(tg target, o *options, sh svShape) (design, *Error) {
	notch := hasAxisZeros(tg.kind)
	// summerGain returns a for the kind, given b and c.
	summerGain := func(b, c float64) float64 {
		if notch {
			return sh.a
		}
		return tg.plainSummerGain(b, c)
	}
	b0, rho := sh.b, sh.rho
	c0 := math.Sqrt(b0*rho) / tg.q
	a0 := summerGain(b0, c0)
	divider := (1+a0+b0)/c0 - 1 // R4/R5 = 1/β − 1

	// R5 sits near the middle of the window with R4/R5 = (1 − β)/β; R3 is
	// placed so that R3, R1 = R3/a and R2 = R3/b all fit, and R10 as the
	// shape says.
	r5, ok := o.ratioBase(divider)
	if !ok {
		return design{}, fail(StateVariable, ErrLimits, "the damping divider R4/R5 = %.3g for Q %.3g (summer gain %.3g) does not fit the resistor window %s..%s",
			divider, tg.q, a0, eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
	}
	bases := o.baseCands(o.centred(a0, b0))
	var sums []float64
	if notch {
		sums = o.baseCands(sh.r10)
	}
	var p picker
	var best sv
	var top svTop // the best candidates of steps 1 and 2, for step 3
	var c6, c7, c2, c1, c4 [3]float64
	var d6, d7, d2, d1, d4 [3]float64 // their tie-break distances
	var c2buf [4]float64
	sb1, sb2 := math.Sqrt(b0*rho), math.Sqrt(b0/rho) // ω0·τ1 and ω0·τ2
	for _, c := range o.caps {
		x6 := sb1 / (tg.w0 * c)
		if !o.nearR(x6) {
			continue
		}
		n6 := o.rcandsTie(x6, &c6, &d6)
		// The second integrator's capacitor: C1/ρ (clamped to the window)
		// or a neighbour (which breaks the lattice of series ratios that
		// equal values keep ω0 on).
		for _, cc := range o.capsNear(c2buf[:0], c/rho, 1) {
			x7 := sb2 / (tg.w0 * cc)
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
		var p3 picker
		if sh.tee == svNoTee {
			svSums(tg, o, sums, &cur, &p3)
		} else {
			svTeeSums(tg, o, sh, sums, &cur, &p3)
		}
		if p3.ok && p.wants(tc.score+p3.score) && p.take(tc.score+p3.score, tc.tie+p3.tie) {
			best = cur
		}
	}
	if !p.ok {
		what := fmt.Sprintf("summer gain R3/R1 = %.3g, R3/R2 = %.3g, damping divider R4/R5 = %.3g", a0, b0, divider)
		if notch {
			what += fmt.Sprintf(", τ1/τ2 = %.3g", rho)
			if sh.tee != svNoTee {
				what += ", a T-network in the summer"
			}
		}
		return design{}, fail(StateVariable, ErrLimits, "%s", o.limitsMsg(tg.w0, what))
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
		n8, n9 := "s", "s"
		switch sh.tee {
		case svTeeHP:
			n8 = "t"
		case svTeeLP:
			n9 = "t"
		}
		b.res("hp", n8, best.r8, best.x8)
		b.res("lp", n9, best.r9, best.x9)
		b.res("out", "s", best.r10, best.r10)
		b.amp(circuit.Ground, "s", "out")
		w8, w9 := fmt.Sprintf("R10/R8 = %.4g", best.r10/best.r8), fmt.Sprintf("R10/R9 = %.4g", best.r10/best.r9)
		tee := ""
		if sh.tee != svNoTee {
			b.res("t", "s", best.r11, best.x11)
			b.res("t", circuit.Ground, best.r12, best.x12)
			rt := 2*best.r11 + best.r11*best.r11/best.r12
			path, ref := "highpass", "R8"
			if sh.tee == svTeeHP {
				w8 = fmt.Sprintf("R10/R_T = %.4g", best.r10/rt)
			} else {
				w9 = fmt.Sprintf("R10/R_T = %.4g", best.r10/rt)
				path, ref = "lowpass", "R9"
			}
			tee = fmt.Sprintf("; the %s path is a T-network (%s, R11 in series, R12 to ground: R_T = %s) for a weight too small for one resistor", path, ref, eng(rt, "Ω"))
		}
		out = "out"
		d.form = fmt.Sprintf("%s output: U4 sums highpass and lowpass (%s, %s) for zeros at %s%s",
			tg.kind, w8, w9, fmtHz(best.wz), tee)
		if sh.a != 1 || sh.b != 1 || sh.rho != 1 {
			d.form += fmt.Sprintf("; R3/R1 = %.3g, R3/R2 = %.3g, τ1/τ2 = %.3g to keep the parts in the window", sh.a, sh.b, sh.rho)
		}
	}
	d.form = "Kerwin-Huelsman-Newcomb state-variable (summer and two integrators), " + d.form
	d.stage = b.done(out)
	return d, nil
}

// svSums is step 3 with plain summing resistors: R8 and R9 are rounded
// for the weights kh = k/a and kl = kh·ωz²·τ1·τ2 of the candidate's
// realised a, τ1 and τ2, for each R10 in sums.
func svSums(tg target, o *options, sums []float64, cur *sv, p3 *picker) {
	var c8, c9, d8, d9 [3]float64
	t1, t2 := cur.r6*cur.c, cur.r7*cur.c2
	br := cur.r3 / cur.r2
	a := cur.r3 / cur.r1
	kh := tg.zeroScale() / a
	kl := kh * tg.wz * tg.wz * t1 * t2
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
}

// svTeeSums is step 3 with a T-network on the weaker path: for each R10 in
// sums the strong path's resistor is rounded for its weight; the weak
// weight that puts the zeros exactly with the rounded strong one gives the
// T's transfer resistance R_T; its series resistors are rounded from the
// shape's value and the shunt Rt²/(R_T − 2·Rt) from that.
func svTeeSums(tg target, o *options, sh svShape, sums []float64, cur *sv, p3 *picker) {
	var cs, ds, ct, dt, ch, dh [3]float64
	t1, t2 := cur.r6*cur.c, cur.r7*cur.c2
	br := cur.r3 / cur.r2
	a := cur.r3 / cur.r1
	kh := tg.zeroScale() / a
	z := tg.wz * tg.wz * t1 * t2 // kl/kh
	ks := kh * z                 // the strong weight: kl with the T on hp
	if sh.tee == svTeeLP {
		ks = kh
	}
	nt := o.rcandsTie(sh.rt, &ct, &dt)
	for _, r10 := range sums {
		xs := r10 / ks
		ns := o.rcandsTie(xs, &cs, &ds)
		for is, rs := range cs[:ns] {
			ksr := r10 / rs
			kw := ksr / z // the weak weight for exact zeros
			if sh.tee == svTeeLP {
				kw = ksr * z
			}
			rtx := r10 / kw
			for it, rt := range ct[:nt] {
				xh := rt * rt / (rtx - 2*rt)
				if !(xh > 0) {
					continue
				}
				nh := o.rcandsTie(xh, &ch, &dh)
				for ih, rh := range ch[:nh] {
					kwr := r10 / (2*rt + rt*rt/rh)
					khr, klr := kwr, ksr
					if sh.tee == svTeeLP {
						khr, klr = ksr, kwr
					}
					wz := math.Sqrt(klr / (khr * t1 * t2))
					g := a * khr
					if tg.kind != section.HighpassNotch {
						g = a * klr / br
					}
					s := errScore(wz, tg.wz) + errScore(g, tg.g)
					if p3.wants(s) && p3.take(s, ds[is]+2*dt[it]+dh[ih]+o.tieLog(r10)) {
						cur.r10, cur.r11, cur.r12, cur.x11, cur.x12, cur.wz, cur.g = r10, rt, rh, sh.rt, xh, wz, g
						if sh.tee == svTeeHP {
							cur.r8, cur.x8, cur.r9, cur.x9 = rt, sh.rt, rs, xs
						} else {
							cur.r8, cur.x8, cur.r9, cur.x9 = rs, xs, rt, sh.rt
						}
					}
				}
			}
		}
	}
}

// sv is a state-variable candidate: its parts and exact values, and its
// realised ω0, Q, gain and zero frequency. With a T-network, the T's first
// series resistor is r8 or r9, its second r11 and its shunt r12.
type sv struct {
	c, c2, r1, r2, r3, r4, r6, r7, r8, r9, r10, r11, r12 float64
	x1, x2, x4, x6, x7, x8, x9, x11, x12                 float64
	w, q, g, wz                                          float64
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
