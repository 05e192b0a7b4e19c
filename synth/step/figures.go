package step

import (
	"math"
)

// MinFinalFrac is the threshold of the figure rules: overshoot and rise
// time are defined for a response whose final value is at least
// MinFinalFrac of its largest |y| (a lowpass, a bandstop), undershoot for
// the others (a highpass, a bandpass, an even-order equiripple highpass
// whose DC gain is its stopband level); the rise time also needs the
// response to travel at least MinFinalFrac of its largest |y| from its
// value at t = 0⁺ (a bandstop, which starts and ends at its passband
// gain, has none).
const MinFinalFrac = 0.01

// Band is the settling band: ±Frac·FullScale around the final value, or,
// when FullScale is 0, ±Frac of the response's largest |y|. With a
// converter of b bits, Frac is [HalfLSBFrac](b) and FullScale is the
// response's value for a full-scale output (for a unit step into a filter
// of passband gain G, G: the converter sees full scale when the passband
// output is full scale); without one, Frac is 0.001 and FullScale 0.
type Band struct {
	// Frac is the half-width as a fraction of FullScale (or of the peak);
	// it must be in (0, 1).
	Frac float64
	// FullScale is in the units of the response; 0 takes the largest |y|
	// instead. It must be finite and ≥ 0.
	FullScale float64
}

// valid reports whether the band can be used.
func (b Band) valid() bool {
	return b.Frac > 0 && b.Frac < 1 && b.FullScale >= 0 && !math.IsInf(b.FullScale, 1)
}

// halfWidth returns the band's half-width for a response whose largest
// |y| is peakAbs.
func (b Band) halfWidth(peakAbs float64) float64 {
	if b.FullScale > 0 {
		return b.Frac * b.FullScale
	}
	return b.Frac * peakAbs
}

// Figures are the figures of merit of a step response. A figure that is
// undefined for the response, or cannot be measured, is NaN.
type Figures struct {
	// OvershootPct is the largest excursion beyond the final value in the
	// direction of the step (the sign of the final value: a step starts
	// from rest at 0), in percent of |FinalValue|; 0 when the response
	// never passes the final value. It is defined when |FinalValue| ≥
	// [MinFinalFrac]·PeakAbs, NaN otherwise.
	OvershootPct float64
	// UndershootPct is the largest |y| of the sign opposite to the
	// response's largest excursion (the largest |y|), in percent of
	// PeakAbs; 0 when the response never takes that sign. It is
	// given exactly where OvershootPct is not (|FinalValue| <
	// [MinFinalFrac]·PeakAbs, PeakAbs > 0), NaN otherwise: the two are
	// never both defined.
	UndershootPct float64
	// RiseTimeS is the 10–90 % rise time in seconds: from the first time
	// the response has covered 10 % of the way from its value at t = 0⁺
	// to its final value to the first time it has covered 90 %. It is
	// defined where OvershootPct is and the way is at least
	// [MinFinalFrac]·PeakAbs long, and NaN when the response does not get
	// there within the times given.
	RiseTimeS float64
	// SettlingS is the settling time in seconds: the last time the
	// response is outside FinalValue ± BandAbs. It is the first time
	// given when the response is never outside, and NaN for an invalid
	// [Band]. (It is never +Inf: [Analyze] takes the last sample as the
	// final value, and [Measure] samples until the response has settled.)
	SettlingS float64
	// FinalValue is the value the response settles to: the last sample for
	// [Analyze], the DC gain for [Measure].
	FinalValue float64
	// PeakAbs is the largest |y|, the final value's included (the
	// supremum over t ≥ 0).
	PeakAbs float64
	// BandAbs is the half-width of the settling band, in the units of the
	// response (see [Band]).
	BandAbs float64
}

func nanFigures() Figures {
	nan := math.NaN()
	return Figures{OvershootPct: nan, UndershootPct: nan, RiseTimeS: nan, SettlingS: nan, FinalValue: nan, PeakAbs: nan, BandAbs: nan}
}

// HalfLSBFrac returns the settling tolerance of ±½ LSB of a bits-bit
// converter as a fraction of its full scale, 2^−(bits+1) (common practice:
// a step of full scale has settled when it is within half a code of its
// final value). It returns NaN for bits outside 1..64.
func HalfLSBFrac(bits int) float64 {
	if bits < 1 || bits > 64 {
		return math.NaN()
	}
	return math.Ldexp(1, -(bits + 1))
}

// Analyze returns the figures of the sampled step response y at the
// times tS (ascending; the same length, at least 2; otherwise every
// figure is NaN) with the settling band b. The final value is the last
// sample, so the grid must extend well past settling: whatever the last
// sample still lacks shifts the band. [Measure] takes the exact final
// value and chooses its own times.
//
// Between samples the response is the cubic through the four nearest
// samples: crossing times are roots of that cubic (by bisection to
// rounding), the extremes (the peak |y|, the overshoot, the undershoot)
// are its maxima next to the extreme sample, and a peak of the cubic
// between two samples that leaves the settling band counts. The error is
// of order h⁴·|y⁗| for a step h. Against the closed forms of second-order
// sections (in the tests, 2,000 points over 40 time constants): crossing
// times within 1e-6 of the span and overshoot within 3e-4 relative with
// 16 points per period of the ringing (ζ = 0.05); within 3e-9 and 1e-6
// with 60 points or more.
func Analyze(tS, y []float64, b Band) Figures {
	if len(tS) < 2 || len(y) != len(tS) {
		return nanFigures()
	}
	fig, _ := figuresOf(tS, y, y[len(y)-1], b, nil)
	return fig
}

// Measure returns the figures of the step response of the cascade with
// the settling band b and the DC gain ([DCGain]) as the final value,
// sampled at times of its own choosing and refined on the exact response.
//
// The times come from the cascade's modes: the step response less its
// final value is Σ r·e^(p·t) over the poles p, with r the residue of
// H(s)/s there, so that Σ|r|·e^(Re p·t) bounds its distance from the
// final value. The times run until that bound is below a quarter of the
// band — so the response has settled for good before the last one — with
// a step that resolves every mode whose term can still matter to the band
// (16 points per period of its ringing, two per time constant; 8 points
// per period when that would be too many). The grid interval of a
// crossing, or the two either side of an extreme, is then sampled again
// on the exact response at 64 sub-steps each, from the state the grid
// reached at its start, and the figure found there as in [Analyze]. (The
// model is built once, and the exponential of each distinct step, of the
// grid or of the sub-steps, is computed once per call; the sub-steps of
// one stretch of the grid are the same.) So the figures are exact up to
// rounding (crossing times within 3e-12 of the span, overshoot within
// 1e-9, against the closed forms of second-order sections in the tests).
// The grid's size is bounded (points × (states+1)² ≤ 3e8, and
// [MaxPoints]); when the response cannot be resolved within it — a
// high-Q pole that rings for very many periods before it settles — the
// figures that depend on it (all but FinalValue) are NaN. So they are
// when the computed response is not finite.
//
// It returns an error wrapping [ErrInvalid] for invalid stages (see
// [Response]) or an invalid band, [ErrUnstable] for a cascade with a
// pole on or right of the imaginary axis; the figures are then NaN.
func Measure(stages []Stage, b Band) (Figures, error) {
	if !b.valid() {
		return nanFigures(), invalidf("settling band %+v: Frac must be in (0, 1) and FullScale finite and >= 0", b)
	}
	m, err := NewModel(stages)
	if err != nil {
		return nanFigures(), err
	}
	return m.Measure(b)
}

// Measure is [Measure] of the model's cascade.
func (m *Model) Measure(b Band) (Figures, error) {
	if !b.valid() {
		return nanFigures(), invalidf("settling band %+v: Frac must be in (0, 1) and FullScale finite and >= 0", b)
	}
	stages, sys := m.stages, m.sys
	if sys.zero {
		fig := nanFigures()
		fig.FinalValue, fig.PeakAbs, fig.BandAbs, fig.SettlingS = 0, 0, b.halfWidth(0), 0
		return fig, nil
	}
	ms, err := modesOf(stages, sys.roots)
	if err != nil {
		return nanFigures(), err
	}
	final := DCGain(stages)
	fig := nanFigures()
	fig.FinalValue = final
	if math.IsNaN(final) || math.IsInf(final, 0) {
		return fig, nil
	}
	// The partial fractions serve every simulation below while they are
	// well conditioned (checked at each grid's first step); else the state
	// space, with one cache of discretisations for all of them.
	modal, err := newModalEval(stages, sys.roots)
	if err != nil || !measureModal {
		modal = nil
	}
	cache := &stepCache{sys: sys}
	budget := min(MaxPoints, max(minGridPoints, int(measureWork/float64((sys.n+1)*(sys.n+1)))))
	env0 := envelope(ms, 0)

	// A lower bound of the peak |y| for the band: y(0⁺) = H(∞), the final
	// value, and the first few thousand samples of a grid that resolves
	// the modes down to 1 % of the envelope.
	peakLB := math.Max(math.Abs(final), math.Abs(sys.d))
	if b.FullScale == 0 && peakLB < env0 {
		// (measureGrid resolves the modes above band/(4·len(ms)).)
		end := envelopeBelow(ms, 0.01*env0)
		probeBand := 0.01 * env0 * 4 * float64(len(ms))
		if ts, _ := measureGrid(ms, probeBand, end, pointsPerPeriod[0], min(budget, 2048), true); len(ts) > 1 {
			ys := make([]float64, len(ts))
			if modal != nil && !modal.conditioned(ts[1]) {
				modal = nil
			}
			if modal != nil {
				modal.eval(ts, ys)
			} else {
				sys.advance(make([]float64, sys.n), 0, ts, ys, nil, cache)
			}
			for _, v := range ys {
				peakLB = math.Max(peakLB, math.Abs(v))
			}
		}
	}
	band := b.halfWidth(peakLB)
	if !(band > 0) || math.IsNaN(peakLB) || math.IsInf(peakLB, 0) {
		return fig, nil
	}

	endS := envelopeBelow(ms, band/4)
	if endS == 0 {
		// Within a quarter band from the start: sample the largest mode's
		// decay to a thousandth anyway, for the figures.
		endS = envelopeBelow(ms, 1e-3*env0)
		if endS == 0 {
			endS = 1 / sys.wRef
		}
	}
	for range 4 {
		var ts []float64
		ok := false
		for _, ppp := range pointsPerPeriod {
			if ts, ok = measureGrid(ms, band, endS, ppp, budget, false); ok {
				break
			}
		}
		if !ok {
			return fig, nil // too many points to resolve it
		}
		ys := make([]float64, len(ts))
		if modal != nil && len(ts) > 1 && !modal.conditioned(ts[1]) {
			modal = nil
		}
		// The states at the grid's times, from which the refinements
		// start (the partial fractions need none).
		var states []float64
		if modal != nil {
			modal.eval(ts, ys)
		} else {
			states = make([]float64, len(ts)*sys.n)
			sys.advance(make([]float64, sys.n), 0, ts, ys, states, cache)
		}
		for _, v := range ys {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fig, nil
			}
		}
		x := make([]float64, sys.n)
		sub := func(i, j int) ([]float64, []float64, error) {
			// refineSteps sub-steps of each grid interval, so that the
			// refinements in one stretch of the grid share their sub-step
			// (and its exponential) whatever their span.
			st := make([]float64, 0, (j-i)*refineSteps+1)
			for m := i; m < j; m++ {
				a, c := ts[m], ts[m+1]
				for k := range refineSteps {
					st = append(st, a+(c-a)*float64(k)/refineSteps)
				}
			}
			st = append(st, ts[j])
			yy := make([]float64, len(st))
			if states == nil {
				modal.eval(st, yy)
				return st, yy, nil
			}
			copy(x, states[i*sys.n:(i+1)*sys.n])
			sys.advance(x, ts[i]*sys.wRef, st, yy, nil, cache)
			return st, yy, nil
		}
		got, err := figuresOf(ts, ys, final, b, sub)
		if err != nil {
			return fig, err
		}
		if !math.IsInf(got.SettlingS, 1) {
			return got, nil
		}
		// Still outside the band at the end: the modal bound was rounded
		// too far (clustered poles). Go on for longer.
		endS *= 2
	}
	return fig, nil
}

// measureModal lets [Model.Measure] use the partial fractions; the tests
// turn it off to compare with the state space.
var measureModal = true

// refineSteps is the number of sub-steps of each grid interval in
// [Measure]'s refinement.
const refineSteps = 64

// sampler returns the exact response at refineSteps sub-steps of each
// grid interval of [ts[i], ts[j]], for Measure's refinement.
type sampler func(i, j int) ([]float64, []float64, error)

// sign returns the sign of v, +1 for 0.
func sign(v float64) float64 { return math.Copysign(1, v+0) }

// argmax returns the index of the largest s·(y − off) over ys.
func argmax(ys []float64, s, off float64) int {
	k := 0
	for i, v := range ys {
		if s*(v-off) > s*(ys[k]-off) {
			k = i
		}
	}
	return k
}

// extremum returns the largest s·(y − off) near sample k: over the
// intervals either side of it, on the grid's cubics, or, with sub, on
// the exact response there at refineSteps sub-steps of each and their
// cubics.
func extremum(ts, ys []float64, k int, s, off float64, sub sampler) (float64, error) {
	if sub != nil {
		lo, hi := max(k-1, 0), min(k+1, len(ts)-1)
		if hi > lo {
			st, sy, err := sub(lo, hi)
			if err != nil {
				return 0, err
			}
			return extremumAround(st, sy, argmax(sy, s, off), s, off), nil
		}
	}
	return extremumAround(ts, ys, k, s, off), nil
}

// extremumAround refines the extreme sample k of s·(y − off) by the
// cubics of the intervals either side of it.
func extremumAround(ts, ys []float64, k int, s, off float64) float64 {
	best := s * (ys[k] - off)
	for _, j := range []int{k - 1, k} {
		if j < 0 || j+1 >= len(ts) {
			continue
		}
		c := newCubic(ts, ys, j-1, off)
		st, m := c.stationary(ts[j], ts[j+1])
		for _, t := range st[:m] {
			best = math.Max(best, s*c.at(t))
		}
	}
	return best
}

// figuresOf computes the figures of the samples ts, ys with the given
// final value and band; sub, when not nil, refines them on the exact
// response (Measure).
func figuresOf(ts, ys []float64, final float64, b Band, sub sampler) (Figures, error) {
	n := len(ys)
	fig := nanFigures()
	fig.FinalValue = final

	// The peak |y|, of the sign of the largest sample.
	kp := 0
	for i, v := range ys {
		if math.Abs(v) > math.Abs(ys[kp]) {
			kp = i
		}
	}
	sp := sign(ys[kp])
	peak, err := extremum(ts, ys, kp, sp, 0, sub)
	if err != nil {
		return fig, err
	}
	// The response tends to its final value: that is a candidate too.
	peak = math.Max(peak, math.Abs(final))
	fig.PeakAbs = peak
	band := math.NaN()
	if b.valid() {
		band = b.halfWidth(peak)
	}
	fig.BandAbs = band

	switch {
	case peak > 0 && math.Abs(final) >= MinFinalFrac*peak:
		dir := sign(final)
		ov, err := extremum(ts, ys, argmax(ys, dir, final), dir, final, sub)
		if err != nil {
			return fig, err
		}
		fig.OvershootPct = math.Max(0, ov) / math.Abs(final) * 100
		y0 := ys[0]
		if swing := final - y0; math.Abs(swing) >= MinFinalFrac*peak {
			t10, t90, err := riseTimes(ts, ys, y0, swing, sub)
			if err != nil {
				return fig, err
			}
			fig.RiseTimeS = t90 - t10
		}
	case peak > 0:
		un, err := extremum(ts, ys, argmax(ys, -sp, 0), -sp, 0, sub)
		if err != nil {
			return fig, err
		}
		fig.UndershootPct = math.Max(0, math.Max(un, -sp*final)) / peak * 100
	}

	// Settling.
	switch {
	case math.IsNaN(band) || math.IsInf(band, 0):
	case math.Abs(ys[n-1]-final) > band:
		fig.SettlingS = math.Inf(1)
	default:
		j, ok := lastOutside(ts, ys, final, band, n-2)
		if !ok {
			fig.SettlingS = ts[0]
			break
		}
		if sub == nil {
			fig.SettlingS = settleIn(ts, ys, final, band, j)
			break
		}
		// The grid's last interval outside; when the exact response does
		// not leave the band there after all, look further back.
		for {
			st, sy, err := sub(j, j+1)
			if err != nil {
				return fig, err
			}
			if k, ok := lastOutside(st, sy, final, band, len(st)-2); ok {
				fig.SettlingS = settleIn(st, sy, final, band, k)
				break
			}
			if j, ok = lastOutside(ts, ys, final, band, j-1); !ok {
				fig.SettlingS = ts[0]
				break
			}
		}
	}
	return fig, nil
}

// riseTimes returns the times at which the response first covers 10 % and
// 90 % of the swing from y0, NaN when it does not.
func riseTimes(ts, ys []float64, y0, swing float64, sub sampler) (t10, t90 float64, err error) {
	t10, t90 = math.NaN(), math.NaN()
	for _, lv := range []struct {
		level float64
		dst   *float64
	}{{0.1, &t10}, {0.9, &t90}} {
		at := -1
		for i, v := range ys {
			if (v-y0)/swing >= lv.level {
				at = i
				break
			}
		}
		if at < 0 {
			return math.NaN(), math.NaN(), nil
		}
		*lv.dst = crossingAt(ts, ys, y0, swing, lv.level, at)
		if sub == nil || at == 0 {
			continue
		}
		st, sy, err := sub(at-1, at)
		if err != nil {
			return t10, t90, err
		}
		if t := firstCrossing(st, sy, y0, swing, lv.level); !math.IsNaN(t) {
			*lv.dst = t // else the grid's estimate stands (a level met exactly at a sample)
		}
	}
	return t10, t90, nil
}

// cubic is the interpolating cubic through four samples, in Newton form
// about the first node, in the local variable x = (t − t0)/h.
type cubic struct {
	t0, h          float64
	c0, c1, c2, c3 float64 // p = c0 + x·(c1 + x·(c2 + x·c3)) after expansion
}

// newCubic returns the cubic through the samples i0..i0+3 (clamped to
// the slice; fewer samples give a lower degree) of ts, ys minus off.
func newCubic(ts, ys []float64, i0 int, off float64) cubic {
	n := len(ts)
	m := min(4, n)
	i0 = min(max(i0, 0), n-m)
	h := ts[i0+m-1] - ts[i0]
	if h == 0 {
		h = 1
	}
	var x, d [4]float64
	for i := range m {
		x[i] = (ts[i0+i] - ts[i0]) / h
		d[i] = ys[i0+i] - off
	}
	// Divided differences.
	for lvl := 1; lvl < m; lvl++ {
		for i := m - 1; i >= lvl; i-- {
			if den := x[i] - x[i-lvl]; den != 0 {
				d[i] = (d[i] - d[i-1]) / den
			} else {
				d[i] = 0
			}
		}
	}
	// p = d0 + d1·X + d2·X(X − x1) + d3·X(X − x1)(X − x2), x0 = 0.
	x1, x2 := x[1], x[2]
	return cubic{
		t0: ts[i0], h: h,
		c0: d[0],
		c1: d[1] - d[2]*x1 + d[3]*x1*x2,
		c2: d[2] - d[3]*(x1+x2),
		c3: d[3],
	}
}

func (c cubic) at(t float64) float64 {
	x := (t - c.t0) / c.h
	return c.c0 + x*(c.c1+x*(c.c2+x*c.c3))
}

// stationary returns the times in (a, b) where the cubic's derivative
// vanishes: st[:n].
func (c cubic) stationary(a, b float64) (st [2]float64, n int) {
	// p′ ∝ 3c3·x² + 2c2·x + c1.
	qa, qb, qc := 3*c.c3, 2*c.c2, c.c1
	var xs [2]float64
	m := 0
	switch {
	case qa == 0 && qb != 0:
		xs[0], m = -qc/qb, 1
	case qa != 0:
		if disc := qb*qb - 4*qa*qc; disc >= 0 {
			q := -(qb + math.Copysign(math.Sqrt(disc), qb)) / 2
			if q != 0 {
				xs[0], xs[1], m = q/qa, qc/q, 2
			} else {
				xs[0], m = 0, 1
			}
		}
	}
	for _, x := range xs[:m] {
		if t := c.t0 + x*c.h; t > a && t < b {
			st[n] = t
			n++
		}
	}
	return st, n
}

// bisect returns the root of g in [a, b], where g(a) and g(b) differ in
// sign (or one is 0), to rounding.
func bisect(g func(float64) float64, a, b float64) float64 {
	ga := g(a)
	if ga == 0 {
		return a
	}
	for range 200 {
		m := a + (b-a)/2
		if m <= a || m >= b {
			break
		}
		gm := g(m)
		if gm == 0 {
			return m
		}
		if (gm > 0) == (ga > 0) {
			a, ga = m, gm
		} else {
			b = m
		}
	}
	return a + (b-a)/2
}

// crossingAt returns the time in (ts[i−1], ts[i]] where (y − y0)/span
// reaches level, ts[0] for i = 0.
func crossingAt(ts, ys []float64, y0, span, level float64, i int) float64 {
	if i == 0 {
		return ts[0]
	}
	c := newCubic(ts, ys, i-2, y0+level*span)
	g := func(t float64) float64 { return c.at(t) / span }
	if g(ts[i-1]) >= 0 || g(ts[i]) < 0 {
		// The cubic does not bracket it (only at a sharp corner): linear.
		a, b := (ys[i-1]-y0)/span-level, (ys[i]-y0)/span-level
		return ts[i-1] + (ts[i]-ts[i-1])*(-a)/(b-a)
	}
	return bisect(g, ts[i-1], ts[i])
}

// firstCrossing is crossingAt at the first sample at or past the level.
func firstCrossing(ts, ys []float64, y0, span, level float64) float64 {
	for i, v := range ys {
		if (v-y0)/span >= level {
			return crossingAt(ts, ys, y0, span, level, i)
		}
	}
	return math.NaN()
}

// lastOutside returns the last interval [j, j+1], j ≤ from, in which the
// response leaves final ± band: a sample outside, or the interval's cubic
// peaking outside between samples.
func lastOutside(ts, ys []float64, final, band float64, from int) (int, bool) {
	for j := min(from, len(ts)-2); j >= 0; j-- {
		a, b := math.Abs(ys[j]-final), math.Abs(ys[j+1]-final)
		if a > band || b > band {
			return j, true
		}
		if math.Max(a, b) < band/2 {
			continue // a peak above the band between these would be unresolved anyway
		}
		c := newCubic(ts, ys, j-1, final)
		st, m := c.stationary(ts[j], ts[j+1])
		for _, t := range st[:m] {
			if math.Abs(c.at(t)) > band {
				return j, true
			}
		}
	}
	return 0, false
}

// settleIn returns the last time in interval [j, j+1] at which the
// response leaves final ± band (see lastOutside).
func settleIn(ts, ys []float64, final, band float64, j int) float64 {
	if math.Abs(ys[j+1]-final) > band {
		return ts[j+1]
	}
	c := newCubic(ts, ys, j-1, final)
	g := func(t float64) float64 { return math.Abs(c.at(t)) - band }
	// The latest point of the interval that is outside: a stationary
	// point of the cubic, or the left sample.
	out := math.NaN()
	if math.Abs(ys[j]-final) > band {
		out = ts[j]
	}
	st, m := c.stationary(ts[j], ts[j+1])
	for _, t := range st[:m] {
		if g(t) > 0 && !(t < out) {
			out = t
		}
	}
	if math.IsNaN(out) {
		return ts[j]
	}
	if g(ts[j+1]) > 0 {
		return ts[j+1]
	}
	return bisect(g, out, ts[j+1])
}

// SettleMargin is how far past the settling time [SettlingGrid] reaches.
const SettleMargin = 1.25

// settleMarginTimeConstants is the margin of [SettlingGrid]'s fallback
// over ln(1/tolFrac) time constants, for residues above 1 (ringing and
// cascades): e³ ≈ 20.
const settleMarginTimeConstants = 3

// SettlingGrid returns n equally spaced times (n clamped as by
// [TimeGrid]) from 0 to [SettleMargin] times the settling time that
// [Measure] finds for the band ±tolFrac of the response's largest |y|,
// so that the grid covers the settling of a lowpass, highpass, bandpass
// or bandstop alike, whatever the slowest pole (a bandstop's slowest
// poles sit next to its notch zeros and hardly show). When there is no
// such time (an unstable cascade, a band that is not in (0, 1), a
// response that cannot be resolved, or one that never leaves the band)
// the span is the larger of [Span] and (ln(1/tolFrac) + 3)·τ, τ the
// slowest pole's time constant (a margin of e³ ≈ 20 for residues above
// 1), or [Span] alone for a tolFrac that is not in (0, 1).
func SettlingGrid(stages []Stage, n int, tolFrac float64) []float64 {
	t := TimeGrid(stages, n)
	end := t[len(t)-1]
	if fig, err := Measure(stages, Band{Frac: tolFrac}); err == nil && fig.SettlingS > 0 && !math.IsInf(fig.SettlingS, 1) {
		end = SettleMargin * fig.SettlingS
	} else if tolFrac > 0 && tolFrac < 1 {
		end *= math.Max(1, (math.Log(1/tolFrac)+settleMarginTimeConstants)/SpanTimeConstants)
	}
	return Grid(end, len(t))
}

// Grid returns n equally spaced times from 0 to endS inclusive,
// t[i] = endS·i/(n−1); n is clamped to [2, MaxPoints].
func Grid(endS float64, n int) []float64 {
	n = min(max(n, 2), MaxPoints)
	t := make([]float64, n)
	for i := range t {
		t[i] = endS * float64(i) / float64(n-1)
	}
	return t
}
