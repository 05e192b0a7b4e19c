package step

import (
	"math"
	"math/cmplx"
)

// modalEval is a cascade's step response as partial fractions,
//
//	y(t) = H(0) + Σ r·e^(p·t),  y(0) = H(∞),
//
// for [Model.Measure]: evaluated on its piecewise-uniform grids (the step
// doubles) by recurrence, one complex product per term and point and one
// squaring or exponential where the step changes, instead of the state
// space's matrix exponentials and matrix–vector products. It is used
// while it is well conditioned at the grid's first time (see
// conditioned); Measure falls back to the state space otherwise.
type modalEval struct {
	final, start float64
	terms        []modalTerm
	sumAbs       float64 // Σ |r| (2|r| for a pair)
}

// modalTerm is one pole's term: p in rad/s (Im p > 0 for a pair, stored
// once and counted twice as 2·Re), r the residue of H(s)/s at p.
type modalTerm struct {
	p, r complex128
	pair bool
}

// newModalEval returns the partial fractions of the validated stages with
// the roots [build] found (residues as [modesOf] finds them), or ErrIllConditioned when a residue cannot be
// computed (a pole repeated exactly across stages), ErrUnstable for a pole
// with Re p ≥ 0.
func newModalEval(stages []Stage, rs []rooted) (*modalEval, error) {
	me := &modalEval{final: DCGain(stages), start: highGain(stages)}
	for k, r := range rs {
		for m, x := range r.poles {
			if !(real(x) < 0) {
				return nil, ErrUnstable
			}
			if imag(x) < 0 {
				continue
			}
			p, res := residue(stages, rs, k, m)
			if cmplx.IsNaN(res) || cmplx.IsInf(res) {
				return nil, ErrIllConditioned
			}
			pair := imag(x) > 0
			a := cmplx.Abs(res)
			if pair {
				a *= 2
			}
			me.sumAbs += a
			me.terms = append(me.terms, modalTerm{p: p, r: res, pair: pair})
		}
	}
	if math.IsNaN(me.final) || math.IsInf(me.final, 0) || math.IsNaN(me.start) || math.IsInf(me.start, 0) {
		return nil, ErrIllConditioned
	}
	return me, nil
}

// conditioned reports whether the terms give the response to about 1e-9
// of its scale from the time t1 > 0 on (the rule of [ModalResponse]: the
// residues' magnitudes summed at most modalCancellation times the scale,
// the larger of |H(0)|, |H(∞)| and the largest term at t1).
func (me *modalEval) conditioned(t1 float64) bool {
	scale := math.Max(math.Abs(me.final), math.Abs(me.start))
	for _, tm := range me.terms {
		a := cmplx.Abs(tm.r) * math.Exp(real(tm.p)*t1)
		if tm.pair {
			a *= 2
		}
		scale = math.Max(scale, a)
	}
	return scale > 0 && !math.IsNaN(me.sumAbs) && me.sumAbs <= modalCancellation*scale
}

// eval writes the response at the ascending times tS (seconds, ≥ 0) into
// y. Each term starts from one exponential at tS[0] and advances by a
// factor e^(p·Δ) per step, the factor kept while the step stays the same
// (to rounding), squared when it doubles and recomputed otherwise.
func (me *modalEval) eval(tS, y []float64) {
	if len(tS) == 0 {
		return
	}
	for i, t := range tS {
		y[i] = me.final
		if t == 0 {
			y[i] = me.start
		}
	}
	for _, tm := range me.terms {
		w := 1.0
		if tm.pair {
			w = 2
		}
		e := tm.r * cmplx.Exp(tm.p*complex(tS[0], 0))
		if tS[0] > 0 {
			y[0] += w * real(e)
		}
		var f complex128
		prev := math.NaN()
		for i := 1; i < len(tS); i++ {
			d := tS[i] - tS[i-1]
			tol := 4 * 0x1p-52 * tS[i]
			switch {
			case math.Abs(d-prev) <= tol:
			case math.Abs(d-2*prev) <= tol:
				f *= f
				prev = d
			default:
				f = cmplx.Exp(tm.p * complex(d, 0))
				prev = d
			}
			e *= f
			if tS[i] > 0 {
				y[i] += w * real(e)
			}
		}
	}
}
