package step

import (
	"errors"
	"math"
	"math/cmplx"
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
}

// NewModal validates and factors the stages (see [ModalResponse]).
func NewModal(stages []Stage) (*Modal, error) {
	m := &Modal{}
	for k, st := range stages {
		r, zero, err := rootStage(st)
		if err != nil {
			return nil, invalidf("stage %d: %v", k, err)
		}
		m.zero = m.zero || zero
		m.stages = append(m.stages, st)
		m.roots = append(m.roots, r)
	}
	return m, nil
}

// With returns the step response at tS of the model's cascade followed by
// last, as [ModalResponse] does.
func (m *Modal) With(last Stage, tS []float64) ([]float64, error) {
	if err := validTimes(tS); err != nil {
		return nil, err
	}
	return m.response(&last, tS)
}

// rootStage validates and factors one stage.
func rootStage(st Stage) (rooted, bool, error) {
	if err := st.validate(); err != nil {
		return rooted{}, false, err
	}
	r, zero, err := realise(st)
	if err != nil {
		return rooted{}, false, err
	}
	return r.roots, zero, nil
}

// response is the modal step response of the cascade and, when not nil,
// last after it.
func (m *Modal) response(last *Stage, tS []float64) ([]float64, error) {
	stages, rs, zero := m.stages, m.roots, m.zero
	if last != nil {
		r, z, err := rootStage(*last)
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
	type term struct {
		p, r complex128
		pair bool
	}
	var terms []term
	sumAbs := 0.0
	for k, r := range rs {
		for m, x := range r.poles {
			if !(real(x) < 0) {
				return nil, ErrUnstable
			}
			if imag(x) < 0 {
				continue
			}
			p := x * complex(r.ws, 0)
			res := complex(r.ws*r.k, 0)
			for _, z := range r.zeros {
				res *= x - z
			}
			for i, q := range r.poles {
				if i != m {
					res /= x - q
				}
			}
			for l, st := range stages {
				if l != k {
					res *= st.At(p)
				}
			}
			res /= p
			if cmplx.IsNaN(res) || cmplx.IsInf(res) {
				return nil, ErrIllConditioned
			}
			pair := imag(x) > 0
			a := cmplx.Abs(res)
			if pair {
				a *= 2
			}
			sumAbs += a
			terms = append(terms, term{p: p, r: res, pair: pair})
		}
	}
	final := DCGain(stages)
	start := highGain(stages)
	scale := math.Max(math.Abs(final), math.Abs(start))
	t1 := 0.0
	for _, t := range tS {
		if t > 0 {
			t1 = t
			break
		}
	}
	kept := terms[:0]
	for _, tm := range terms {
		a := cmplx.Abs(tm.r)
		if tm.pair {
			a *= 2
		}
		if t1 > 0 {
			a *= math.Exp(real(tm.p) * t1)
		}
		scale = math.Max(scale, a)
		if t1 == 0 || a >= 1e-12*sumAbs {
			kept = append(kept, tm)
		}
	}
	if !(scale > 0) || math.IsNaN(sumAbs) || sumAbs > modalCancellation*scale {
		return nil, ErrIllConditioned
	}
	y := make([]float64, len(tS))
	if uniformFromZero(tS) {
		// t_i = i·Δ: each term advances by one factor e^(p·Δ) a step,
		// a complex product instead of an exponential (the rounding grows
		// by about one unit per step, far below the 1e-9 promised).
		dt := tS[len(tS)-1] / float64(len(tS)-1)
		for i := range y {
			y[i] = final
		}
		y[0] = start
		for _, tm := range kept {
			f := cmplx.Exp(tm.p * complex(dt, 0))
			e := tm.r
			w := 1.0
			if tm.pair {
				w = 2
			}
			for i := 1; i < len(y); i++ {
				e *= f
				y[i] += w * real(e)
			}
		}
		return y, nil
	}
	for i, t := range tS {
		if t == 0 {
			y[i] = start
			continue
		}
		v := final
		for _, tm := range kept {
			e := cmplx.Exp(tm.p*complex(t, 0)) * tm.r
			if tm.pair {
				v += 2 * real(e)
			} else {
				v += real(e)
			}
		}
		y[i] = v
	}
	return y, nil
}

// uniformFromZero reports whether tS is 0, Δ, 2Δ, … to rounding.
func uniformFromZero(tS []float64) bool {
	n := len(tS)
	if n < 3 || tS[0] != 0 || !(tS[n-1] > 0) {
		return false
	}
	dt := tS[n-1] / float64(n-1)
	for i, t := range tS {
		if math.Abs(t-float64(i)*dt) > 1e-12*tS[n-1] {
			return false
		}
	}
	return true
}
