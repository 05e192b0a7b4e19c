package step

import (
	"errors"
	"math"
	"math/cmplx"
)

// ErrUnstable is returned by [Measure] for a cascade with a pole on or to
// the right of the imaginary axis (an integrator, a lossless resonator or
// a growing mode): its step response does not settle, so it has no
// figures.
var ErrUnstable = errors.New("step: the cascade has a pole with Re p >= 0, so its step response does not settle")

// mode is one term of the step response's distance from its final value,
//
//	y(t) − y(∞) = Σ r·e^(p·t)
//
// over the poles p of the cascade, r the residue of H(s)/s at p: a real
// pole gives one term, a conjugate pair (stored once, Im p > 0) the term
// 2·Re(r·e^(p·t)). amp bounds the term's magnitude at t = 0 (|r|, 2|r|
// for a pair), so that |term(t)| ≤ amp·e^(Re p·t).
type mode struct {
	re, im float64 // the pole in rad/s, im ≥ 0; re < 0
	amp    float64
}

// fallbackAmpFactor and fallbackDecay stand in for a residue that cannot
// be computed (a pole repeated exactly across stages, whose terms are
// t^k·e^(p·t)): the mode gets fallbackAmpFactor times the largest of the
// other amplitudes and the gains, and decays at fallbackDecay of its rate,
// which bounds t^k·e^(p·t) up to a constant. [Measure] checks the tail
// of the computed response in any case.
const (
	fallbackAmpFactor = 1e6
	fallbackDecay     = 0.9
)

// modesOf returns the modes of the step response of the validated stages,
// given the roots of each that [build] found, or ErrUnstable for a pole
// with Re p ≥ 0.
//
// The residue at a pole p of stage k is
//
//	r = ws·K·∏(x − ζ)/∏'(x − π) · ∏_{l≠k} H_l(p) / p,  x = p/ws,
//
// with K = Num[n]/Den[d], ζ and π the stage's zeros and poles in its
// normalised variable and ∏' over the other poles of the stage.
func modesOf(stages []Stage, rs []rooted) ([]mode, error) {
	for _, r := range rs {
		for _, p := range r.poles {
			if !(real(p) < 0) {
				return nil, ErrUnstable
			}
		}
	}
	var ms []mode
	bad := []int{}
	for k, r := range rs {
		for m, x := range r.poles {
			if imag(x) < 0 {
				continue
			}
			p, res := residue(stages, rs, k, m)
			amp := cmplx.Abs(res)
			if imag(x) > 0 {
				amp *= 2
			}
			if math.IsNaN(amp) || math.IsInf(amp, 0) {
				bad = append(bad, len(ms))
			}
			ms = append(ms, mode{re: real(p), im: imag(p), amp: amp})
		}
	}
	if len(bad) > 0 {
		ref := math.Max(math.Abs(DCGain(stages)), math.Abs(highGain(stages)))
		for _, m := range ms {
			if !math.IsNaN(m.amp) && !math.IsInf(m.amp, 0) {
				ref = math.Max(ref, m.amp)
			}
		}
		if !(ref > 0) || math.IsInf(ref, 0) {
			ref = 1
		}
		for _, i := range bad {
			ms[i].amp = fallbackAmpFactor * ref
			ms[i].re *= fallbackDecay
		}
	}
	return ms, nil
}

// residue returns pole m of stage k in rad/s, p, and the residue of
// H(s)/s there (the formula in [modesOf]'s comment).
func residue(stages []Stage, rs []rooted, k, m int) (p, res complex128) {
	r := rs[k]
	x := r.poles[m]
	p = x * complex(r.ws, 0)
	res = complex(r.ws*r.k, 0)
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
	return p, res / p
}

// highGain returns H(∞) of the cascade: the product over the stages of
// the ratio of the x^d coefficients, d the denominator's degree.
func highGain(stages []Stage) float64 {
	g := 1.0
	for _, st := range stages {
		dd := degree(st.Den)
		if dd < 0 {
			return math.NaN()
		}
		n := 0.0
		if dd < len(st.Num) {
			n = st.Num[dd]
		}
		g *= n / st.Den[dd]
	}
	return g
}

// envelope returns Σ amp·e^(re·t), a bound of |y(t) − y(∞)| (up to the
// rounding of the residues).
func envelope(ms []mode, t float64) float64 {
	s := 0.0
	for _, m := range ms {
		s += m.amp * math.Exp(m.re*t)
	}
	return s
}

// envelopeBelow returns the first time at which the envelope, which
// decreases, is at most level > 0: 0 when it is already there at t = 0.
func envelopeBelow(ms []mode, level float64) float64 {
	if envelope(ms, 0) <= level {
		return 0
	}
	// Each term at most level/len(ms) at hi.
	hi := 0.0
	for _, m := range ms {
		if m.amp*float64(len(ms)) > level {
			hi = math.Max(hi, math.Log(m.amp*float64(len(ms))/level)/-m.re)
		}
	}
	lo := 0.0
	for range 200 {
		mid := lo + (hi-lo)/2
		if mid <= lo || mid >= hi || hi-lo <= 1e-9*hi {
			break
		}
		if envelope(ms, mid) <= level {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi
}

// pointsPerPeriod is the resolution of the measurement grid: points per
// period of a ringing mode, tried in turn until the grid fits the budget
// (the step is also at most 8/ppp time constants of the mode: half a time
// constant at 16).
var pointsPerPeriod = []float64{16, 8}

// measureWork bounds the work of one measurement: points·(states+1)²,
// about as many floating-point multiply-adds (some 0.3 s).
const measureWork = 3e8

// minGridPoints is the fewest points of a measurement grid.
const minGridPoints = 64

// measureGrid returns the times at which [Measure] samples the response:
// from 0 to endS, with a step that resolves every mode still able to
// matter to a band of half-width band — the modes whose envelope term is
// above band/(4·len(ms)), so that together the others stay below band/4
// — at ppp points per period of its ringing and ppp/8 steps per time
// constant. The step starts at the smallest needed and doubles whenever
// every mode still alive allows twice it (so that [Response] derives
// each new step's exponential from the last by one squaring). It
// returns false when the grid would have more than maxPoints points; at
// most maxPoints points are returned when truncate is true.
func measureGrid(ms []mode, band, endS, ppp float64, maxPoints int, truncate bool) ([]float64, bool) {
	th := band / (4 * float64(max(len(ms), 1)))
	type need struct{ until, h float64 }
	needs := make([]need, 0, len(ms))
	for _, m := range ms {
		if !(m.amp > th) {
			continue
		}
		sigma := -m.re
		h := 8 / (ppp * sigma)
		if m.im > 0 {
			h = math.Min(h, 2*math.Pi/(ppp*m.im))
		}
		needs = append(needs, need{until: math.Log(m.amp/th) / sigma, h: h})
	}
	floor := endS / minGridPoints
	required := func(t float64) float64 {
		h := floor
		for _, n := range needs {
			if n.until > t {
				h = math.Min(h, n.h)
			}
		}
		return h
	}
	ts := []float64{0}
	h := required(0)
	t := 0.0
	for t < endS {
		for 2*h <= required(t) {
			h *= 2
		}
		t += h
		ts = append(ts, t)
		if len(ts) >= maxPoints {
			if truncate {
				return ts, true
			}
			if t < endS {
				return nil, false
			}
		}
	}
	return ts, true
}
