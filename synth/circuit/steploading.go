package circuit

import (
	"math"
	"math/cmplx"
)

// FirstOrder returns the chain's stages, as [Chain.TransferFunctions]
// gives them in tfs, with each single-ended stage whose output the next
// stage's input loads replaced by its loaded transfer to first order:
// the next stage's input admittance taken with its own output open
// (Yin = yin/den′, its reverse transmission left out),
//
//	G = H/(1 + Zout·Yin) = h·den′/(d·den′ + zout·yin),
//
// a rational of the two stages' degrees together, from the two-port
// polynomials of [Loading] (never more than two stages' polynomials are
// multiplied). Its poles are the stage's as loaded, so a step response
// built from these stages sees the loading: behind a highpass, a step's
// edge reaches the op-amps' own fast response, where the loading is
// largest. Stages of differential chains, and boundaries the loading
// does not correct, are returned as they are. It is exact for the
// stage before the last (TestFirstOrderLoading); further back, the exact
// loading ([Loading.AtHz]) also takes what reaches back through the next
// stage from the stages after it, which this leaves out.
func (l Loading) FirstOrder(tfs Cascade) Cascade {
	out := append(Cascade(nil), tfs...)
	if l.Empty() || len(tfs) != len(l.stages) {
		return out
	}
	for k := range l.joined {
		if !l.joined[k] {
			continue
		}
		a, b := &l.stages[k], &l.stages[k+1]
		if !a.outOK || !a.outWhole || !b.inOK || len(b.yin) == 0 {
			continue // a half circuit or a port taken whole: as it is
		}
		// The next stage's input polynomials at this stage's scale.
		r := a.outScale / b.inScale
		inDen, yin := rescale(b.inDen, r), rescale(b.yin, r)
		num := polyMul(a.h, inDen)
		den := polyAdd(polyMul(a.den, inDen), polyMul(a.zout, yin))
		g := Rational{Num: trimPoly(num), Den: trimPoly(den), ScaleRadPerSec: a.outScale, SectionOrder: tfs[k].SectionOrder}
		if !g.finite() {
			continue
		}
		out[k] = g
	}
	return out
}

// rescale returns c(p·r): coefficient j times r^j, in a new slice.
func rescale(c []float64, r float64) []float64 {
	o := make([]float64, len(c))
	rj := 1.0
	for j, v := range c {
		o[j] = v * rj
		rj *= r
	}
	return o
}

// polyMul returns the product of two polynomials (ascending).
func polyMul(a, b []float64) []float64 {
	if len(a) == 0 || len(b) == 0 {
		return nil
	}
	o := make([]float64, len(a)+len(b)-1)
	for i, x := range a {
		for j, y := range b {
			o[i+j] += x * y
		}
	}
	return o
}

// polyAdd returns a + b (ascending).
func polyAdd(a, b []float64) []float64 {
	if len(a) < len(b) {
		a, b = b, a
	}
	o := append([]float64(nil), a...)
	for i, v := range b {
		o[i] += v
	}
	return o
}

// finite reports whether every coefficient is finite and the
// denominator is not zero.
func (r Rational) finite() bool {
	nz := false
	for _, c := range r.Den {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return false
		}
		nz = nz || c != 0
	}
	for _, c := range r.Num {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			return false
		}
	}
	return nz
}

// StepShift estimates how far the loading can move the chain's unit step
// response at its output: (1/π)·∫|T(jω)·(L(jω) − 1)| dω/ω, T the product
// of the unloaded stages tfs and L the loading's factor ([Loading.AtHz]),
// the Fourier integral of the change over s bounded by its modulus, read
// by the trapezoid rule in ln f at perDecade points per decade over
// [loHz, hiHz]. It is an estimate, not a bound: the integral is truncated
// at both ends and sampled.
func (l Loading) StepShift(tfs Cascade, loHz, hiHz float64, perDecade int) float64 {
	if l.Empty() {
		return 0
	}
	return shiftEstimate(loHz, hiHz, perDecade, func(f float64) complex128 {
		return tfs.AtHz(f) * (l.AtHz(f) - 1)
	})
}

// FirstOrderShift is [Loading.StepShift] for what [Loading.FirstOrder]
// leaves out: (1/π)·∫|T·L − F| dω/ω with F the product of the stages fo
// (FirstOrder's result for tfs), how far the step of the stages fo may be
// from the chain's, loaded exactly.
func (l Loading) FirstOrderShift(tfs, fo Cascade, loHz, hiHz float64, perDecade int) float64 {
	if l.Empty() {
		return 0
	}
	return shiftEstimate(loHz, hiHz, perDecade, func(f float64) complex128 {
		return tfs.AtHz(f)*l.AtHz(f) - fo.AtHz(f)
	})
}

// shiftEstimate is (1/π)·∫|diff(f)| d(ln f) over [loHz, hiHz] by the
// trapezoid rule at perDecade points per decade (0 for an empty range).
func shiftEstimate(loHz, hiHz float64, perDecade int, diff func(fHz float64) complex128) float64 {
	if !(loHz > 0) || !(hiHz > loHz) || perDecade < 1 {
		return 0
	}
	n := int(math.Ceil(math.Log10(hiHz/loHz) * float64(perDecade)))
	dln := math.Log(hiHz/loHz) / float64(n)
	sum, prev := 0.0, 0.0
	for i := 0; i <= n; i++ {
		v := cmplx.Abs(diff(loHz * math.Exp(float64(i)*dln)))
		if i > 0 {
			sum += (v + prev) / 2 * dln
		}
		prev = v
	}
	return sum / math.Pi
}
