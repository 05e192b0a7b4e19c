// Package equalize chooses all-pass sections that flatten a filter's group
// delay over its passband.
//
// # Criterion
//
// The spread of a delay τ(f) over the passband [lo, hi] (a lowpass's from
// 0 Hz) is (max τ − min τ)/mean τ, the mean taken over linear frequency.
// [Equalize] appends all-pass sections until the spread of the filter's
// delay plus theirs is within the target, or reports that [MaxSections]
// sections cannot bring it there.
//
// # Sections
//
// A first-order all-pass (a − s)/(a + s) adds the delay 2a/(a² + ω²), at
// most 2/a at DC; a second-order one (s² − s·ω0/Q + ω0²)/(s² + s·ω0/Q +
// ω0²) adds 2(ω0/Q)(ω0² + ω²)/((ω0² − ω²)² + (ω·ω0/Q)²), a hump near ω0
// whose height and width Q sets (closed forms: the derivative of the
// phase −2·atan(ω/a) and −2·atan((ω·ω0/Q)/(ω0² − ω²))). Their magnitude is
// one at every frequency, so they leave the filter's magnitude alone.
//
// # Search
//
// Sections are added one at a time. For each new section the search tries
// a first-order section and second-order sections from fixed starts spread
// over the passband (f0 at 10 %, 40 %, 70 % and 100 % of the way from lo
// to hi, Q 0.7 and 2; a at 0.5, 1 and 2 times the upper edge), fitting the
// new section alone with Nelder-Mead (the earlier sections held); the two
// best then have every section's parameters refitted together, first to
// the least-squares criterion Σ(τ − mean)²/mean² (smooth) and then to the
// spread itself (minimax), restarted twice with smaller simplexes; the
// best first-order start is refitted too when it is not among them, and
// taken when it meets the target (one op-amp instead of two, and the
// chain's sign kept). Otherwise the sections found do not depend on the
// target, which only decides when the search stops. Parameters are logarithms (a, ω0 and Q − ½),
// ω0 and a kept within [hi/100, 20·hi] (for a band, lo/20 upward) and Q
// within [0.5, [MaxQ]]. Every Nelder-Mead run is bounded (see the
// constants), so one call costs at most a fixed number of delay
// evaluations on a [fitPoints]-point grid; the spread that decides is
// taken on the [checkPoints]-point grid.
package equalize

import (
	"context"
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/zpk"
)

// Bounds of the search.
const (
	// MaxSections is the most all-pass sections Equalize appends.
	MaxSections = 8
	// MaxQ is the highest Q of a second-order all-pass section: its
	// bandpass (multiple-feedback) needs a resistor ratio of 4Q² at equal
	// capacitors, which the default window 1 kΩ..220 kΩ holds up to
	// Q ≈ 7.4 (our choice: 7, the last whole Q inside it).
	MaxQ = 7
	// fitPoints is the number of linear-frequency points the fit uses.
	fitPoints = 96
	// checkPoints is the number of linear-frequency points on which the
	// spread is judged (and reported).
	checkPoints = 2049
	// newEvals bounds the Nelder-Mead evaluations of one start of a new
	// section alone; jointEvalsPerDim those of each joint refit, per
	// parameter.
	newEvals         = 200
	jointEvalsPerDim = 150
	// jointCandidates is how many starts are refitted jointly at most:
	// the best two and the best first-order one.
	jointCandidates = 3
	// firstOrderShare: a first-order section is preferred when its spread
	// on the fit grid is within this share of the target (the check grid
	// is finer, so a little room).
	firstOrderShare = 0.95
)

// jointPasses are the joint refits of each candidate: least squares, then
// the spread itself, restarted twice from the best point with a smaller
// simplex (Nelder-Mead stalls on a minimax criterion's kinks; a fresh
// simplex moves it on).
var jointPasses = []struct {
	minimax bool
	step    float64
}{{false, 0.2}, {true, 0.2}, {true, 0.05}, {true, 0.01}}

// starts is the number of starts tried for each new section.
const starts = 11

// MaxEvaluations is the most delay-spread evaluations one [Equalize] call
// makes (each on fitPoints points), the bound on its cost: per section,
// each start's fit and its final value, and for each joint candidate two
// refits of at most jointEvalsPerDim evaluations per parameter (two
// parameters per section at most) and its final value.
const MaxEvaluations = MaxSections * (starts*(newEvals+1) + jointCandidates*(nJointPasses*jointEvalsPerDim*2*MaxSections+1))

// nJointPasses is len(jointPasses).
const nJointPasses = 4

// Result is an equaliser.
type Result struct {
	// Sections are the all-pass sections, unit gain, in the order found.
	Sections []section.Section
	// FilterSpreadPct is the spread of the filter's own delay, in percent.
	FilterSpreadPct float64
	// SpreadPct is the spread of the filter's delay plus the sections'.
	SpreadPct float64
	// Evaluations is the number of spread evaluations the search made.
	Evaluations int
}

// LimitError says that MaxSections sections cannot reach the target.
type LimitError struct {
	// TargetPct is the spread asked for, BestPct the least found (with
	// MaxSections sections), FilterPct the filter's own.
	TargetPct, BestPct, FilterPct float64
	// Evaluations is the number of spread evaluations the search made.
	Evaluations int
}

// Error words the failure with its figures and the search's bound.
func (e *LimitError) Error() string {
	return fmt.Sprintf("%d all-pass sections bring the passband's group-delay spread from %.3g %% down to %.3g %% at best, not to %g %% (the search fits each added section from %d starts and refits all jointly, at most %d evaluations)",
		MaxSections, e.FilterPct, e.BestPct, e.TargetPct, starts, MaxEvaluations)
}

// Spread returns (max − min)/mean of delay, the mean taken as the
// trapezoidal average (delay sampled on an evenly spaced grid).
func Spread(delay []float64) float64 {
	if len(delay) == 0 {
		return 0
	}
	lo, hi := slices.Min(delay), slices.Max(delay)
	return (hi - lo) / trapMean(delay)
}

func trapMean(v []float64) float64 {
	if len(v) == 1 {
		return v[0]
	}
	s := (v[0] + v[len(v)-1]) / 2
	for _, x := range v[1 : len(v)-1] {
		s += x
	}
	return s / float64(len(v)-1)
}

// LinearGridHz returns n evenly spaced frequencies from loHz to hiHz.
func LinearGridHz(loHz, hiHz float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = loHz + (hiHz-loHz)*float64(i)/float64(n-1)
	}
	out[n-1] = hiHz
	return out
}

// SpreadOf returns the spread, in percent, of h's group delay over
// [loHz, hiHz] on the grid the equaliser judges on.
func SpreadOf(h zpk.ZPK, loHz, hiHz float64) float64 {
	return 100 * Spread(response.GroupDelayS(nil, h, LinearGridHz(loHz, hiHz, checkPoints)))
}

// param is one section's parameters: first order (q == 0) or second.
type param struct {
	second bool
	x      [2]float64 // ln(ω/ωref), ln(Q − ½)
}

// problem holds the fit's grids and the filter's delay on them.
type problem struct {
	wref       float64   // 2π·hi
	wmin, wmax float64   // bounds of a and ω0
	w          []float64 // fit grid, rad/s
	base       []float64 // filter delay on the fit grid
	tmp        []float64
	evals      int
}

// Equalize returns the all-pass sections that bring the spread of h's
// group delay over [loHz, hiHz] within maxSpreadPct percent (none when h
// meets it already). It returns a [*LimitError] when MaxSections sections
// cannot, an error for a band that is not 0 ≤ loHz < hiHz or a target
// that is not positive, and ctx.Err() when ctx is done first.
func Equalize(ctx context.Context, h zpk.ZPK, loHz, hiHz, maxSpreadPct float64) (Result, error) {
	if !(loHz >= 0) || !(hiHz > loHz) || math.IsInf(hiHz, 0) {
		return Result{}, fmt.Errorf("equalize: band [%g, %g] Hz is not 0 ≤ lo < hi", loHz, hiHz)
	}
	if !(maxSpreadPct > 0) || math.IsInf(maxSpreadPct, 0) {
		return Result{}, fmt.Errorf("equalize: target spread %g %% is not positive and finite", maxSpreadPct)
	}
	checkGrid := LinearGridHz(loHz, hiHz, checkPoints)
	baseCheck := response.GroupDelayS(nil, h, checkGrid)
	res := Result{FilterSpreadPct: 100 * Spread(baseCheck)}
	res.SpreadPct = res.FilterSpreadPct
	if res.FilterSpreadPct <= maxSpreadPct {
		return res, nil
	}
	fitGrid := LinearGridHz(loHz, hiHz, fitPoints)
	p := &problem{wref: response.RadPerSec(hiHz), base: response.GroupDelayS(nil, h, fitGrid)}
	p.wmax = 20 * p.wref
	p.wmin = p.wref / 100
	if loHz > 0 {
		p.wmin = math.Max(p.wmin, response.RadPerSec(loHz)/20)
	}
	p.w = make([]float64, len(fitGrid))
	for i, f := range fitGrid {
		p.w[i] = response.RadPerSec(f)
	}
	p.tmp = make([]float64, len(fitGrid))

	var params []param
	best := math.Inf(1)
	for len(params) < MaxSections {
		if err := ctx.Err(); err != nil {
			return Result{}, err
		}
		params = p.addSection(params, loHz, hiHz, maxSpreadPct)
		secs := p.sections(params)
		tot := slices.Clone(baseCheck)
		for _, s := range secs {
			d := response.GroupDelayS(nil, s.ZPK(), checkGrid)
			for i := range tot {
				tot[i] += d[i]
			}
		}
		spread := 100 * Spread(tot)
		if spread < best {
			best = spread
		}
		if spread <= maxSpreadPct {
			res.Sections, res.SpreadPct, res.Evaluations = secs, spread, p.evals
			return res, nil
		}
	}
	return Result{}, &LimitError{TargetPct: maxSpreadPct, BestPct: best, FilterPct: res.FilterSpreadPct, Evaluations: p.evals}
}

// addSection returns params with one more section, every parameter
// refitted.
func (p *problem) addSection(params []param, loHz, hiHz, targetPct float64) []param {
	type cand struct {
		ps   []param
		cost float64
	}
	span := hiHz - loHz
	var from []param
	for _, k := range []float64{0.5, 1, 2} {
		from = append(from, param{x: [2]float64{math.Log(k), 0}})
	}
	for _, frac := range []float64{0.1, 0.4, 0.7, 1} {
		f0 := loHz + frac*span
		for _, q := range []float64{0.7, 2} {
			from = append(from, param{second: true, x: [2]float64{math.Log(f0 / hiHz), math.Log(q - 0.5)}})
		}
	}
	if len(from) != starts || len(jointPasses) != nJointPasses {
		panic("equalize: the starts and their count disagree")
	}
	var cands []cand
	for _, st := range from {
		ps := append(slices.Clone(params), st)
		n := 1
		if st.second {
			n = 2
		}
		// Fit the new section alone.
		x0 := st.x[:n]
		x := nelderMead(func(x []float64) float64 {
			copy(ps[len(ps)-1].x[:n], x)
			return p.cost(ps, false)
		}, x0, 0.5, newEvals)
		copy(ps[len(ps)-1].x[:n], x)
		cands = append(cands, cand{ps, p.cost(ps, false)})
	}
	slices.SortStableFunc(cands, func(a, b cand) int {
		switch {
		case a.cost < b.cost:
			return -1
		case a.cost > b.cost:
			return 1
		}
		return 0
	})
	// The best two, and the best first-order start when it is not among
	// them: a first-order stage takes one op-amp, not two, and keeps the
	// chain's sign, so it is taken whenever it meets the target.
	isFirst := func(c cand) bool { return !c.ps[len(c.ps)-1].second }
	joint := slices.Clip(cands[:2])
	if !isFirst(joint[0]) && !isFirst(joint[1]) {
		if i := slices.IndexFunc(cands, isFirst); i >= 0 {
			joint = append(joint, cands[i])
		}
	}
	var best, bestFirst []param
	bestCost, firstCost := math.Inf(1), math.Inf(1)
	for _, c := range joint {
		ps := c.ps
		for _, pass := range jointPasses {
			x := nelderMead(func(x []float64) float64 {
				unpack(ps, x)
				return p.cost(ps, pass.minimax)
			}, pack(ps), pass.step, jointEvalsPerDim*2*len(ps))
			unpack(ps, x)
		}
		cost := p.cost(ps, true)
		if cost < bestCost {
			best, bestCost = ps, cost
		}
		if !ps[len(ps)-1].second && cost < firstCost {
			bestFirst, firstCost = ps, cost
		}
	}
	if bestFirst != nil && 100*firstCost <= firstOrderShare*targetPct {
		return bestFirst
	}
	return best
}

func pack(ps []param) []float64 {
	var x []float64
	for _, q := range ps {
		x = append(x, q.x[0])
		if q.second {
			x = append(x, q.x[1])
		}
	}
	return x
}

func unpack(ps []param, x []float64) {
	k := 0
	for i := range ps {
		ps[i].x[0] = x[k]
		k++
		if ps[i].second {
			ps[i].x[1] = x[k]
			k++
		}
	}
}

// omega returns a section's a or ω0 in rad/s, and its Q (0: first order);
// ok is false outside the bounds.
func (p *problem) omega(q param) (w, qq float64, ok bool) {
	w = p.wref * math.Exp(q.x[0])
	ok = w >= p.wmin && w <= p.wmax
	if q.second {
		qq = 0.5 + math.Exp(q.x[1])
		ok = ok && qq <= MaxQ
	}
	return w, qq, ok
}

// cost returns the fit's criterion for ps: the spread (minimax) or the
// normalised mean square deviation; +Inf outside the bounds.
func (p *problem) cost(ps []param, minimax bool) float64 {
	p.evals++
	t := p.tmp
	copy(t, p.base)
	for _, q := range ps {
		w0, qq, ok := p.omega(q)
		if !ok {
			return math.Inf(1)
		}
		if !q.second {
			for i, w := range p.w {
				t[i] += 2 * w0 / (w0*w0 + w*w)
			}
			continue
		}
		b := w0 / qq
		for i, w := range p.w {
			d := w0*w0 - w*w
			t[i] += 2 * b * (w0*w0 + w*w) / (d*d + w*w*b*b)
		}
	}
	if minimax {
		return Spread(t)
	}
	m := trapMean(t)
	s := 0.0
	for _, v := range t {
		s += (v - m) * (v - m)
	}
	return s / (m * m * float64(len(t)))
}

// sections returns the all-pass sections of ps.
func (p *problem) sections(ps []param) []section.Section {
	out := make([]section.Section, len(ps))
	for i, q := range ps {
		w, qq, _ := p.omega(q)
		if q.second {
			out[i] = section.SecondOrderAllpass(w, qq)
		} else {
			out[i] = section.FirstOrderAllpass(w)
		}
	}
	return out
}

// nelderMead minimises f from x0 with an initial simplex of the given
// step along each axis, in at most maxEvals evaluations (standard
// coefficients: reflection 1, expansion 2, contraction ½, shrink ½;
// Nelder & Mead, Computer Journal 7, 1965). It returns the best point.
func nelderMead(f func([]float64) float64, x0 []float64, step float64, maxEvals int) []float64 {
	n := len(x0)
	pts := make([][]float64, n+1)
	vals := make([]float64, n+1)
	for i := range pts {
		pts[i] = slices.Clone(x0)
		if i > 0 {
			pts[i][i-1] += step
		}
		vals[i] = f(pts[i])
	}
	evals := n + 1
	cen := make([]float64, n)
	try := func(a float64, out []float64) float64 {
		for j := range out {
			out[j] = cen[j] + a*(pts[n][j]-cen[j])
		}
		evals++
		return f(out)
	}
	xr, xe := make([]float64, n), make([]float64, n)
	idx := make([]int, n+1)
	np, nv := make([][]float64, n+1), make([]float64, n+1)
	for evals+n+2 <= maxEvals { // an iteration costs at most n + 2
		// Order: best first.
		for i := range idx {
			idx[i] = i
		}
		slices.SortStableFunc(idx, func(a, b int) int {
			switch {
			case vals[a] < vals[b]:
				return -1
			case vals[a] > vals[b]:
				return 1
			}
			return 0
		})
		for i, k := range idx {
			np[i], nv[i] = pts[k], vals[k]
		}
		pts, vals, np, nv = np, nv, pts, vals
		if math.Abs(vals[n]-vals[0]) <= 1e-12*math.Abs(vals[0]) && !math.IsInf(vals[0], 0) {
			break
		}
		for j := range cen {
			cen[j] = 0
			for i := range n {
				cen[j] += pts[i][j] / float64(n)
			}
		}
		fr := try(-1, xr)
		switch {
		case fr < vals[0]:
			if fe := try(-2, xe); fe < fr {
				copy(pts[n], xe)
				vals[n] = fe
			} else {
				copy(pts[n], xr)
				vals[n] = fr
			}
		case fr < vals[n-1]:
			copy(pts[n], xr)
			vals[n] = fr
		default:
			a := 0.5 // inside contraction
			if fr < vals[n] {
				a = -0.5 // outside
			}
			if fc := try(a, xe); fc < math.Min(fr, vals[n]) {
				copy(pts[n], xe)
				vals[n] = fc
				continue
			}
			for i := 1; i <= n; i++ {
				for j := range pts[i] {
					pts[i][j] = pts[0][j] + 0.5*(pts[i][j]-pts[0][j])
				}
				vals[i] = f(pts[i])
				evals++
			}
		}
	}
	bi := 0
	for i := range vals {
		if vals[i] < vals[bi] {
			bi = i
		}
	}
	return pts[bi]
}
