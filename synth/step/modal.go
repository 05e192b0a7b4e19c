package step

import (
	"errors"
	"math"
	"math/cmplx"
	"slices"
)

// ErrIllConditioned is returned by [ModalResponse] when the partial
// fractions of the cascade cannot give its step response to about 1e-9 of
// its scale: poles (nearly) repeated across stages, whose residues are
// large and cancel. [Response] is exact for those.
var ErrIllConditioned = errors.New("step: the cascade's partial fractions are ill-conditioned")

// modalCancellation bounds the sum of the residues' magnitudes relative
// to the response's scale (the larger of |H(0)|, |H(∞)| and the largest
// residue that survives past the first time point): beyond it, rounding in
// the cancelling terms could reach 1e-16 × 1e7 = 1e-9 of the scale.
const modalCancellation = 1e7

// ModalResponse returns the step response of the cascade at the times tS
// (ascending, from 0, as for [Response]) from its partial fractions:
//
//	y(t) = H(0) + Σ r·e^(p·t),  r the residue of H(s)/s at each pole p,
//
// with y(0) = H(∞) exactly. It is much cheaper than [Response] for many
// cascades that share most of their stages (no state-space model, no
// matrix exponential), and exact up to rounding while the poles are well
// apart; for (nearly) repeated poles it returns [ErrIllConditioned] and the
// caller uses [Response]. Modes that have decayed below 1e-12 of the
// scale by the first time after 0 are left out after it. It returns
// [ErrUnstable] for a pole with Re p ≥ 0 and an error wrapping
// [ErrInvalid] for invalid stages or times.
func ModalResponse(stages []Stage, tS []float64) ([]float64, error) {
	if err := validTimes(tS); err != nil {
		return nil, err
	}
	m, err := NewModal(stages)
	if err != nil {
		return nil, err
	}
	return m.response(nil, tS)
}

// Modal is a cascade whose stages are validated and factored once, for the
// step responses of several cascades that begin with it ([Modal.With]):
// the voltages of several nodes of the stage that follows it, say.
type Modal struct {
	stages []Stage
	roots  []rooted
	zero   bool
	// The poles of the last stage given to With, by its denominator and
	// scale: the node transfers of one stage share their denominator, so
	// a run of With calls for them finds the poles once.
	lastDen   []float64
	lastWs    float64
	lastPoles []complex128
}

// NewModal validates and factors the stages (see [ModalResponse]).
func NewModal(stages []Stage) (*Modal, error) {
	m := &Modal{}
	for _, st := range stages {
		if err := m.Extend(st); err != nil {
			return nil, err
		}
	}
	return m, nil
}

// Extend appends st to the model's cascade, factoring only st (its poles
// taken from the last With call when it has the same denominator). It
// returns an error wrapping [ErrInvalid] for an invalid stage and leaves
// the cascade as it was.
func (m *Modal) Extend(st Stage) error {
	r, zero, err := m.rootLast(st)
	if err != nil {
		return invalidf("stage %d: %v", len(m.stages), err)
	}
	m.zero = m.zero || zero
	m.stages = append(m.stages, st)
	m.roots = append(m.roots, r)
	return nil
}

// With returns the step response at tS of the model's cascade followed by
// last, as [ModalResponse] does. Successive calls whose last stages share
// a denominator (the voltages of several nodes of one stage) find its
// poles once; a Modal is not safe for concurrent use.
func (m *Modal) With(last Stage, tS []float64) ([]float64, error) {
	if err := validTimes(tS); err != nil {
		return nil, err
	}
	return m.response(&last, tS)
}

// rootLast validates and factors the stage given to With: its roots as
// realise finds them (without realise's blocks, which the partial
// fractions do not need), the poles taken from the previous call when the
// denominator and scale are the same.
func (m *Modal) rootLast(st Stage) (rooted, bool, error) {
	if err := st.validate(); err != nil {
		return rooted{}, false, err
	}
	dn, dd := degree(st.Num), degree(st.Den)
	if dn < 0 {
		return rooted{}, true, nil
	}
	rat := st.rational()
	rat.Num, rat.Den = st.Num[:dn+1], st.Den[:dd+1]
	rat.ScaleRadPerSec = 1
	if m.lastPoles == nil || m.lastWs != st.ScaleRadPerSec || !slices.Equal(m.lastDen, rat.Den) {
		m.lastDen, m.lastWs, m.lastPoles = slices.Clone(rat.Den), st.ScaleRadPerSec, rat.Poles()
	}
	xp, xz := m.lastPoles, rat.Zeros()
	if len(xp) != dd || len(xz) != dn {
		return rooted{}, false, invalidf("the roots of a stage of degree %d/%d cannot be found", dn, dd)
	}
	return rooted{poles: xp, zeros: xz, k: st.Num[dn] / st.Den[dd], ws: st.ScaleRadPerSec}, false, nil
}

// response is the modal step response of the cascade and, when not nil,
// last after it.
func (m *Modal) response(last *Stage, tS []float64) ([]float64, error) {
	stages, rs, zero := m.stages, m.roots, m.zero
	if last != nil {
		r, z, err := m.rootLast(*last)
		if err != nil {
			return nil, invalidf("last stage: %v", err)
		}
		stages = append(stages[:len(stages):len(stages)], *last)
		rs = append(rs[:len(rs):len(rs)], r)
		zero = zero || z
	}
	if zero {
		return make([]float64, len(tS)), nil
	}
	me, err := newModalEval(stages, rs)
	if err != nil {
		return nil, err
	}
	t1 := 0.0
	for _, t := range tS {
		if t > 0 {
			t1 = t
			break
		}
	}
	if !me.conditioned(t1) {
		return nil, ErrIllConditioned
	}
	// Modes that have decayed below 1e-12 of the residues' sum by t1 are
	// left out after it.
	kept := me.terms[:0:0]
	for _, tm := range me.terms {
		a := cmplx.Abs(tm.r) * math.Exp(real(tm.p)*t1)
		if tm.pair {
			a *= 2
		}
		if t1 == 0 || a >= 1e-12*me.sumAbs {
			kept = append(kept, tm)
		}
	}
	me.terms = kept
	y := make([]float64, len(tS))
	me.eval(tS, y)
	return y, nil
}
