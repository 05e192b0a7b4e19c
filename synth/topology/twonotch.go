package topology

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// MaxTwoIntegratorGainShift bounds the factor by which the gain of a
// [TwoIntegratorNotch] stage may differ from its section's (either way).
// The stage's high-frequency gain is the capacitor ratio C3/C1, so series
// capacitors leave it a little off, and where the windows cannot hold C3
// at the section's ratio (zeros far above a low-Q f0: C3 = k·C1 below the
// smallest capacitor while R1 = Q/(ω0·C1) stays above the smallest
// resistor, that is k·Q/ω0 < MinOhm·MinFarad) the stage takes a larger
// gain; package synth takes the factor up in another stage, whose level
// (and with it the share of its noise) moves by as much. A factor of four
// (12 dB) is our choice: it admits the far-zero sections of the
// anti-alias examples (2.2 for the studio filter with a 3 dB stopband
// margin) at a noise cost well below what a fourth op-amp adds.
const MaxTwoIntegratorGainShift = 4

// tinGainWeight weighs ln² of the ratio of the two-integrator notch's gain
// to its section's in the part search's score against the squared
// relative errors of f0, Q and the zeros. The gain error is flat (the same
// at every frequency) and package synth takes it up in another stage, so
// it only breaks near-ties: a gain 10 % off costs as much as a 0.3 %
// error of f0 (our choice), and the search prefers the capacitor ratio
// nearest the section's without giving up accuracy of the shape.
const tinGainWeight = 1e-3

// twoIntegratorNotch realises a lowpass-notch, highpass-notch or notch
// section on three op-amps: the two-integrator loop of Tow and Thomas
// (a lossy and a lossless inverting integrator and an inverter) with
// feedforward from the input, the general biquad of P. E. Fleischer and
// J. Tow, "Design formulas for biquad active filters using three
// operational amplifiers", Proc. IEEE 61(5), 1973 (citation typed from
// memory). Of the paper's feedforward paths only the two that carry no s
// term are kept: a capacitor from the input into the lossy integrator
// (the s² term) and a resistor from the input into the lossless one (the
// constant term). The equations below were derived here by nodal
// analysis; the tests check them against the circuit model's own nodal
// analysis and ngspice.
//
// Nodes: in, i1, i2, i3 (the op-amps' inverting inputs, + inputs
// grounded), out (U3, the lossy integrator, the stage output), lp (U1,
// the integrator), inv (U2, the inverter); the op-amp that drives the
// output comes last, as in every stage. Parts: R1
// out–i1 (damping), R2 inv–i1 (loop), C1 i1–out (U3's integrator), C3
// in–i1 (feedforward), R3 out–i2, C2 i2–lp (U1's integrator), R4 in–i2
// (feedforward), R5 lp–i3 and R6 i3–inv (the inverter, a = R6/R5).
// With Gn = 1/Rn the nodal equations are
//
//	i1: s·C3·Vin + (s·C1 + G1)·Vout + G2·Vinv = 0
//	i2: G3·Vout + s·C2·Vlp + G4·Vin = 0
//	i3: G5·Vlp + G6·Vinv = 0
//
// and eliminating Vlp and Vinv gives
//
//	H = Vout/Vin = −(C3·C2·s² + a·G2·G4) / (C1·C2·s² + C2·G1·s + a·G2·G3)
//	  = −(C3/C1)·(s² + ωz²) / (s² + s·ω0/Q + ω0²),
//	ω0² = a/(R2·R3·C1·C2),  Q = ω0·R1·C1,  ωz² = a/(R2·R4·C2·C3),
//
// inverting, with DC gain R3/R4 and high-frequency gain C3/C1. The
// numerator has no s term for any part values: no part carries the
// input into the loop with a single integration, so the zeros stay on
// the jω axis whatever the tolerances (like the state-variable stage's
// sum, unlike the one-op-amp notch, which cancels its s term by a
// resistor ratio). The price is that the gain is the capacitor ratio
// C3/C1: ω0, Q and ωz are set by resistors, and the gain follows from
// C3/C1 and ωz²/ω0² (see [MaxTwoIntegratorGainShift]).
//
// The design keeps a = 1 (R5 = R6; with series values R6 may be a step
// off, a fine step for ω0 and ωz together) and R2 = λ·R1 with λ ≤ 1 set
// so that lp and inv peak no higher than the output ([tinLevel]): their
// level is proportional to R2 (Vlp = −(R3/R4)·(R2/R1)·Vin/a at DC). C1
// is tried at every series value that puts R1 = Q/(ω0·C1) and R2 in the
// window, C3 at the two series values around k·C1 (k the section's
// high-frequency gain), and C2 at the two around the value that centres
// R3 = a/(λ·ω0·Q·C2) and R4 = R3/gDC in the window. The resistors are rounded
// in turn, each compensating the ones before: R1, R2 and R6, then R3 for
// ω0 (Q = ω0·R1·C1 follows), then R4 for ωz; with series values a stage
// keeps f0 within 2 %, Q within 3 % and its zeros within 1 % (the
// one-op-amp notch's bounds), else it is ErrLimits.
func twoIntegratorNotch(tg target, o *options) (design, *Error) {
	if tg.order != 2 || !hasAxisZeros(tg.kind) {
		return design{}, fail(TwoIntegratorNotch, ErrNoForm, "no %s form (lowpass-notch, highpass-notch and notch only)", tg.kind)
	}
	k := tg.zeroScale()                        // |H(∞)| of the section
	gdc := k * tg.wz * tg.wz / (tg.w0 * tg.w0) // |H(0)| of the section
	lam := tinLevel(tg, k, gdc)                // R2/R1
	var p picker
	var best tinParts
	var bestFig [4]float64 // ω0, Q, ωz, gain as built
	var c3buf, c2buf [4]float64
	var cq, cl, ci, cz [3]float64
	var dq, dl, di, dz [3]float64
	shiftSeen := false // a C3 within the gain-shift bound
	// The inverter's R6 with R5 = rbase: a = R6/R5 is 1 or, with series
	// values, one step either way, a fine step for ω0 and ωz together.
	var c6 [3]float64
	n6 := 1
	c6[0] = o.rbase
	if !o.exact {
		n6 = o.rcands(o.rbase, &c6)
	}
	for _, c1 := range o.caps {
		xq := tg.q / (tg.w0 * c1)
		if !o.nearR(xq) || !o.nearR(lam*xq) {
			continue
		}
		for _, c3 := range o.capsNear(c3buf[:0], k*c1, 1) {
			shift := c3 / c1 / k
			if shift > MaxTwoIntegratorGainShift || shift < 1.0/MaxTwoIntegratorGainShift ||
				(o.tinShift > 0 && shift < 1-1e-12) || (o.tinShift < 0 && shift > 1+1e-12) {
				continue
			}
			shiftSeen = true
			gdcr := gdc * shift // R3/R4 with exact zeros
			xi0 := o.centred(gdcr)
			for _, c2 := range o.capsNear(c2buf[:0], 1/(tg.w0*tg.q*lam*xi0), 1) {
				nq := o.rcandsTie(xq, &cq, &dq)
				nl := o.rcandsTie(lam*xq, &cl, &dl)
				for iq, rq := range cq[:nq] {
					for il, rl := range cl[:nl] {
						for _, r6 := range c6[:n6] {
							a := r6 / o.rbase
							xi := a / (tg.w0 * tg.w0 * rl * c1 * c2)
							ni := o.rcandsTie(xi, &ci, &di)
							xz := a / (rl * c2 * c3 * tg.wz * tg.wz)
							nz := o.rcandsTie(xz, &cz, &dz)
							for ii, ri := range ci[:ni] {
								w0 := math.Sqrt(a / (rl * ri * c1 * c2))
								q := w0 * rq * c1
								s0 := errScore(w0, tg.w0) + errScore(q, tg.q)
								if !p.wants(s0) {
									continue
								}
								for iz, rz := range cz[:nz] {
									wz := math.Sqrt(a / (rl * rz * c2 * c3))
									g := ri / rz
									if tg.kind == section.HighpassNotch {
										g = c3 / c1
									}
									// The rounding bounds of the one-op-amp notch
									// (f0 2 %, Q 3 %, zeros 1 %).
									if math.Abs(w0/tg.w0-1) > maxPoleErr || math.Abs(q/tg.q-1) > maxQErr || math.Abs(wz/tg.wz-1) > maxZeroErr {
										continue
									}
									s := s0 + errScore(wz, tg.wz) + tinGainWeight*sq(math.Log(g/tg.g))
									if !p.wants(s) {
										continue
									}
									tie := dq[iq] + dl[il] + di[ii] + dz[iz]
									if p.take(s, tie) {
										best = tinParts{r1: rq, r2: rl, r3: ri, r4: rz, r6: r6, c1: c1, c2: c2, c3: c3,
											x1: xq, x2: lam * xq, x3: xi, x4: xz}
										bestFig = [4]float64{w0, q, wz, g}
									}
								}
							}
						}
					}
				}
			}
		}
	}
	if !p.ok {
		what := fmt.Sprintf("%s: R1 = Q/(ω0·C1) in the window and the feed capacitor C3 ≈ %.3g·C1 (the high-frequency gain) within a factor %d", tg.kind, k, MaxTwoIntegratorGainShift)
		if !shiftSeen {
			what += fmt.Sprintf(": no capacitor pair of the window has C3/C1 within a factor %d of %.3g where R1 fits", MaxTwoIntegratorGainShift, k)
			switch {
			case o.tinShift > 0:
				what += " and at or above it"
			case o.tinShift < 0:
				what += " and at or below it"
			}
		}
		return design{}, fail(TwoIntegratorNotch, ErrLimits, "%s", o.limitsMsg(tg.w0, what))
	}
	return best.build(tg, o, bestFig), nil
}

// tinParts are the part values of the two-integrator notch as built
// (r, c) and the exact resistor values they were rounded from (x).
type tinParts struct {
	r1, r2, r3, r4 float64
	r6             float64 // the inverter's R6 (R5 = rbase; 0 reads as rbase)
	c1, c2, c3     float64
	x1, x2, x3, x4 float64
}

// tinCoef returns the numerator and denominator coefficients of the
// stage's transfer function without its sign (the formula in
// [twoIntegratorNotch], a = R6/R5).
func tinCoef(v tinParts, a float64) (n2, n0, d2, d1, d0 float64) {
	return v.c3 * v.c2, a / (v.r2 * v.r4), v.c1 * v.c2, v.c2 / v.r1, a / (v.r2 * v.r3)
}

// build assembles the stage; fig holds its ω0, Q, ωz and gain.
func (v tinParts) build(tg target, o *options, fig [4]float64) design {
	b := newBuilder(o, TwoIntegratorNotch)
	b.res("out", "i1", v.r1, v.x1)
	b.res("inv", "i1", v.r2, v.x2)
	b.res("out", "i2", v.r3, v.x3)
	b.res(circuit.In, "i2", v.r4, v.x4)
	r6 := v.r6
	if r6 == 0 {
		r6 = o.rbase
	}
	b.res("lp", "i3", o.rbase, o.rbase)
	b.res("i3", "inv", r6, o.rbase)
	b.capa("i1", "out", v.c1)
	b.capa("i2", "lp", v.c2)
	b.capa(circuit.In, "i1", v.c3)
	// The op-amp that drives the output last, as in every stage.
	b.amp(circuit.Ground, "i2", "lp")
	b.amp(circuit.Ground, "i3", "inv")
	b.amp(circuit.Ground, "i1", "out")
	shift := fig[3] / tg.g
	form := fmt.Sprintf("two-integrator loop (Tow-Thomas: lossy integrator U3 at the output, integrator U1, inverter U2) with feedforward from the input into both integrators (Fleischer-Tow), inverting: C3 (s²) and R4 (constant) carry no s term, so the %s's zeros stay on the jω axis whatever the part tolerances; R1 sets Q, R3 with R2 sets f0, R4 the zeros", tg.kind)
	if math.Abs(shift-1) > 1e-9 {
		form += fmt.Sprintf("; the gain is the capacitor ratio C3/C1 = %.4g, %.3g dB from the section's", v.c3/v.c1, 20*math.Log10(shift))
	}
	return design{stage: b.done("out"), form: form, inverting: true, w0: fig[0], q: fig[1], wz: fig[2], g: fig[3]}
}

// tinLevel returns λ = R2/R1 of the two-integrator notch: the ratio of the
// section's largest gain to that of the lp node at λ = 1, at most 1. With
// R2 = R1 (a = 1) the lp node's transfer is (from the nodal equations at
// i2 and i1, H the stage's own) Vlp/Vin = −(ω0·Q/s)·(H(s) + gDC), whatever
// the capacitors, and it scales with λ, as does inv = −a·lp; near f0 it
// peaks at about Q times the output's DC level, which the internal nodes
// then need as headroom. Both are read on a grid of 401 points from f0/100
// to 100·f0 (a level choice: the grid's resolution is enough).
func tinLevel(tg target, k, gdc float64) float64 {
	const n = 401
	var outMax, lpMax float64
	for i := range n {
		w := tg.w0 * math.Pow(10, -2+4*float64(i)/(n-1))
		s := complex(0, w)
		h := complex(k, 0) * (s*s + complex(tg.wz*tg.wz, 0)) / (s*s + s*complex(tg.w0/tg.q, 0) + complex(tg.w0*tg.w0, 0))
		outMax = max(outMax, cmplx.Abs(h))
		lpMax = max(lpMax, cmplx.Abs(complex(tg.w0*tg.q, 0)*(complex(gdc, 0)-h)/s))
	}
	if !(lpMax > outMax) {
		return 1
	}
	return outMax / lpMax
}
