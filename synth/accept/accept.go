// Package accept is the acceptance rule a board's magnitude response is
// judged by: the one rule behind a design's as-built verdict and every
// Monte Carlo trial.
//
// A board passes when
//
//  1. over the passband, the largest minus the smallest of its response is
//     at most RippleDB;
//  2. over the stopband its response stays at least AttenDB below the
//     board's own passband maximum, and over the alias band at least
//     AliasAttenDB below it;
//  3. with a gain tolerance, the passband maximum lies within ±GainTolDB of
//     GainDB.
//
// Each comparison allows [SlackDB] for rounding.
//
// # Extremes between grid points
//
// A [Plan] samples each band on a grid and refines the local extremes of
// the samples between their neighbours (successive parabolic
// interpolation in log frequency, kept inside the bracket, falling back on
// golden-section steps), so a narrow peak between two grid points is found
// as long as the grid brackets it: a peak whose neighbouring samples both
// lie below it. Plans for one board ([Plan.Judge] with full refinement)
// put hint frequencies (the poles' and zeros' frequencies) into a dense
// grid so that every lobe is bracketed; plans for the Monte Carlo put the
// nominal board's extremes ([Result.Extremes]) and their neighbours into a
// coarse grid and refine only the extremes that could change the verdict.
package accept

import (
	"math"
	"slices"
)

// SlackDB is the slack every comparison of the rule allows, so that a board
// that meets an edge exactly is not failed by rounding.
const SlackDB = 1e-6

// Band is a closed frequency interval [LoHz, HiHz].
type Band struct {
	LoHz, HiHz float64
}

// Mask is what a response is judged against. Responses are in dB.
type Mask struct {
	// Pass, Stop and Alias are the bands of each kind; Stop and Alias may
	// be empty. Pass must not be empty.
	Pass, Stop, Alias []Band
	// RippleDB is Amax: the most the passband may vary (rule 1).
	RippleDB float64
	// AttenDB and AliasAttenDB are the least distances of the stopband
	// and the alias band below the passband maximum (rule 2).
	AttenDB, AliasAttenDB float64
	// GainDB and GainTolDB are rule 3; GainTolDB 0 leaves the gain
	// unjudged.
	GainDB, GainTolDB float64
}

// kind bits of a grid point.
const (
	inPass uint8 = 1 << iota
	inStop
	inAlias
)

// Result is how a response sits against a [Mask]. Every figure is in dB;
// StopWorstDB and AliasWorstDB are −Inf when the mask has no such band.
type Result struct {
	// PassMaxDB and PassMinDB are the passband's extremes.
	PassMaxDB, PassMinDB float64
	// StopWorstDB and AliasWorstDB are the largest responses over the
	// stopband and the alias band.
	StopWorstDB, AliasWorstDB float64
	// PassMarginDB is RippleDB − (PassMaxDB − PassMinDB).
	PassMarginDB float64
	// StopMarginDB and AliasMarginDB are (PassMaxDB − worst) − atten; +Inf
	// without the band.
	StopMarginDB, AliasMarginDB float64
	// GainMarginDB is GainTolDB − |PassMaxDB − GainDB|; +Inf when the
	// gain is not judged.
	GainMarginDB float64
	// Meets is true when every margin is at least −SlackDB.
	Meets bool
	// Extremes are the frequencies of the extremes found (passband maximum
	// and minimum, and the stopband's and alias band's local maxima within
	// a few dB of their worst): hints for a Monte Carlo plan of the same
	// mask.
	Extremes []float64
}

// MinMarginDB returns the smallest of the result's margins.
func (r Result) MinMarginDB() float64 {
	return min(r.PassMarginDB, r.StopMarginDB, r.AliasMarginDB, r.GainMarginDB)
}

// Plan is the acceptance rule prepared for one mask and one grid.
type Plan struct {
	mask Mask
	grid []float64
	kind []uint8
	// bandIdx lists, per band kind (pass, stop, alias) and band, the grid
	// indices that lie in it, in ascending frequency.
	bands [3][][]int
}

// NewPlan returns a plan that judges responses sampled on the union of
// base, hints and every band's edges (the grid, [Plan.Grid]). Points of
// the grid outside every band are kept (a Monte Carlo envelopes them) but
// not judged. Frequencies must be finite and ≥ 0; 0 Hz is kept as a grid
// point and refined from like any other (in linear frequency there).
func NewPlan(m Mask, base, hints []float64) *Plan {
	g := make([]float64, 0, len(base)+len(hints)+2*(len(m.Pass)+len(m.Stop)+len(m.Alias)))
	g = append(g, base...)
	for _, h := range hints {
		if m.judged(h) {
			g = append(g, h)
		}
	}
	for _, bs := range [][]Band{m.Pass, m.Stop, m.Alias} {
		for _, b := range bs {
			g = append(g, b.LoHz, b.HiHz)
		}
	}
	slices.Sort(g)
	g = slices.Compact(g)
	p := &Plan{mask: m, grid: g, kind: make([]uint8, len(g))}
	for k, bs := range [][]Band{m.Pass, m.Stop, m.Alias} {
		p.bands[k] = make([][]int, len(bs))
		for j, b := range bs {
			lo, _ := slices.BinarySearch(g, b.LoHz)
			for i := lo; i < len(g) && g[i] <= b.HiHz; i++ {
				p.bands[k][j] = append(p.bands[k][j], i)
				p.kind[i] |= 1 << k
			}
		}
	}
	return p
}

func (m Mask) judged(f float64) bool {
	for _, bs := range [][]Band{m.Pass, m.Stop, m.Alias} {
		for _, b := range bs {
			if f >= b.LoHz && f <= b.HiHz {
				return true
			}
		}
	}
	return false
}

// Grid returns the plan's grid (shared: do not modify).
func (p *Plan) Grid() []float64 { return p.grid }

// Mask returns the plan's mask.
func (p *Plan) Mask() Mask { return p.mask }

// Mode says how much of a sampled response [Plan.Judge] refines.
type Mode int

const (
	// Full refines every local extreme of the samples in every band that
	// could be the band's extreme: for one board.
	Full Mode = iota
	// Decisive refines only when the grid's figures come within
	// [DecisiveDB] of failing, and then only the local extremes within
	// DecisiveDB of each band's grid extreme: for Monte Carlo trials,
	// whose grid holds the nominal board's extremes.
	Decisive
)

// DecisiveDB is how close to failing (in margin) a Monte Carlo trial's
// grid figures must come before [Decisive] refines them, and how close to
// a band's grid extreme a local extreme must lie to be refined. Between
// neighbouring grid points that bracket a peak, a peak of a second-order
// resonance rises above the larger of them by at most
// 10·log10(1 + (Q·r)²) dB for a relative spacing r; the Monte Carlo grid
// holds the nominal extremes and neighbours 1 % away, which keeps this
// under 0.5 dB for Q up to 70 (the accept tests check the bound against a
// dense reference on perturbed boards).
const DecisiveDB = 0.5

// Judge judges the response whose samples on the plan's grid are db (dB,
// len(db) == len(Grid())), refining extremes with eval, the same response
// at any frequency (dB). It does not modify db.
func (p *Plan) Judge(db []float64, eval func(fHz float64) float64, mode Mode) Result {
	m := p.mask
	r := Result{StopWorstDB: math.Inf(-1), AliasWorstDB: math.Inf(-1)}
	// Grid figures first.
	gmax, gmin := math.Inf(-1), math.Inf(1)
	for _, idx := range p.bands[0] {
		if len(idx) == 0 {
			continue
		}
		// A band's indices are consecutive (the grid is sorted).
		for _, v := range db[idx[0] : idx[len(idx)-1]+1] {
			if v != v {
				v = math.Inf(-1) // NaN: a null, the worst the passband can do
			}
			if v > gmax {
				gmax = v
			}
			if v < gmin {
				gmin = v
			}
		}
	}
	gstop := bandMax(p.bands[1], db)
	galias := bandMax(p.bands[2], db)
	refine := mode == Full
	if mode == Decisive {
		g := margins(m, gmax, gmin, gstop, galias)
		refine = g.MinMarginDB() < DecisiveDB
	}
	if !refine {
		r.PassMaxDB, r.PassMinDB, r.StopWorstDB, r.AliasWorstDB = gmax, gmin, gstop, galias
		return p.finish(r)
	}
	near := math.Inf(1)
	if mode == Decisive {
		near = DecisiveDB
	}
	var ext *[]float64
	if mode == Full {
		ext = &r.Extremes
	}
	r.PassMaxDB, r.PassMinDB = gmax, gmin
	for _, idx := range p.bands[0] {
		r.PassMaxDB = math.Max(r.PassMaxDB, p.refineBand(idx, db, eval, true, gmax-near, ext, 0))
		r.PassMinDB = math.Min(r.PassMinDB, -p.refineBand(idx, db, neg(eval), false, -(gmin+near), ext, 0))
	}
	r.StopWorstDB = gstop
	for _, idx := range p.bands[1] {
		r.StopWorstDB = math.Max(r.StopWorstDB, p.refineBand(idx, db, eval, true, gstop-near, ext, 3))
	}
	r.AliasWorstDB = galias
	for _, idx := range p.bands[2] {
		r.AliasWorstDB = math.Max(r.AliasWorstDB, p.refineBand(idx, db, eval, true, galias-near, ext, 3))
	}
	return p.finish(r)
}

// finish fills the margins and the verdict.
func (p *Plan) finish(r Result) Result {
	g := margins(p.mask, r.PassMaxDB, r.PassMinDB, r.StopWorstDB, r.AliasWorstDB)
	r.PassMarginDB, r.StopMarginDB, r.AliasMarginDB, r.GainMarginDB = g.PassMarginDB, g.StopMarginDB, g.AliasMarginDB, g.GainMarginDB
	r.Meets = r.MinMarginDB() >= -SlackDB
	return r
}

// margins computes the margins of the figures.
func margins(m Mask, pmax, pmin, stop, alias float64) Result {
	r := Result{PassMarginDB: m.RippleDB - (pmax - pmin), StopMarginDB: math.Inf(1), AliasMarginDB: math.Inf(1), GainMarginDB: math.Inf(1)}
	if math.IsNaN(r.PassMarginDB) || math.IsInf(pmax, -1) {
		r.PassMarginDB = math.Inf(-1)
	}
	if len(m.Stop) > 0 {
		r.StopMarginDB = finiteMargin(pmax - stop - m.AttenDB)
	}
	if len(m.Alias) > 0 {
		r.AliasMarginDB = finiteMargin(pmax - alias - m.AliasAttenDB)
	}
	if m.GainTolDB > 0 {
		r.GainMarginDB = finiteMargin(m.GainTolDB - math.Abs(pmax-m.GainDB))
	}
	return r
}

func finiteMargin(v float64) float64 {
	if math.IsNaN(v) {
		return math.Inf(-1)
	}
	return v
}

func nan2inf(v float64, sign int) float64 {
	if v != v {
		return math.Inf(sign)
	}
	return v
}

func neg(f func(float64) float64) func(float64) float64 {
	return func(x float64) float64 { return -f(x) }
}

// bandMax is the largest sample over the bands' grid points.
func bandMax(bands [][]int, db []float64) float64 {
	v := math.Inf(-1)
	for _, idx := range bands {
		if len(idx) == 0 {
			continue
		}
		for _, x := range db[idx[0] : idx[len(idx)-1]+1] {
			if x != x {
				return math.Inf(1) // NaN: the worst the stopband can do
			}
			if x > v {
				v = x
			}
		}
	}
	return v
}

// extremeSpanDB is how far below a band's worst a refined local maximum
// may lie and still be reported in Result.Extremes.
const extremeSpanDB = 3

// refineBand returns the largest value of f (or of −f's samples, when max
// is false: the caller negates) over the band whose grid indices are idx:
// every interior local maximum of the samples at or above floor is
// refined between its neighbours. It appends the frequencies of the
// refined maxima within span dB of the result to ext, when ext is not nil
// (span 0: only the largest).
func (p *Plan) refineBand(idx []int, db []float64, f func(float64) float64, max bool, floor float64, ext *[]float64, span float64) float64 {
	sign := 1.0
	if !max {
		sign = -1
	}
	val := func(i int) float64 {
		v := db[i]
		if v != v {
			v = math.Inf(-1)
		}
		return sign * v
	}
	best, bestF := math.Inf(-1), math.NaN()
	type found struct{ f, v float64 }
	var all []found // kept only when ext wants the extremes
	add := func(x, y float64) {
		if ext != nil {
			all = append(all, found{x, y})
		} else if y > best {
			best, bestF = y, x
		}
	}
	for k, i := range idx {
		v := val(i)
		if v > best {
			best, bestF = v, p.grid[i]
		}
		if v < floor || math.IsInf(v, -1) {
			continue
		}
		left := k == 0 || val(idx[k-1]) <= v
		right := k == len(idx)-1 || val(idx[k+1]) <= v
		if !left || !right {
			continue
		}
		if k == 0 || k == len(idx)-1 {
			// An edge maximum: the band's edge is on the grid; a maximum
			// just inside it needs the neighbour as the bracket.
			if k == 0 && len(idx) > 1 {
				add(maximize(f, p.grid[i], p.grid[idx[1]], v, val(idx[1])))
			} else if k == len(idx)-1 && len(idx) > 1 {
				add(maximize(f, p.grid[idx[k-1]], p.grid[i], val(idx[k-1]), v))
			}
			continue
		}
		add(maximizeBracket(f, p.grid[idx[k-1]], p.grid[i], p.grid[idx[k+1]], val(idx[k-1]), v, val(idx[k+1])))
	}
	for _, a := range all {
		if a.v > best {
			best, bestF = a.v, a.f
		}
	}
	if ext != nil {
		if span == 0 {
			if !math.IsNaN(bestF) {
				*ext = append(*ext, bestF)
			}
		} else {
			for _, a := range all {
				if a.v >= best-span {
					*ext = append(*ext, a.f)
				}
			}
			if !math.IsNaN(bestF) {
				*ext = append(*ext, bestF)
			}
		}
	}
	return best
}

// maximize looks for a maximum of f between a and b (a < b), whose values
// fa and fb are known: one probe inside (golden section, in the same
// variable as [maximizeBracket]) and, when it beats both ends, a refinement
// of that bracket. It returns the best point and value found, the ends
// included.
func maximize(f func(float64) float64, a, b, fa, fb float64) (float64, float64) {
	bx, bv := a, fa
	if fb > bv {
		bx, bv = b, fb
	}
	const r = 0.3819660112501051 // 2 − golden ratio
	xa, _, xc := toXPair(a, b, b)
	m := fromXPair(xa+r*(xc-xa), a)
	fm := f(m)
	if !(fm > bv) {
		return bx, bv
	}
	return maximizeBracket(f, a, m, b, fa, fm, fb)
}

// flatDB is the rise over both neighbours below which a local maximum of
// the samples is taken as it is: a peak between points whose values agree
// to 1e-9 dB rises above them by less than that again for any response
// smooth on the grid's scale.
const flatDB = 1e-9

// refineIters bounds the steps of one refinement.
const refineIters = 40

// maximizeBracket refines a maximum of f bracketed by a < b < c with f(b)
// ≥ f(a), f(c): successive parabolic interpolation in x = ln f (linear
// frequency when a is 0), each step kept inside the bracket and replaced
// by a golden-section step when the parabola does not shrink it, until
// the bracket is 1e-9 of its width wide or the value stops changing by
// more than 1e-9 dB.
func maximizeBracket(f func(float64) float64, a, b, c, fa, fb, fc float64) (float64, float64) {
	if fb-fa < flatDB && fb-fc < flatDB {
		// Flat to rounding (a passband far below its edge): nothing
		// between the points can rise measurably above them.
		return b, fb
	}
	xa, xb, xc := toXPair(a, b, c)
	conv := func(x float64) float64 { return fromXPair(x, a) }
	const golden = 0.3819660112501051
	width0 := xc - xa
	for range refineIters {
		if xc-xa <= 1e-9*width0 || xc-xa <= 1e-12*math.Abs(xb) {
			break
		}
		// Parabola through the three points.
		d1, d2 := xb-xa, xb-xc
		num := d1*d1*(fb-fc) - d2*d2*(fb-fa)
		den := d1*(fb-fc) - d2*(fb-fa)
		var x float64
		ok := den != 0
		if ok {
			x = xb - 0.5*num/den
			ok = x > xa && x < xc && x != xb && !math.IsNaN(x)
		}
		if !ok {
			// Golden step into the larger side.
			if xc-xb > xb-xa {
				x = xb + golden*(xc-xb)
			} else {
				x = xb - golden*(xb-xa)
			}
		}
		fx := f(conv(x))
		if math.IsNaN(fx) {
			fx = math.Inf(-1)
		}
		prev := fb
		if fx > fb {
			if x > xb {
				xa, fa = xb, fb
			} else {
				xc, fc = xb, fb
			}
			xb, fb = x, fx
		} else {
			if x > xb {
				xc, fc = x, fx
			} else {
				xa, fa = x, fx
			}
		}
		if ok && math.Abs(fb-prev) < 1e-9 && fx <= fb && math.Abs(fx-fb) < 1e-6 {
			break
		}
	}
	return conv(xb), fb
}

// toXPair maps a bracket to ln f, or to linear frequency when it starts
// at 0 Hz.
func toXPair(a, b, c float64) (float64, float64, float64) {
	if a <= 0 {
		return a, b, c
	}
	return math.Log(a), math.Log(b), math.Log(c)
}

func fromXPair(x, a float64) float64 {
	if a <= 0 {
		return x
	}
	return math.Exp(x)
}
