package topology

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// Limits of the one-amplifier notch (see [oneAmpNotch]).
const (
	// OneAmpNotchMaxQ is the pole Q above which [Auto] leaves notch
	// sections to the state-variable circuit. The one-amplifier notch's
	// core is the Delyiannis-Friend bandpass, whose resistor spread R3/R1
	// is at least 4Q² (Q = 5: 100, already half the default window's
	// ratio of 220) and whose op-amp must supply a loop gain of about 2Q²
	// at f0; the state-variable circuit sets Q by one resistor ratio and
	// keeps its spread near one (common practice: single-amplifier
	// biquads are kept to moderate Q).
	OneAmpNotchMaxQ = 5
	// MaxNotchResidualDB bounds [notchResidual]: the stage's gain at its
	// zero frequency, relative to its reference gain, that the parts'
	// tolerances leave (rms, first order, every part uniform
	// within its tolerance: the series' customary one for resistors,
	// CapacitorTolerancePct for capacitors). The zeros of this form are
	// on the jω axis only while the numerator's s term cancels, so a part
	// error leaves a residual; the state-variable notch keeps its zeros
	// on the axis (its sum has no bandpass term), and [Auto] turns to it
	// beyond this bound.
	// −30 dB is our choice: a notch that keeps 30 dB at its zero with
	// ordinary parts, and a typical elliptic section's zeros do their
	// work together with the other sections' roll-off.
	MaxNotchResidualDB = -30
)

// Rounding bounds of the one-amplifier notch with series values (our
// choice; those the state-variable notch keeps in its sweep): the zeros'
// frequency within 1 % and their damping ζz within 0.01, f0 within 2 %
// and Q within 3 %. The s term that the input split cancels is a
// difference, and at low Q or far zeros series values may not cancel it
// well enough; such a section is ErrLimits (auto then takes the
// state-variable stage).
const (
	maxZeroErr     = 0.01
	maxZeroDamping = 0.01
	maxPoleErr     = 0.02
	maxQErr        = 0.03
)

// noiseWeight weighs ln of [onNoise] and half ln of [notchResidual] (of
// the exact design) in the part search's score against the squared
// relative errors: twice the noise power, or 12 dB more residual at the
// zeros, costs as much as a 0.8 % error (our choice: above the
// MaxNotchResidualDB bound, noise matters more).
const noiseWeight = 1e-4

// onNoise returns a noise proxy of the stage, in V²/Hz at ω0: the
// op-amp's voltage noise (10 nV/√Hz, common practice for a general-purpose
// part) and the thermal noise of the + input divider's Thevenin
// resistance times the noise gain at ω0, plus the thermal noise of R3 and
// that of R6's current through R3, at 300 K. The noise gain from the +
// input with the input grounded is
//
//	NG(s) = ([s·(C2 + C3) + G3 + G6]·[G1 + s·(C1 + C2)] − s²·C2²) / D(s)
//
// (C3 and R6 are AC-grounded either way), 1 + Q²·(C1 + C2)/C1 at ω0
// without them.
func onNoise(v onParts, w0 float64) float64 {
	const kT4 = 4 * 1.380649e-23 * 300
	const en = 10e-9
	inv := func(r float64) float64 {
		if r == 0 {
			return 0
		}
		return 1 / r
	}
	g1, g3, g6 := inv(v.r1)+inv(v.r2), inv(v.r3), inv(v.r6)
	s := complex(0, w0)
	num := (s*complex(v.c2+v.c3, 0)+complex(g3+g6, 0))*(complex(g1, 0)+s*complex(v.c1+v.c2, 0)) - s*s*complex(v.c2*v.c2, 0)
	den := s*s*complex(v.c1*v.c2, 0) + s*complex(g3*(v.c1+v.c2), 0) + complex(g1*g3, 0)
	ng := cmplx.Abs(num / den)
	rth := 0.0
	if v.r4 > 0 {
		rth = v.r4 * v.r5 / (v.r4 + v.r5)
	}
	return ng*ng*(en*en+kT4*rth) + kT4*v.r3 + kT4*g6*v.r3*v.r3
}

// oneAmpNotch realises a lowpass-notch, highpass-notch or notch section on
// one op-amp: the Delyiannis-Friend bandpass with feedforward from the
// input to both op-amp inputs, the arrangement of J. J. Friend, C. A.
// Harris and D. Hilberman, "STAR: an active biquadratic filter section",
// IEEE Trans. Circuits and Systems CAS-22 (1975), 115–121 (used from
// memory). Boctor's single-amplifier lowpass-notch (S. A. Boctor, IEEE
// Trans. CAS-22, 1975) reaches the same transfer functions with a twin
// path; this form was chosen because every constraint of it is set by a
// resistor ratio, so exact resistors with series capacitors reproduce the
// section exactly. The equations below were derived here by nodal
// analysis and are checked in the tests against the circuit model's
// nodal analysis and ngspice.
//
// Nodes: in, a, m (inverting input), p (non-inverting input), out.
// Parts: R1 in–a, R2 a–ground (optional), R3 m–out, C1 a–out, C2 a–m
// (the bandpass core); R4 in–p and R5 p–ground, the divider
// K = R5/(R4 + R5) (absent, K = 1, when p is the input itself); R6 in–m
// or R6 m–ground, and optionally C3 m–ground (the feedforward into m).
// With G1 = 1/R1 + 1/R2, α = (1/R1)/G1, G3 = 1/R3, and the feedforward
// e = G6·(1 − K) (R6 in–m) or −G6·K (R6 m–ground), f = −C3·K:
//
//	H = (n2·s² + n1·s + n0) / (C1·C2·s² + G3·(C1 + C2)·s + G1·G3)
//	n2 = K·C1·C2 − f·(C1 + C2)
//	n1 = K·C2·G1 + K·G3·(C1 + C2) − α·C2·G1 − e·(C1 + C2) − f·G1
//	n0 = G1·(K·G3 − e)
//
// The poles are the bandpass core's: ω0² = G1·G3/(C1·C2) and
// Q = √(G1·G3·C1·C2)/(G3·(C1 + C2)), so G1 = ω0·Q·(C1 + C2) and
// G3 = ω0·C1·C2/(Q·(C1 + C2)), R3/R1 = Q²·(C1 + C2)²/(C1·C2) ≥ 4Q². The
// zeros are on the jω axis when n1 = 0, which the input split sets:
//
//	α = K·(1 + C3/C2) + h0·r/Q²,  r = C1/(C1 + C2),  h0 = K − e/G3
//
// h0 = n0/(G1·G3) is the DC gain and h∞ = n2/(C1·C2) = K·m,
// m = 1 + C3·(1/C1 + 1/C2), the high-frequency gain; ωz²/ω0² = h0/h∞.
// A lowpass-notch or notch takes h0 = g, h∞ = g·ω0²/ωz²; a highpass-notch
// h∞ = g, h0 = g·ωz²/ω0². K = h∞/m (C3 = 0 when h∞ ≤ 1, else C3 raises
// m above h∞), then e = G3·(K − h0): R6 m–ground when e < 0 (the gain
// above K, R6 = R3·K/(h0 − K)), R6 in–m when e > 0 (needs K < 1). The
// form's limit is α ≤ 1: for C3 = 0, g·(ω0²/ωz² + r/Q²) ≤ 1 for the
// lowpass-notch, g·(1 + ωz²·r/(ω0²·Q²)) ≤ 1 for the highpass-notch.
// Capacitors are tried with C1 ≤ C2 (smaller r, more gain headroom, at
// the cost of spread).
func oneAmpNotch(tg target, o *options) (design, *Error) {
	if tg.order != 2 || !hasAxisZeros(tg.kind) {
		return design{}, fail(OneAmpNotch, ErrNoForm, "no %s form (lowpass-notch, highpass-notch and notch only)", tg.kind)
	}
	lz := tg.wz * tg.wz / (tg.w0 * tg.w0) // ωz²/ω0²
	var h0, hinf float64
	if tg.kind == section.HighpassNotch {
		hinf, h0 = tg.g, tg.g*lz
	} else {
		h0, hinf = tg.g, tg.g/lz
	}
	var p picker
	var best onDesign
	var c1buf [6]float64
	var cgbuf [8]float64
	limit := math.Inf(1)    // least α seen, for the message
	minFloor := math.Inf(1) // least notch residual seen, for the message
	rounding := false       // a candidate failed the rounding bounds
	for _, c2 := range o.caps {
		// C1 ≤ C2 leaves α more headroom (gain), C1 > C2 lowers the
		// noise gain 1 + Q²·(C1 + C2)/C1 at f0.
		c1s := o.capsAtMost(c1buf[:0], c2, 3)
		c1s = o.capsAtLeast(c1s, c2*1.01, 2)
		for _, c1 := range c1s {
			// C3 m–ground raises h∞ to K·m above K (m = h∞/K): tried
			// with K near 0.7, 0.4 and 0.2 of min(h∞, 1) when h∞ > 0.9
			// (a gain above one, or a highpass-notch near it, where R6
			// in–m would need K < 1), and with K near h0, 1.5·h0, 2·h0
			// and 3·h0 when h0 < h∞ (zeros below f0), so that the DC
			// gain h0 = K − e/G3 is not a small difference of rounded
			// terms. C3 in–m (h∞ well below h0, zeros far above f0):
			// the values that put K near h0, h0/2 and h0/3
			// (K = (h∞ + c)/(1 + c), c = C3·(1/C1 + 1/C2)), so that R6
			// to ground need not raise the gain by h0/h∞.
			type feed struct {
				c  float64
				in bool
			}
			var cgs []feed
			if hinf <= 1 {
				cgs = append(cgs, feed{})
			}
			var kts []float64
			if hinf > 0.9 {
				kts = append(kts, 0.7*min(hinf, 1), 0.4*min(hinf, 1), 0.2*min(hinf, 1))
			}
			if h0 < hinf {
				kts = append(kts, h0, 1.5*h0, 2*h0, 3*h0)
			}
			for _, kt := range kts {
				if kt <= min(hinf, 1) && kt < hinf {
					mm := hinf / kt
					for _, c := range o.capsNear(cgbuf[:0], (mm-1)/(1/c1+1/c2), 1) {
						cgs = append(cgs, feed{c, false})
					}
				}
			}
			for _, kt := range []float64{h0, h0 / 2, h0 / 3} {
				if kt = min(kt, 0.95); hinf <= 1 && kt > 1.5*hinf {
					cc := (kt - hinf) / (1 - kt)
					for _, c := range o.capsNear(cgbuf[:0], cc/(1/c1+1/c2), 1) {
						cgs = append(cgs, feed{c, true})
					}
				}
			}
			for _, cg := range cgs {
				d, a, ok := onSearch(tg, o, c1, c2, cg.c, cg.in, h0, hinf, &p, &minFloor, &rounding)
				limit = min(limit, a)
				if ok {
					best = d
				}
			}
		}
	}
	if !p.ok {
		what := ""
		switch {
		case limit > 1:
			what = fmt.Sprintf("the input split R1:R2 needs α = %.3g > 1 at the best capacitors: the gain %.4g is above the form's limit", limit, tg.g)
		case rounding:
			return design{}, fail(OneAmpNotch, ErrLimits, "%s: with %s values no stage keeps its zeros within %g %% (damping ζz ≤ %g), f0 within %g %% and Q within %g %%: the s term that R1:R2 cancels is a difference that the series rounds too coarsely here",
				tg.kind, o.rs.Name(), 100*maxZeroErr, maxZeroDamping, 100*maxPoleErr, 100*maxQErr)
		case minFloor > o.maxFloor && finite(minFloor):
			return design{}, fail(OneAmpNotch, ErrLimits, "%s: the part tolerances (%g %% resistors, %g %% capacitors) would leave %.1f dB at the zeros at best (rms, first order), above the limit %d dB: the s term that R1:R2 cancels is a difference of terms",
				tg.kind, o.rtol, o.ctol, 20*math.Log10(minFloor), MaxNotchResidualDB)
		}
		return design{}, fail(OneAmpNotch, ErrLimits, "%s: %s", tg.kind, o.limitsMsg(tg.w0, what))
	}
	best.floor = notchResidual(best.v, best.wz, best.g, o.rtol, o.ctol)
	return best.build(tg, o), nil
}

// onParts are the part values of the one-amplifier notch (0: absent; r6g
// true when R6 goes from m to ground).
type onParts struct {
	r1, r2, r3, r4, r5, r6 float64
	c1, c2, c3             float64
	r6g, c3in              bool
}

// onDesign is a candidate: parts as built, their exact values, and the
// realised figures.
type onDesign struct {
	v, x        onParts
	w0, q, g    float64
	wz, floor   float64
	zdamp       float64
	alpha, kdiv float64
}

// onCoef returns the numerator and denominator coefficients of the stage
// as built (the formula in [oneAmpNotch]).
func onCoef(v onParts) (n2, n1, n0, d2, d1, d0 float64) {
	inv := func(r float64) float64 {
		if r == 0 {
			return 0
		}
		return 1 / r
	}
	g1a, g1b, g3, g6 := inv(v.r1), inv(v.r2), inv(v.r3), inv(v.r6)
	g1 := g1a + g1b
	k := 1.0
	if v.r4 > 0 {
		k = v.r5 / (v.r4 + v.r5)
	}
	e := g6 * (1 - k)
	if v.r6g {
		e = -g6 * k
	}
	f := -v.c3 * k
	if v.c3in {
		f = v.c3 * (1 - k)
	}
	c1, c2 := v.c1, v.c2
	n2 = k*c1*c2 - f*(c1+c2)
	n1 = k*c2*g1 + k*g3*(c1+c2) - c2*g1a - e*(c1+c2) - f*g1
	n0 = g1 * (k*g3 - e)
	return n2, n1, n0, c1 * c2, g3 * (c1 + c2), g1 * g3
}

// onFigures returns the realised ω0, Q, reference gain and zero ω of the
// parts for a section of kind k.
func onFigures(v onParts, k section.Kind) (w0, q, g, wz float64) {
	n2, _, n0, d2, d1, d0 := onCoef(v)
	w0 = math.Sqrt(d0 / d2)
	q = w0 * d2 / d1
	wz = math.Sqrt(n0 / n2)
	if k == section.HighpassNotch {
		g = n2 / d2
	} else {
		g = n0 / d0
	}
	return w0, q, g, wz
}

// notchResidual returns the rms, to first order, of the stage's gain at
// the design's zero frequency ωz, relative to the reference gain g, when
// every part is uniform within its tolerance (rtolPct for resistors,
// ctolPct for capacitors; σ = tol/√3). The gain there is
// |N(jωz)|/|D(jωz)| with N(jω) = n0 − n2·ω² + j·n1·ω, zero as designed;
// a part error moves the zeros (n0, n2) and takes them off the jω axis
// (n1), and N's first-order spread is √Σ |∂N(jωz)/∂ln x|²·σx². The
// derivatives are those of [onCoef]'s formula, by the chain rule through
// its intermediate terms (conductances, the divider K, the feedforward e
// and f); notchResidualFD, the same by relative steps of 1e-6, checks
// them in the tests. It repeats onCoef's few lines of intermediate terms
// on purpose: both run for every candidate of the part search, and
// sharing them through a returned struct made the elliptic-8 part search
// 1.3× slower.
func notchResidual(v onParts, wz, g, rtolPct, ctolPct float64) float64 {
	inv := func(r float64) float64 {
		if r == 0 {
			return 0
		}
		return 1 / r
	}
	g1a, g1b, g3, g6 := inv(v.r1), inv(v.r2), inv(v.r3), inv(v.r6)
	g1 := g1a + g1b
	k := 1.0
	if v.r4 > 0 {
		k = v.r5 / (v.r4 + v.r5)
	}
	e, deDg6 := g6*(1-k), 1-k
	if v.r6g {
		e, deDg6 = -g6*k, -k
	}
	f, dfDc3 := -v.c3*k, -k
	if v.c3in {
		f, dfDc3 = v.c3*(1-k), 1-k
	}
	c1, c2 := v.c1, v.c2
	cs := c1 + c2
	w2 := wz * wz
	// ∂(n2, n1, n0) by each intermediate, as re = ∂n0 − ω²·∂n2 and
	// im = ω·∂n1 of N(jωz).
	type dn struct{ n2, n1, n0 float64 }
	at := func(d dn) (float64, float64) { return d.n0 - w2*d.n2, wz * d.n1 }
	dG1a := dn{0, k*c2 - c2 - f, k*g3 - e}
	dG1b := dn{0, k*c2 - f, k*g3 - e}
	dG3 := dn{0, k * cs, g1 * k}
	dE := dn{0, -cs, -g1}
	dF := dn{-cs, -g1, 0}
	// K's total derivative: its own terms and through e and f (both
	// have ∂/∂K = −G6 and −C3 in either arrangement).
	dK := dn{c1*c2 + v.c3*cs, c2*g1 + g3*cs + g6*cs + v.c3*g1, g1*g3 + g1*g6}
	dC1 := dn{k*c2 - f, k*g3 - e, 0}
	dC2 := dn{k*c1 - f, k*g1 + k*g3 - g1a - e, 0}
	var s2 float64
	// add counts a part whose ∂N/∂ln x is a·(the intermediate's ∂N).
	add := func(a float64, d dn, tolPct float64) {
		re, im := at(d)
		sig := tolPct / 100 / math.Sqrt(3)
		s2 += a * a * (re*re + im*im) * sig * sig
	}
	// ∂/∂ln R = −G·∂/∂G for a resistor seen as its conductance.
	if v.r1 != 0 {
		add(g1a, dG1a, rtolPct)
	}
	if v.r2 != 0 {
		add(g1b, dG1b, rtolPct)
	}
	if v.r3 != 0 {
		add(g3, dG3, rtolPct)
	}
	if v.r6 != 0 {
		add(g6*deDg6, dE, rtolPct)
	}
	if v.r4 > 0 {
		// ∂K/∂ln R4 = −K(1 − K) = −∂K/∂ln R5.
		add(k*(1-k), dK, rtolPct)
		add(k*(1-k), dK, rtolPct)
	}
	if c1 != 0 {
		add(c1, dC1, ctolPct)
	}
	if c2 != 0 {
		add(c2, dC2, ctolPct)
	}
	if v.c3 != 0 {
		add(v.c3*dfDc3, dF, ctolPct)
	}
	d2, d1, d0 := c1*c2, g3*cs, g1*g3
	return math.Sqrt(s2) / math.Hypot(d0-d2*w2, d1*wz) / g
}

// notchResidualFD is notchResidual by relative steps of 1e-6 in each
// part (the definition, for the tests).
func notchResidualFD(v onParts, wz, g, rtolPct, ctolPct float64) float64 {
	num := func(v onParts) complex128 {
		n2, n1, n0, _, _, _ := onCoef(v)
		return complex(n0-n2*wz*wz, n1*wz)
	}
	_, _, _, d2, d1, d0 := onCoef(v)
	base := num(v)
	const h = 1e-6
	var s2 float64
	add := func(x *float64, tolPct float64) {
		if *x == 0 {
			return
		}
		x0 := *x
		*x = x0 * (1 + h)
		dn := (num(v) - base) / complex(h, 0)
		*x = x0
		sig := tolPct / 100 / math.Sqrt(3)
		s2 += sq(cmplx.Abs(dn) * sig)
	}
	for _, r := range []*float64{&v.r1, &v.r2, &v.r3, &v.r4, &v.r5, &v.r6} {
		add(r, rtolPct)
	}
	for _, c := range []*float64{&v.c1, &v.c2, &v.c3} {
		add(c, ctolPct)
	}
	return math.Sqrt(s2) / math.Hypot(d0-d2*wz*wz, d1*wz) / g
}

// onSearch designs the stage for one choice of capacitors and reports the
// least α seen and whether the picker took a candidate (then d holds it).
func onSearch(tg target, o *options, c1, c2, cg float64, cgin bool, h0, hinf float64, p *picker, minFloor *float64, rounding *bool) (d onDesign, alpha float64, took bool) {
	alpha = math.Inf(1)
	m := 1 + cg*(1/c1+1/c2)
	kx := hinf / m
	if cgin {
		// h∞ = K − (1 − K)·c with c = m − 1.
		kx = (hinf + m - 1) / m
	}
	if kx > 1*(1+1e-12) {
		return d, alpha, false
	}
	g1x := tg.w0 * tg.q * (c1 + c2)
	g3x := tg.w0 * c1 * c2 / (tg.q * (c1 + c2))
	r := c1 / (c1 + c2)
	// Ideal α, for pruning and the message.
	fx := -cg * kx
	if cgin {
		fx = cg * (1 - kx)
	}
	alpha = kx - fx/c2 + h0*r/(tg.q*tg.q)
	if alpha > 1+1e-9 {
		return d, alpha, false
	}
	if !o.nearR(1/g1x) || !o.nearR(1/g3x) {
		return d, alpha, false
	}
	// The divider K = R5/(R4 + R5): 1/K = 1 + R4/R5.
	type div struct{ r4, r5, x4, x5 float64 }
	var divs []div
	if kx >= 1-1e-9 {
		divs = []div{{}}
	} else {
		r4, r5, x4, x5, ok := o.lowDivider(1/kx - 1)
		if !ok {
			return d, alpha, false
		}
		divs = []div{{r4, r5, x4, x5}}
	}
	var c3s [3]float64
	for _, dv := range divs {
		k := 1.0
		if dv.r4 > 0 {
			k = dv.r5 / (dv.r4 + dv.r5)
		}
		n3 := o.rcands(1/g3x, &c3s)
		for _, r3 := range c3s[:n3] {
			g3 := 1 / r3
			// Feedforward e for the DC gain h0 with K and R3 as built.
			e := g3 * (k - h0)
			var x6 float64
			r6g := false
			switch {
			case math.Abs(e) <= 1e-9*g3:
			case e < 0:
				x6, r6g = -k/e, true
			case k < 1-1e-9:
				x6 = (1 - k) / e
			default:
				continue // K = 1 leaves nothing to feed forward with
			}
			var c6s [3]float64
			n6 := 1
			if x6 > o.rmax*1.25 && !o.exact {
				// Rounding the divider left a feedforward too small for
				// the window: leave R6 out (the score sees what it costs).
				x6 = 0
			}
			if x6 > 0 {
				if !o.nearR(x6) {
					continue
				}
				n6 = o.rcands(x6, &c6s)
			}
			for j := range n6 {
				r6 := c6s[j]
				if x6 == 0 {
					r6 = 0
				}
				// The input split: α·G1 cancels n1, G1 = ω0·Q·(C1 + C2).
				ev := 0.0
				if r6 > 0 {
					ev = (1 - k) / r6
					if r6g {
						ev = -k / r6
					}
				}
				f := -cg * k
				if cgin {
					f = cg * (1 - k)
				}
				g1a := k*g1x + (c1+c2)*(k*g3-ev)/c2 - f*g1x/c2
				a := g1a / g1x
				if !(a > 0) || a > 1+1e-9 {
					continue
				}
				x1 := 1 / g1a
				x2 := 0.0
				if a < 1-1e-9 {
					x2 = 1 / (g1x - g1a)
				}
				if !o.nearR(x1) || (x2 > 0 && !o.nearR(x2)) {
					continue
				}
				// The notch residual of the exact design (it moves
				// little with rounding) against the bound auto applies.
				fl := notchResidual(onParts{r1: x1, r2: x2, r3: 1 / g3x, r4: dv.x4, r5: dv.x5, r6: x6, c1: c1, c2: c2, c3: cg, r6g: r6g, c3in: cgin}, tg.wz, tg.g, o.rtol, o.ctol)
				*minFloor = min(*minFloor, fl)
				if fl > o.maxFloor {
					continue
				}
				var c1s, c2s [3]float64
				n1 := o.rcands(x1, &c1s)
				n2 := 1
				if x2 > 0 {
					n2 = o.rcands(x2, &c2s)
				}
				for _, r1 := range c1s[:n1] {
					for i2 := range n2 {
						r2 := c2s[i2]
						if x2 == 0 {
							r2 = 0
						}
						v := onParts{r1: r1, r2: r2, r3: r3, r4: dv.r4, r5: dv.r5, r6: r6, c1: c1, c2: c2, c3: cg, r6g: r6g, c3in: cgin}
						n2c, n1c, n0c, d2c, d1c, d0c := onCoef(v)
						w0 := math.Sqrt(d0c / d2c)
						q := w0 * d2c / d1c
						wz := math.Sqrt(n0c / n2c)
						gr := n0c / d0c
						if tg.kind == section.HighpassNotch {
							gr = n2c / d2c
						}
						damp := n1c / (n2c * wz) // 1/Qz of the zeros as built
						// Rounding bounds (see oneAmpNotch) first, then
						// the score: squared relative errors plus
						// noiseWeight·ln of the noise proxy.
						if math.Abs(wz/tg.wz-1) > maxZeroErr || math.Abs(damp/2) > maxZeroDamping ||
							math.Abs(w0/tg.w0-1) > maxPoleErr || math.Abs(q/tg.q-1) > maxQErr {
							*rounding = true
							continue
						}
						s := errScore(w0, tg.w0) + errScore(q, tg.q) + errScore(gr, tg.g) + errScore(wz, tg.wz) + damp*damp +
							noiseWeight*(math.Log(onNoise(v, tg.w0))+0.5*math.Log(fl))
						if !finite(s) || !p.wants(s) {
							continue
						}
						// Tie-break: resistors near the window's middle.
						tie := o.tieLog(r1) + o.tieLog(r3)
						for _, rr := range []float64{r2, dv.r4, dv.r5, r6} {
							if rr > 0 {
								tie += o.tieLog(rr)
							}
						}
						if p.take(s, tie) {
							took = true
							d = onDesign{
								v:  v,
								x:  onParts{r1: x1, r2: x2, r3: 1 / g3x, r4: dv.x4, r5: dv.x5, r6: x6, c1: c1, c2: c2, c3: cg, r6g: r6g},
								w0: w0, q: q, g: gr, wz: wz, zdamp: damp / 2, alpha: a, kdiv: k,
							}
						}
					}
				}
			}
		}
	}
	return d, alpha, took
}

// build assembles the stage.
func (d onDesign) build(tg target, o *options) design {
	b := newBuilder(o, OneAmpNotch)
	b.res(circuit.In, "a", d.v.r1, d.x.r1)
	if d.v.r2 > 0 {
		b.res("a", circuit.Ground, d.v.r2, d.x.r2)
	}
	b.res("m", "out", d.v.r3, d.x.r3)
	plus := circuit.In
	if d.v.r4 > 0 {
		plus = "p"
		b.res(circuit.In, "p", d.v.r4, d.x.r4)
		b.res("p", circuit.Ground, d.v.r5, d.x.r5)
	}
	if d.v.r6 > 0 {
		if d.v.r6g {
			b.res("m", circuit.Ground, d.v.r6, d.x.r6)
		} else {
			b.res(circuit.In, "m", d.v.r6, d.x.r6)
		}
	}
	b.capa("a", "out", d.v.c1)
	b.capa("a", "m", d.v.c2)
	if d.v.c3 > 0 {
		if d.v.c3in {
			b.capa(circuit.In, "m", d.v.c3)
		} else {
			b.capa("m", circuit.Ground, d.v.c3)
		}
	}
	b.amp(plus, "m", "out")
	form := fmt.Sprintf("one-op-amp %s (Delyiannis-Friend bandpass with feedforward to both inputs, Friend-Harris-Hilberman 1975): input split α = %.3g cancels the s term", tg.kind, d.alpha)
	if d.v.r4 > 0 {
		form += fmt.Sprintf(", + input at K = %.4g of the input", d.kdiv)
	}
	switch {
	case d.v.r6 > 0 && d.v.r6g:
		form += ", R6 to ground raises the low-frequency gain"
	case d.v.r6 > 0:
		form += ", R6 feeds the input to the inverting node"
	}
	switch {
	case d.v.c3 > 0 && d.v.c3in:
		form += ", C3 feeds the input to the inverting node to lower the high-frequency gain"
	case d.v.c3 > 0:
		form += ", C3 raises the high-frequency gain"
	}
	form += fmt.Sprintf("; part tolerances leave %.1f dB at the zeros (rms, first order; limit %d dB in auto)", 20*math.Log10(d.floor), MaxNotchResidualDB)
	return design{stage: b.done("out"), form: form, w0: d.w0, q: d.q, g: d.g, wz: d.wz, zdamp: d.zdamp}
}

// lowDivider returns R4 (upper) and R5 (lower) with R4/R5 as close as the
// series allows to ratio, the smaller of the two near twice the window's
// least resistor, and the exact values they were rounded from. The divider
// feeds the op-amp's + input, where its Thevenin resistance's noise sees
// the stage's full noise gain, so it is kept low (common practice); it
// loads only the stage's source.
func (o *options) lowDivider(ratio float64) (r4, r5, x4, x5 float64, ok bool) {
	if !(ratio > 0) || !finite(ratio) || ratio*o.rmin > o.rmax*(1+winTol) || o.rmin > ratio*o.rmax*(1+winTol) {
		return 0, 0, 0, 0, false
	}
	lo := 2 * o.rmin // the smaller resistor, within the window with its partner
	if ratio >= 1 {
		x5 = min(lo, o.rmax/ratio)
		x4 = ratio * x5
	} else {
		x4 = min(lo, o.rmax*ratio)
		x5 = x4 / ratio
	}
	if o.exact {
		return x4, x5, x4, x5, o.inR(x4) && o.inR(x5)
	}
	var p picker
	var c4, c5 [3]float64
	n4, n5 := o.rcands(x4, &c4), o.rcands(x5, &c5)
	for _, a := range c4[:n4] {
		for _, b := range c5[:n5] {
			sc := errScore(a/b, ratio)
			if p.wants(sc) && p.take(sc, a+b) {
				r4, r5 = a, b
			}
		}
	}
	return r4, r5, x4, x5, p.ok
}
