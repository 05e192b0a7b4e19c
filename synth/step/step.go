package step

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// Limits on the work a call can ask for.
const (
	// MaxPoints is the largest number of times [Response] accepts.
	MaxPoints = 100000
	// MaxStates is the largest total number of poles of a cascade that
	// [Response] accepts (the state dimension of its model).
	MaxStates = 256
	// SpanTimeConstants is the number of time constants of the slowest
	// pole that [Span] allows for the response to settle.
	SpanTimeConstants = 10
)

// ErrInvalid is wrapped by every error [Response] returns for bad input: a
// stage that is not a proper rational function with finite coefficients
// and a positive scale, times that are not finite, ≥ 0 and ascending, or
// more than [MaxPoints] times or [MaxStates] poles.
var ErrInvalid = errors.New("step: invalid input")

func invalidf(format string, args ...any) error {
	return fmt.Errorf("%w: %s", ErrInvalid, fmt.Sprintf(format, args...))
}

// Stage is one rational section,
//
//	H(s) = Σ Num[i]·x^i / Σ Den[i]·x^i,  x = s/ScaleRadPerSec,
//
// with real coefficients in ascending powers of x and deg Num ≤ deg Den
// (trailing zero coefficients do not count). It has the layout of
// [circuit.Rational] without the op-amp bookkeeping.
type Stage struct {
	// Num and Den are the numerator and denominator coefficients, Num[i]
	// and Den[i] multiplying x^i.
	Num, Den []float64
	// ScaleRadPerSec is the unit of x, in rad/s; it must be finite and
	// positive.
	ScaleRadPerSec float64
}

// FromSection expands the first- or second-order section s into a Stage:
// ScaleRadPerSec is the section's natural frequency
// ([section.Section.OmegaRadPerSec]), and Den is scaled so that its
// constant coefficient is 1 (for a stable section Den is [1, 1] or
// [1, 1/Q, 1]). Conjugate roots give real coefficients; any imaginary
// residue of roots that are not exact conjugates is dropped. A section
// without poles becomes the constant Gain.
func FromSection(s section.Section) Stage {
	if len(s.Poles) == 0 {
		return Stage{Num: []float64{s.Gain}, Den: []float64{1}, ScaleRadPerSec: 1}
	}
	w := s.OmegaRadPerSec()
	if !(w > 0) || math.IsInf(w, 0) {
		w = 1
	}
	num := rootPoly(s.Zeros, w)
	den := rootPoly(s.Poles, w)
	// H = K·∏(s−z)/∏(s−p) = K·w^(m−n)·∏(x−z/w)/∏(x−p/w).
	k := s.Gain * math.Pow(w, float64(len(s.Zeros)-len(s.Poles)))
	lead := 1.0
	for _, c := range den {
		if c != 0 {
			lead = c
			break
		}
	}
	for i := range num {
		num[i] *= k / lead
	}
	for i := range den {
		den[i] /= lead
	}
	return Stage{Num: num, Den: den, ScaleRadPerSec: w}
}

// rootPoly returns the ascending real coefficients of ∏(x − r/w) over roots.
func rootPoly(roots []complex128, w float64) []float64 {
	c := []complex128{1}
	for _, r := range roots {
		r /= complex(w, 0)
		next := make([]complex128, len(c)+1)
		for i, v := range c {
			next[i+1] += v
			next[i] -= v * r
		}
		c = next
	}
	out := make([]float64, len(c))
	for i, v := range c {
		out[i] = real(v)
	}
	return out
}

// FromRational returns r as a Stage, with copies of its coefficients.
//
// Numerator coefficients above the denominator's degree that are rounding
// residue of the circuit's interpolation (below 1e-9 of the numerator's
// largest coefficient, in the normalised variable) are dropped, so that a
// proper stage stays proper.
func FromRational(r circuit.Rational) Stage {
	num := append([]float64(nil), r.Num...)
	big := 0.0
	for _, c := range num {
		big = math.Max(big, math.Abs(c))
	}
	for len(num) > len(r.Den) && math.Abs(num[len(num)-1]) <= 1e-9*big {
		num = num[:len(num)-1]
	}
	return Stage{
		Num:            num,
		Den:            append([]float64(nil), r.Den...),
		ScaleRadPerSec: r.ScaleRadPerSec,
	}
}

// At returns H(s) at the complex frequency s in rad/s.
func (st Stage) At(s complex128) complex128 {
	x := s / complex(st.ScaleRadPerSec, 0)
	return horner(st.Num, x) / horner(st.Den, x)
}

func horner(c []float64, x complex128) complex128 {
	var v complex128
	for i := len(c) - 1; i >= 0; i-- {
		v = v*x + complex(c[i], 0)
	}
	return v
}

// DCGain returns H(0) of the cascade, the product of Num[0]/Den[0] over the
// stages (1 for no stages). When every pole is in the left half plane it
// is the final value of the step response; a pole at s = 0 makes it
// infinite (or NaN with a zero there too).
func DCGain(stages []Stage) float64 {
	g := 1.0
	for _, st := range stages {
		n, d := 0.0, 0.0
		if len(st.Num) > 0 {
			n = st.Num[0]
		}
		if len(st.Den) > 0 {
			d = st.Den[0]
		}
		g *= n / d
	}
	return g
}

// Span returns an end time in seconds long enough for the step response of
// the cascade to settle: [SpanTimeConstants] time constants 1/|Re p| of the
// slowest pole in the left half plane. Without such a pole it uses the
// smallest non-zero pole magnitude instead, and 1 s without any. Invalid
// stages are skipped.
func Span(stages []Stage) float64 {
	slowest, smallest := math.Inf(1), math.Inf(1)
	for _, st := range stages {
		if st.validate() != nil {
			continue
		}
		for _, p := range st.rational().Poles() {
			if real(p) < 0 {
				slowest = math.Min(slowest, -real(p))
			}
			if a := cmplx.Abs(p); a > 0 {
				smallest = math.Min(smallest, a)
			}
		}
	}
	switch {
	case !math.IsInf(slowest, 1):
		return SpanTimeConstants / slowest
	case !math.IsInf(smallest, 1):
		return SpanTimeConstants / smallest
	}
	return 1
}

// TimeGrid returns n equally spaced times from 0 to [Span] of stages
// inclusive, t[i] = Span·i/(n−1). n is clamped to [2, MaxPoints].
func TimeGrid(stages []Stage, n int) []float64 {
	return Grid(Span(stages), n)
}

// Response returns the unit-step response of the cascade of stages (the
// product of their transfer functions, input first) at the times tS in
// seconds, which must be finite, ≥ 0 and non-decreasing; the state starts
// at rest at t = 0 and the step is applied at t = 0, so the value at t = 0
// is H(∞). No stages give the identity (a response of 1). See the package
// documentation for the method: the result is exact up to rounding, with no
// integration error. An unstable cascade gives growing values, ±Inf or NaN
// once they overflow. It returns an error wrapping [ErrInvalid] for
// invalid stages or times, more than [MaxPoints] times or more than
// [MaxStates] poles in all.
func Response(stages []Stage, tS []float64) ([]float64, error) {
	if err := validTimes(tS); err != nil {
		return nil, err
	}
	m, err := NewModel(stages)
	if err != nil {
		return nil, err
	}
	return m.response(tS), nil
}

// Model is a cascade of stages validated and built once, for several
// analyses of the same cascade: [Model.Response] and [Model.Measure] are
// [Response] and [Measure] without factoring the stages and building the
// state-space model again. A Model is not modified by its methods and may
// be used by several goroutines at once.
type Model struct {
	stages []Stage
	sys    *system
}

// NewModel validates the stages and builds their model. It returns an
// error wrapping [ErrInvalid] for invalid stages or more than [MaxStates]
// poles in all, as [Response] does. The stages are copied.
func NewModel(stages []Stage) (*Model, error) {
	sys, err := build(stages)
	if err != nil {
		return nil, err
	}
	own := make([]Stage, len(stages))
	for i, st := range stages {
		own[i] = Stage{Num: slices.Clone(st.Num), Den: slices.Clone(st.Den), ScaleRadPerSec: st.ScaleRadPerSec}
	}
	return &Model{stages: own, sys: sys}, nil
}

// Response is [Response] of the model's cascade.
func (m *Model) Response(tS []float64) ([]float64, error) {
	if err := validTimes(tS); err != nil {
		return nil, err
	}
	return m.response(tS), nil
}

// Curve is [Model.Response] for a plot: from the partial fractions (see
// [ModalResponse]) where they are well conditioned from tS's first
// positive time on, which gives the response to about 1e-9 of its scale
// at a fraction of the state space's cost, else exactly as Response. Its
// errors are Response's.
func (m *Model) Curve(tS []float64) ([]float64, error) {
	if err := validTimes(tS); err != nil {
		return nil, err
	}
	if m.sys.zero {
		return make([]float64, len(tS)), nil
	}
	t1 := 0.0
	for _, t := range tS {
		if t > 0 {
			t1 = t
			break
		}
	}
	if me, err := newModalEval(m.stages, m.sys.roots); err == nil && t1 > 0 && me.conditioned(t1) {
		y := make([]float64, len(tS))
		me.eval(tS, y)
		return y, nil
	}
	return m.response(tS), nil
}

// response returns the step response at the validated times tS.
func (m *Model) response(tS []float64) []float64 {
	y := make([]float64, len(tS))
	if !m.sys.zero {
		m.sys.simulate(y, tS)
	}
	return y
}

// validTimes checks times for [Response].
func validTimes(tS []float64) error {
	if len(tS) > MaxPoints {
		return invalidf("%d times, more than %d", len(tS), MaxPoints)
	}
	for i, t := range tS {
		if !(t >= 0) || math.IsInf(t, 1) {
			return invalidf("tS[%d] = %v is not finite and >= 0", i, t)
		}
		if i > 0 && t < tS[i-1] {
			return invalidf("tS[%d] = %v is below tS[%d] = %v", i, t, i-1, tS[i-1])
		}
	}
	return nil
}

func (st Stage) rational() circuit.Rational {
	return circuit.Rational{Num: st.Num, Den: st.Den, ScaleRadPerSec: st.ScaleRadPerSec}
}

// degree returns the degree of c ignoring trailing zeros (−1 for none).
func degree(c []float64) int {
	n := len(c) - 1
	for n >= 0 && c[n] == 0 {
		n--
	}
	return n
}

func (st Stage) validate() error {
	if !(st.ScaleRadPerSec > 0) || math.IsInf(st.ScaleRadPerSec, 1) {
		return invalidf("ScaleRadPerSec = %v is not finite and > 0", st.ScaleRadPerSec)
	}
	for _, c := range [][]float64{st.Num, st.Den} {
		for _, v := range c {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return invalidf("coefficient %v is not finite", v)
			}
		}
	}
	dn, dd := degree(st.Num), degree(st.Den)
	if dd < 0 {
		return invalidf("denominator is zero")
	}
	if dn > dd {
		return invalidf("numerator degree %d above denominator degree %d", dn, dd)
	}
	return nil
}
