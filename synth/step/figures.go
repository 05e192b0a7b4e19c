package step

import (
	"math"
)

// Figures are the usual figures of merit of a step response.
type Figures struct {
	// OvershootPct is the largest excursion beyond the final value, in the
	// direction of the step, in percent of the reference |FinalValue| (see
	// [Analyze]); 0 when the response never passes the final value.
	OvershootPct float64
	// RiseTimeS is the 10–90 % rise time in seconds: from the first time
	// the response has covered 10 % of the way from its initial to its
	// final value to the first time it has covered 90 %. It is NaN when
	// the initial and final values are equal or the response does not get
	// there within the times given.
	RiseTimeS float64
	// SettlingS is the settling time in seconds: the last time the
	// response is outside FinalValue ± tolFrac·reference. It is the first
	// time given when the response is never outside, +Inf when the last
	// sample is still outside (the grid is too short), and NaN for a
	// tolFrac that is not finite and > 0.
	SettlingS float64
	// FinalValue is the value the response settles to: the last sample for
	// [Analyze], the DC gain for [Measure].
	FinalValue float64
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
// figure is NaN). The final value is the last sample, so the grid must
// extend well past settling: whatever the last sample still lacks shifts
// the band (after [TimeGrid]'s 10 time constants about e^−10 ≈ 5e-5 of
// the step, 5 % of a ±0.1 % band). [Measure] takes the exact final value.
//
// The reference for overshoot and settling is |FinalValue|, or, when the
// final value is 0 (a highpass or bandpass), the largest |y|. The step's
// direction is that of FinalValue − y[0] (of the largest excursion when
// they are equal).
//
// Between samples the response is the cubic through the four nearest
// samples: crossing times are roots of that cubic (by bisection to
// rounding), the peak is its maximum, and a peak of the cubic between two
// samples that leaves the settling band counts. The error is of order
// h⁴·|y⁗| for a step h. Against the closed forms of second-order
// sections (in the tests, 2,000 points over 40 time constants): crossing
// times within 1e-6 of the span and overshoot within 3e-4 relative with
// 16 points per period of the ringing (ζ = 0.05); within 3e-9 and 1e-6
// with 60 points or more. [Measure] refines the figures on the exact
// response instead, and takes the DC gain as the final value.
func Analyze(tS, y []float64, tolFrac float64) Figures {
	if len(tS) < 2 || len(y) != len(tS) {
		nan := math.NaN()
		return Figures{OvershootPct: nan, RiseTimeS: nan, SettlingS: nan, FinalValue: nan}
	}
	fig, _ := analyze(tS, y, tolFrac, y[len(y)-1])
	return fig
}

// Measure returns the step response of the cascade at tS (as
// [Response]) and its figures (as [Analyze]) with the DC gain
// ([DCGain]) as the final value, each refined on the exact response: the
// interval of the grid that holds a crossing or the peak is sampled again
// by [Response] at 64 sub-steps, and the figure found there as in
// [Analyze]. The sub-step cubic's error is about 64⁻⁴ of the grid's, so
// the figures are exact up to rounding (crossing times within 3e-12 of
// the span, overshoot within 1e-9, against the closed forms of
// second-order sections in the tests) — provided the grid resolves the response (at least about ten
// points per period of its ringing), because a crossing the grid's
// cubic does not show is not looked for. It returns an error wrapping
// [ErrInvalid] for invalid stages or times (see [Response]), fewer than
// two times, or a cascade without a finite DC gain.
func Measure(stages []Stage, tS []float64, tolFrac float64) ([]float64, Figures, error) {
	if len(tS) < 2 {
		return nil, Figures{}, invalidf("%d times, want at least 2", len(tS))
	}
	y, err := Response(stages, tS)
	if err != nil {
		return nil, Figures{}, err
	}
	final := DCGain(stages)
	if math.IsNaN(final) || math.IsInf(final, 0) {
		return nil, Figures{}, invalidf("the cascade has no finite DC gain, so no final value")
	}
	fig, br := analyze(tS, y, tolFrac, final)
	var sub [refineSteps + 1]float64
	var ys []float64
	resample := func(i, j int) ([]float64, []float64, error) {
		a, b := tS[i], tS[j]
		for k := range sub {
			sub[k] = a + (b-a)*float64(k)/refineSteps
		}
		sub[refineSteps] = b
		var err error
		ys, err = Response(stages, sub[:])
		return sub[:], ys, err
	}
	if br.peak >= 0 {
		lo, hi := max(br.peak-1, 0), min(br.peak+1, len(tS)-1)
		ts, ys, err := resample(lo, hi)
		if err != nil {
			return nil, Figures{}, err
		}
		fig.OvershootPct = overshoot(ts, ys, br.final, br.dir, br.ref)
	}
	for _, lv := range []struct {
		at    int
		level float64
		dst   *float64
	}{{br.rise10, 0.1, &br.t10}, {br.rise90, 0.9, &br.t90}} {
		if lv.at <= 0 {
			continue
		}
		ts, ys, err := resample(lv.at-1, lv.at)
		if err != nil {
			return nil, Figures{}, err
		}
		if t := firstCrossing(ts, ys, br.y0, br.dir*math.Abs(br.swing), lv.level); !math.IsNaN(t) {
			*lv.dst = t // else the grid's estimate stands (a level met exactly at a sample)
		}
	}
	if !math.IsNaN(fig.RiseTimeS) {
		fig.RiseTimeS = br.t90 - br.t10
	}
	if br.settle >= 0 && !math.IsInf(fig.SettlingS, 1) {
		// The grid's last interval outside; when the exact response does
		// not leave the band there after all, look further back.
		band := tolFrac * br.ref
		j := br.settle
		for {
			ts, ys, err := resample(j, j+1)
			if err != nil {
				return nil, Figures{}, err
			}
			if k, ok := lastOutside(ts, ys, final, band, len(ts)-2); ok {
				fig.SettlingS = settleIn(ts, ys, final, band, k)
				break
			}
			var ok bool
			if j, ok = lastOutside(tS, y, final, band, j-1); !ok {
				fig.SettlingS = tS[0]
				break
			}
		}
	}
	return y, fig, nil
}

// refineSteps is the number of sub-steps of [Measure]'s refinement.
const refineSteps = 64

// brackets are the grid positions of analyze's figures, for Measure.
type brackets struct {
	peak           int // sample of the peak, −1 for none
	rise10, rise90 int // first sample at or past the level, −1 for none
	settle         int // interval [settle, settle+1] of the last exit, −1 for none
	final, y0      float64
	swing, dir     float64
	ref            float64
	t10, t90       float64
}

// analyze computes the figures with the given final value.
func analyze(tS, y []float64, tolFrac, final float64) (Figures, brackets) {
	n := len(y)
	fig := Figures{FinalValue: final, RiseTimeS: math.NaN()}
	br := brackets{peak: -1, rise10: -1, rise90: -1, settle: -1, final: final, y0: y[0]}
	br.swing = final - y[0]
	br.ref = math.Abs(final)
	peakAbs, peakDev := 0.0, 0.0
	for _, v := range y {
		peakAbs = math.Max(peakAbs, math.Abs(v))
		if d := v - final; math.Abs(d) > math.Abs(peakDev) {
			peakDev = d
		}
	}
	if br.ref == 0 {
		br.ref = peakAbs
	}
	switch {
	case br.swing != 0:
		br.dir = math.Copysign(1, br.swing)
	case peakDev != 0:
		br.dir = math.Copysign(1, peakDev)
	default:
		br.dir = 1
	}

	// Overshoot: the largest dir·(y − final).
	k := 0
	for i, v := range y {
		if br.dir*(v-final) > br.dir*(y[k]-final) {
			k = i
		}
	}
	if br.ref > 0 {
		br.peak = k
		fig.OvershootPct = overshootAround(tS, y, final, br.dir, br.ref, k)
	}

	// Rise time.
	if br.swing != 0 {
		span := br.dir * math.Abs(br.swing)
		for i, v := range y {
			r := (v - br.y0) / span
			if br.rise10 < 0 && r >= 0.1 {
				br.rise10 = i
			}
			if r >= 0.9 {
				br.rise90 = i
				break
			}
		}
		if br.rise10 >= 0 && br.rise90 >= 0 {
			br.t10 = crossingAt(tS, y, br.y0, span, 0.1, br.rise10)
			br.t90 = crossingAt(tS, y, br.y0, span, 0.9, br.rise90)
			fig.RiseTimeS = br.t90 - br.t10
		}
	}

	// Settling.
	switch {
	case !(tolFrac > 0) || math.IsInf(tolFrac, 1):
		fig.SettlingS = math.NaN()
	case math.Abs(y[n-1]-final) > tolFrac*br.ref:
		fig.SettlingS = math.Inf(1)
	default:
		band := tolFrac * br.ref
		if j, ok := lastOutside(tS, y, final, band, n-2); ok {
			br.settle = j
			fig.SettlingS = settleIn(tS, y, final, band, j)
		} else {
			fig.SettlingS = tS[0]
		}
	}
	return fig, br
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

// overshoot returns the overshoot in percent of ts, ys (a few samples
// around the peak, all of them used for the cubic when four or fewer).
func overshoot(ts, ys []float64, final, dir, ref float64) float64 {
	k := 0
	for i, v := range ys {
		if dir*(v-final) > dir*(ys[k]-final) {
			k = i
		}
	}
	return overshootAround(ts, ys, final, dir, ref, k)
}

// overshootAround refines the peak at sample k by the cubics of the
// intervals either side of it.
func overshootAround(ts, ys []float64, final, dir, ref float64, k int) float64 {
	best := dir * (ys[k] - final)
	for _, j := range []int{k - 1, k} {
		if j < 0 || j+1 >= len(ts) {
			continue
		}
		c := newCubic(ts, ys, j-1, final)
		st, m := c.stationary(ts[j], ts[j+1])
		for _, t := range st[:m] {
			best = math.Max(best, dir*c.at(t))
		}
	}
	return math.Max(0, best) / ref * 100
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

// settleMarginTimeConstants is the margin of [SettlingGrid] over
// ln(1/tolFrac) time constants, for residues above 1 (ringing and
// cascades): e³ ≈ 20.
const settleMarginTimeConstants = 3

// SettlingGrid is [TimeGrid] with a span long enough to see the response
// settle to ±tolFrac: the slowest pole's decay e^(−t/τ) reaches tolFrac
// after ln(1/tolFrac) time constants, so the span is the larger of
// [Span] and (ln(1/tolFrac) + 3)·τ (a margin of e³ ≈ 20 for residues
// above 1). [Span]'s 10 time constants cover ±0.1 % but not ±½ LSB of a
// 16-bit converter (2^−17 needs 11.8). A tolFrac that is not finite and
// in (0, 1) gives TimeGrid's span.
func SettlingGrid(stages []Stage, n int, tolFrac float64) []float64 {
	t := TimeGrid(stages, n)
	if !(tolFrac > 0 && tolFrac < 1) {
		return t
	}
	k := (math.Log(1/tolFrac) + settleMarginTimeConstants) / SpanTimeConstants
	if k <= 1 {
		return t
	}
	end := t[len(t)-1] * k
	for i := range t {
		t[i] = end * float64(i) / float64(len(t)-1)
	}
	return t
}
