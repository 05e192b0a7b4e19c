package noise

import (
	"math"
	"slices"
)

// Quadrature tuning (see the package documentation, # Integration).
const (
	// quadRelTol is the target of the summed Kronrod error estimates
	// |K15 − G7| relative to the integrated power.
	quadRelTol = 1e-5
	// quadPanelDecades is the widest initial panel, in decades.
	quadPanelDecades = 0.5
	// quadMaxPanels bounds the number of panels (15 evaluations each).
	quadMaxPanels = 2000
	// quadZeroDecades: for a band starting at 0 Hz, the log grid starts
	// this many decades below the lowest pole (or the band's top), and the
	// rest down to 0 Hz is one midpoint panel.
	quadZeroDecades = 6
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

// densityFunc returns a power density at fHz and adds its parts to per.
type densityFunc func(fHz float64, per []float64) (float64, error)

// panel is one interval [a, b] of u = ln f with its Kronrod estimate k,
// error estimate err and the Kronrod estimate of each part.
type panel struct {
	a, b, k, err float64
	per          []float64
}

// integrateLog returns ∫ S(f) df over [lo, hi] (0 ≤ lo < hi) and the
// integral of each of the nper parts, by global adaptive Gauss–Kronrod
// 7/15 quadrature in u = ln f (the integrand S(e^u)·e^u). The initial
// panels are at most quadPanelDecades wide and have edges at breaks (pole
// frequencies, where the peaks of a resonance are) inside the band; the
// panel with the largest estimate |K15 − G7| is halved until the estimates
// sum to at most quadRelTol of the integral, or there are quadMaxPanels.
func integrateLog(lo, hi float64, breaks []float64, nper int, eval densityFunc) (float64, []float64, error) {
	tmp := make([]float64, nper)
	total := make([]float64, nper)
	var head float64 // [0, lo) when the band starts at 0 Hz
	if lo == 0 {
		ref := hi
		for _, f := range breaks {
			ref = math.Min(ref, f)
		}
		lo = ref * math.Pow(10, -quadZeroDecades)
		clear(tmp)
		s, err := eval(lo/2, tmp)
		if err != nil {
			return 0, nil, err
		}
		head = s * lo
		for i, v := range tmp {
			total[i] += v * lo
		}
	}
	ua, ub := math.Log(lo), math.Log(hi)
	edges := []float64{ua, ub}
	for _, f := range breaks {
		if u := math.Log(f); u > ua && u < ub {
			edges = append(edges, u)
		}
	}
	slices.Sort(edges)
	edges = slices.Compact(edges)
	maxW := quadPanelDecades * math.Ln10
	var panels []panel
	arena := make([]float64, 0, nper*64)
	newPanel := func(a, b float64) (panel, error) {
		if len(arena)+nper > cap(arena) {
			arena = make([]float64, 0, nper*64)
		}
		p := panel{a: a, b: b, per: arena[len(arena) : len(arena)+nper : len(arena)+nper]}
		arena = arena[:len(arena)+nper]
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
			u := c + h*x
			f := math.Exp(u)
			clear(tmp)
			s, err := eval(f, tmp)
			if err != nil {
				return panel{}, err
			}
			wf := wk[j] * h * f
			p.k += wf * s
			for q, v := range tmp {
				p.per[q] += wf * v
			}
			if j%2 == 1 {
				g += wg[j/2] * h * f * s
			}
		}
		p.err = math.Abs(p.k - g)
		return p, nil
	}
	for i := 1; i < len(edges); i++ {
		a, b := edges[i-1], edges[i]
		m := max(1, int(math.Ceil((b-a)/maxW-1e-9)))
		for q := range m {
			p, err := newPanel(a+(b-a)*float64(q)/float64(m), a+(b-a)*float64(q+1)/float64(m))
			if err != nil {
				return 0, nil, err
			}
			panels = append(panels, p)
		}
	}
	for len(panels) < quadMaxPanels {
		var sum, errSum float64
		worst := 0
		for i, p := range panels {
			sum += p.k
			errSum += p.err
			if p.err > panels[worst].err {
				worst = i
			}
		}
		if errSum <= quadRelTol*(sum+head) {
			break
		}
		w := panels[worst]
		mid := (w.a + w.b) / 2
		left, err := newPanel(w.a, mid)
		if err != nil {
			return 0, nil, err
		}
		right, err := newPanel(mid, w.b)
		if err != nil {
			return 0, nil, err
		}
		panels[worst] = left
		panels = append(panels, right)
	}
	sum := head
	for _, p := range panels {
		sum += p.k
		for q, v := range p.per {
			total[q] += v
		}
	}
	return sum, total, nil
}

// integrate is integrateLog of the chain's output noise.
func (a *analysis) integrate(lo, hi float64) (float64, []float64, error) {
	return integrateLog(lo, hi, a.poleHz, len(a.refs), a.psd)
}
