package noise

import (
	"math"
	"math/cmplx"
	"slices"
)

// Quadrature tuning (see the package documentation, # Integration).
const (
	// quadRelTol is the target of the summed Kronrod error estimates
	// |K15 − G7| relative to the integrated power.
	quadRelTol = 1e-5
	// quadPanelDecades is the widest initial panel, in decades, within a
	// decade of a break (a resonant pole's frequency).
	quadPanelDecades = 0.5
	// quadFarPanelDecades is the widest initial panel farther out, where
	// the density of a rational response is close to a power of f and a
	// panel of two decades integrates it as well as four of half a decade.
	quadFarPanelDecades = 2
	// quadMaxPanels bounds the number of panels (15 evaluations each).
	quadMaxPanels = 2000
	// quadZeroDecades: for a band starting at 0 Hz, the log grid starts
	// this many decades below the lowest pole (or the band's top), and the
	// rest down to 0 Hz is one midpoint panel.
	quadZeroDecades = 3
)

// Gauss–Kronrod 7/15 nodes on [−1, 1] (the non-negative half, QUADPACK's
// qk15) and weights; the Gauss nodes are xk[1], xk[3], xk[5], xk[7].
var (
	xk = [8]float64{
		0.991455371120812639206854697526329, 0.949107912342758524526189684047851,
		0.864864423359769072789712788640926, 0.741531185599394439863864773280788,
		0.586087235467691130294144845693013, 0.405845151377397166906606412076961,
		0.207784955007898467600689403773245, 0,
	}
	wk = [8]float64{
		0.022935322010529224963732008058970, 0.063092092629978553290700663189204,
		0.104790010322250183839876322541518, 0.140653259715525918745189590510238,
		0.169004726639267902826583426598550, 0.190350578064785409913256402421014,
		0.204432940075298892414161999234649, 0.209482141084727828012999174891714,
	}
	wg = [4]float64{
		0.129484966168869693270611432679082, 0.279705391489276667901467771423780,
		0.381830050505118944950369775488975, 0.417959183673469387755102040816327,
	}
)

// kronrodWeight returns the Kronrod weight of the i-th node in ascending
// order (i in 0..14).
func kronrodWeight(i int) float64 {
	if i <= 7 {
		return wk[i]
	}
	return wk[14-i]
}

// densityFunc returns a power density at fHz and adds its parts to per.
type densityFunc func(fHz float64, per []float64) (float64, error)

// panel is one interval [a, b] of u = ln f with weight w, its weighted
// Kronrod estimate k, weighted error estimate err and the weighted
// Kronrod estimate of each part.
type panel struct {
	a, b, w, k, err float64
	per             []float64
	// node is each node's weighted Kronrod term, nodes ascending in u
	// (only when quad.nodes is set): panel k is their sum.
	node []float64
}

// quad is a global adaptive Gauss–Kronrod 7/15 quadrature in u = ln f
// (the integrand S(e^u)·e^u) over weighted frequency segments that share
// one error budget. Initial panels are at most quadPanelDecades wide
// within a decade of the breaks (resonant poles' frequencies, where the
// peaks are) and quadFarPanelDecades elsewhere, with edges at the breaks;
// refine halves
// the panel with the largest estimate |K15 − G7| until the estimates sum
// to at most quadRelTol of the integral, or there are quadMaxPanels.
type quad struct {
	breaks  []float64    // ln f of the breaks, ascending, none within breakMergeRel of another
	near    [][2]float64 // ln f intervals within a decade of a break, merged
	lowest  float64      // where a segment from 0 Hz starts its log grid (see add), 0: none
	nper    int
	eval    densityFunc
	tmp     []float64
	panels  []panel
	arena   []float64
	head    float64   // the weighted midpoint pieces [0, lo) of segments from 0 Hz
	headPer []float64 // and their parts
	nodes   bool      // keep each node's contribution in panel.node
}

// breakMergeRel: breaks closer than this relative distance are one edge.
const breakMergeRel = 1e-3

// resonantQ: a pole pair of at least this Q peaks (a pole's Q is
// |p|/(−2·Re p)), and its frequency is an edge of the initial panels,
// which are narrower within a decade of it. The density near a lower-Q or
// real pole is smooth on the scale of a panel: 1/(1 + (f/fp)²) is
// analytic within π/2 of the real axis in ln f, so a 15-point Kronrod
// rule over two decades is accurate to about 1e-8.
const resonantQ = 1

func newQuad(breaks []float64, lowestHz float64, nper int, eval densityFunc) *quad {
	q := &quad{nper: nper, eval: eval, tmp: make([]float64, nper), headPer: make([]float64, nper), lowest: lowestHz}
	var us []float64
	for _, f := range breaks {
		if f > 0 && !math.IsInf(f, 1) {
			us = append(us, math.Log(f))
		}
	}
	slices.Sort(us)
	for _, u := range us {
		if n := len(q.breaks); n == 0 || u-q.breaks[n-1] >= breakMergeRel {
			q.breaks = append(q.breaks, u)
		}
		lo, hi := u-math.Ln10, u+math.Ln10
		if n := len(q.near); n > 0 && lo <= q.near[n-1][1] {
			q.near[n-1][1] = hi
		} else {
			q.near = append(q.near, [2]float64{lo, hi})
		}
	}
	return q
}

// integrateLog returns ∫ S(f) df over [lo, hi] (0 ≤ lo < hi) and the
// integral of each of the nper parts (see quad).
func integrateLog(lo, hi float64, breaks []float64, nper int, eval densityFunc) (float64, []float64, error) {
	lowest := 0.0
	for _, f := range breaks {
		if f > 0 && (lowest == 0 || f < lowest) {
			lowest = f
		}
	}
	q := newQuad(breaks, lowest, nper, eval)
	if err := q.add(lo, hi, 1); err != nil {
		return 0, nil, err
	}
	if err := q.refine(0); err != nil {
		return 0, nil, err
	}
	sum, per := q.sum()
	return sum, per, nil
}

// add adds w·∫ S(f) df over [lo, hi] (0 ≤ lo < hi, w > 0) as initial
// panels. A segment from 0 Hz starts its log grid quadZeroDecades below
// q.lowest (or hi, when lower or unset), below which the density of a
// rational response is flat or falls towards 0 Hz, and takes [0, lo) as
// one midpoint panel that is never refined.
func (q *quad) add(lo, hi, w float64) error {
	if lo == 0 {
		ref := hi
		if q.lowest > 0 {
			ref = math.Min(ref, q.lowest)
		}
		lo = ref * math.Pow(10, -quadZeroDecades)
		clear(q.tmp)
		s, err := q.eval(lo/2, q.tmp)
		if err != nil {
			return err
		}
		q.head += w * s * lo
		for i, v := range q.tmp {
			q.headPer[i] += w * v * lo
		}
	}
	ua, ub := math.Log(lo), math.Log(hi)
	edges := []float64{ua, ub}
	inside := func(u float64) {
		if u > ua && u < ub {
			edges = append(edges, u)
		}
	}
	for _, u := range q.breaks {
		inside(u)
	}
	for _, n := range q.near {
		inside(n[0])
		inside(n[1])
	}
	slices.Sort(edges)
	edges = slices.Compact(edges)
	for i := 1; i < len(edges); i++ {
		a, b := edges[i-1], edges[i]
		maxW := quadFarPanelDecades * math.Ln10
		for _, n := range q.near {
			if mid := (a + b) / 2; mid > n[0] && mid < n[1] {
				maxW = quadPanelDecades * math.Ln10
			}
		}
		m := max(1, int(math.Ceil((b-a)/maxW-1e-9)))
		for j := range m {
			p, err := q.newPanel(a+(b-a)*float64(j)/float64(m), a+(b-a)*float64(j+1)/float64(m), w)
			if err != nil {
				return err
			}
			q.panels = append(q.panels, p)
		}
	}
	return nil
}

// newPanel evaluates the 15-point Kronrod and 7-point Gauss rules on
// [a, b] (in u = ln f) with weight w.
func (q *quad) newPanel(a, b, w float64) (panel, error) {
	nper := q.nper
	if q.nodes {
		nper += 15
	}
	if len(q.arena)+nper > cap(q.arena) {
		q.arena = make([]float64, 0, nper*64)
	}
	p := panel{a: a, b: b, w: w, per: q.arena[len(q.arena) : len(q.arena)+q.nper : len(q.arena)+q.nper]}
	if q.nodes {
		p.node = q.arena[len(q.arena)+q.nper : len(q.arena)+nper : len(q.arena)+nper]
	}
	q.arena = q.arena[:len(q.arena)+nper]
	clear(p.per)
	c, h := (a+b)/2, (b-a)/2
	var g float64
	for i := 0; i < 15; i++ {
		j, x := i, 0.0
		switch {
		case i < 7:
			x = -xk[i]
		case i == 7:
			j = 7
		default:
			j = 14 - i
			x = xk[j]
		}
		f := math.Exp(c + h*x)
		clear(q.tmp)
		s, err := q.eval(f, q.tmp)
		if err != nil {
			return panel{}, err
		}
		wf := w * wk[j] * h * f
		p.k += wf * s
		if p.node != nil {
			p.node[i] = wf * s
		}
		for who, v := range q.tmp {
			p.per[who] += wf * v
		}
		if j%2 == 1 {
			g += w * wg[j/2] * h * f * s
		}
	}
	p.err = math.Abs(p.k - g)
	return p, nil
}

// refine halves the panel with the largest error estimate until the
// estimates sum to at most quadRelTol of the integral plus known (a part
// of the total integrated elsewhere), or there are quadMaxPanels.
func (q *quad) refine(known float64) error {
	for len(q.panels) < quadMaxPanels {
		var sum, errSum float64
		worst := 0
		for i, p := range q.panels {
			sum += p.k
			errSum += p.err
			if p.err > q.panels[worst].err {
				worst = i
			}
		}
		if errSum <= quadRelTol*(sum+q.head+known) {
			return nil
		}
		w := q.panels[worst]
		mid := (w.a + w.b) / 2
		left, err := q.newPanel(w.a, mid, w.w)
		if err != nil {
			return err
		}
		right, err := q.newPanel(mid, w.b, w.w)
		if err != nil {
			return err
		}
		q.panels[worst] = left
		q.panels = append(q.panels, right)
	}
	return nil
}

// sum returns the integral and that of each part.
func (q *quad) sum() (float64, []float64) {
	total := slices.Clone(q.headPer)
	sum := q.head
	for _, p := range q.panels {
		sum += p.k
		for i, v := range p.per {
			total[i] += v
		}
	}
	return sum, total
}

// integrate integrates the chain's output noise and each part's over
// [lo, hi] (see newQuad).
func (a *analysis) integrate(lo, hi float64) (float64, []float64, error) {
	if lo < a.flickerFrom {
		lo = a.flickerFrom // 1/f noise: the band starts at the limit
		if !(hi > lo) {
			return 0, make([]float64, len(a.refs)), nil
		}
	}
	q := a.newQuad(len(a.refs), a.psd)
	if err := q.add(lo, hi, 1); err != nil {
		return 0, nil, err
	}
	if err := q.refine(0); err != nil {
		return 0, nil, err
	}
	sum, per := q.sum()
	return sum, per, nil
}

// newQuad returns a quadrature of the chain's output noise: edges at the
// poles with Q ≥ resonantQ (the peaks), where the initial panels are
// narrower; a segment from 0 Hz starts its log grid below the lowest
// pole.
func (a *analysis) newQuad(nper int, eval densityFunc) *quad {
	var breaks []float64
	lowest := 0.0
	for i, p := range a.poles {
		if -2*real(p)*resonantQ <= cmplx.Abs(p) {
			breaks = append(breaks, a.poleHz[i])
		}
		if lowest == 0 || a.poleHz[i] < lowest {
			lowest = a.poleHz[i]
		}
	}
	return newQuad(breaks, lowest, nper, eval)
}
