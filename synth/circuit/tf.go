package circuit

import (
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/internal/lu"
)

// Interpolation tuning (see the package documentation, # Analysis).
const (
	// extraBins is the least number of DFT bins above the degree bound:
	// their values, which are zero but for rounding, measure the noise.
	extraBins = 2
	// acceptRel: a coefficient whose estimated relative error (noise floor
	// over its term) is at most this is final after one circle.
	acceptRel = 1e-12
	// noiseFactor: a coefficient whose term is below noiseFactor times the
	// noise floor on the circle where it matters most is rounding noise and
	// is set to exactly zero.
	noiseFactor = 100
	// negligibleRatio: a coefficient whose (estimated) term stays below
	// this fraction of the largest term everywhere in the window is set to
	// zero without another circle.
	negligibleRatio = 1e-12
	// windowDecades bounds the radii, |p| in 10^±windowDecades, over which
	// coefficients are resolved.
	windowDecades = 8
)

// TransferFunction returns the stage's voltage transfer V(Out)/V(In) with
// the op-amp model m as an exact rational function of s, in the variable
// s/ScaleRadPerSec with the stage's own scale 1/(R·C) (R, C the geometric
// means of its resistors and capacitors; ωt for a stage without
// capacitors). See [Stage.TransferFunctionScaled] and the package
// documentation (# Analysis) for how it is computed.
func (st Stage) TransferFunction(m Model) (Rational, error) {
	return st.TransferFunctionScaled(m, 0)
}

// TransferFunctionScaled is [Stage.TransferFunction] with the caller's
// scale in rad/s, for instance 2π times the section's design f0; 0 selects
// the stage's own scale. The numerator and denominator are the nodal
// cofactor and determinant, of degree at most the number of capacitors
// plus single-pole op-amps, interpolated from their values on circles
// |s| = ρ·scale. It returns an error wrapping [ErrInvalid] for an invalid
// stage, model or scale, and one wrapping [ErrSingular] when the nodal
// determinant vanishes identically.
func (st Stage) TransferFunctionScaled(m Model, scaleRadPerSec float64) (Rational, error) {
	if err := m.Validate(); err != nil {
		return Rational{}, err
	}
	t, err := st.check()
	if err != nil {
		return Rational{}, err
	}
	return st.transferFunction(m, t, scaleRadPerSec)
}

// NodeTransferFunction is [Stage.TransferFunctionScaled] to the voltage of
// any node of the stage (an op-amp input, say) rather than Out: V(node)/V(In).
// It returns an error wrapping [ErrInvalid] for a node the stage does not
// have.
func (st Stage) NodeTransferFunction(m Model, node string, scaleRadPerSec float64) (Rational, error) {
	if err := m.Validate(); err != nil {
		return Rational{}, err
	}
	t, err := st.check()
	if err != nil {
		return Rational{}, err
	}
	if !st.hasNode(t, node) {
		return Rational{}, invalidf("no node %q", node)
	}
	return st.nodeTransfer(m, t, scaleRadPerSec, node)
}

// NodeTransferFunctions is [Stage.NodeTransferFunction] for several nodes
// at once, at the stage's natural scale: one LU of the nodal matrix per
// interpolation point gives every node's voltage (det A times it is the
// node's numerator, a cofactor), so the cost is about that of one
// transfer function. The rationals share the denominator.
func (st Stage) NodeTransferFunctions(m Model, nodes []string) ([]Rational, error) {
	rs, _, err := st.nodeTransfers(m, nodes, false)
	return rs, err
}

// NodePorts is [Stage.NodeTransferFunctions] with, for each node, also its
// transimpedance in Ω from a current injected into the stage's output port
// with the input at 0 V: into Out of a single-ended stage; into Out and
// out of OutN, equally, for a differential stage (the half circuit's
// output current). With the next stage drawing the current YL·P from the
// port, P the port's voltage (V(Out), or (V(Out) − V(OutN))/2), every
// node's voltage as loaded is vin·V(In) − z·YL·P (see [Loading]). The
// rationals share the denominator. Unlike NodeTransferFunctions it does
// not fall back on Cramer's rule: it returns an error wrapping
// [ErrSingular] when the nodal matrix is singular at a sample point.
func (st Stage) NodePorts(m Model, nodes []string) (vin, z []Rational, err error) {
	return st.nodeTransfers(m, nodes, true)
}

// nodeTransfers is NodeTransferFunctions and, with inject, NodePorts.
func (st Stage) nodeTransfers(m Model, nodes []string, inject bool) (vin, z []Rational, err error) {
	if err := m.Validate(); err != nil {
		return nil, nil, err
	}
	t, err := st.check()
	if err != nil {
		return nil, nil, err
	}
	for _, node := range nodes {
		if !st.hasNode(t, node) {
			return nil, nil, invalidf("no node %q", node)
		}
	}
	own := st
	st, t = st.withParasitics(m, t)
	scale, rn := stageScale(st, m)
	sys := compile(st, m, t, scale)
	cols := make([]int, len(nodes))
	for i, node := range nodes {
		cols[i] = sys.col(t, node)
	}
	outRow, outNRow := t.unknown(st.Out), -1
	if st.Differential() {
		outNRow = t.unknown(st.OutN)
	}
	q := 1 + len(nodes)
	if inject {
		q += len(nodes)
	}
	var singular bool
	coef := sys.interpolateAll(q, func(p complex128, v []complex128) {
		sys.fill(p)
		det := lu.Factor(sys.a, sys.n, sys.piv)
		v[0] = det
		if det != 0 {
			clear(sys.x)
			sys.x[sys.srcRow] = 1
			lu.Solve(sys.a, sys.n, sys.piv, sys.x)
			for i, c := range cols {
				v[1+i] = det * sys.x[c]
			}
			if inject {
				clear(sys.x)
				sys.x[outRow] = 1
				if outNRow >= 0 {
					sys.x[outNRow] = -1
				}
				lu.Solve(sys.a, sys.n, sys.piv, sys.x)
				for i, c := range cols {
					v[1+len(cols)+i] = det * sys.x[c]
				}
			}
			return
		}
		if inject {
			singular = true
			return
		}
		for i, c := range cols { // Cramer's rule directly: A is singular here
			sys.outCol = c
			_, v[1+i] = sys.detNum(p)
		}
	})
	if singular {
		return nil, nil, fmt.Errorf("%w: nodal matrix is singular on an interpolation circle", ErrSingular)
	}
	den := coef[0]
	lo := slices.IndexFunc(den, func(v float64) bool { return v != 0 })
	if lo < 0 {
		return nil, nil, fmt.Errorf("%w: the nodal determinant is identically zero", ErrSingular)
	}
	d := den[lo]
	for _, c := range coef {
		for j := range c {
			c[j] /= d
		}
	}
	order := own.SectionOrderOf(len(trimPoly(den))-1, m)
	vin = make([]Rational, len(nodes))
	for i := range nodes {
		vin[i] = Rational{Num: trimPoly(coef[1+i]), Den: trimPoly(slices.Clone(den)), ScaleRadPerSec: scale, SectionOrder: order}
	}
	if inject {
		// A unit entry in a node's balance injects 1/rn A (the system's
		// currents are rn times the currents): z = rn·V.
		z = make([]Rational, len(nodes))
		for i := range nodes {
			num := coef[1+len(nodes)+i]
			for j := range num {
				num[j] *= rn
			}
			z[i] = Rational{Num: trimPoly(num), Den: trimPoly(slices.Clone(den)), ScaleRadPerSec: scale, SectionOrder: order}
		}
	}
	return vin, z, nil
}

// transferFunction is TransferFunctionScaled for a valid stage with node
// table t and a valid model.
func (st Stage) transferFunction(m Model, t *nodeTable, scale float64) (Rational, error) {
	return st.nodeTransfer(m, t, scale, st.output())
}

// hasNode reports whether node is a node of the checked stage other than
// Ground, or [DiffOut] of a differential stage.
func (st Stage) hasNode(t *nodeTable, node string) bool {
	if node == DiffOut {
		return st.Differential()
	}
	return node != Ground && t.index(node) >= 0
}

// nodeTransfer is transferFunction to the voltage of any node of the
// stage.
func (st Stage) nodeTransfer(m Model, t *nodeTable, scale float64, node string) (Rational, error) {
	if node == DiffOut {
		// Matched halves: the differential output is the half-circuit's
		// (bisection theorem), which a smaller nodal system gives without
		// the common-mode poles.
		if half, sign, ok := st.matchedHalf(); ok {
			if ht, err := half.check(); err == nil {
				r, err := half.nodeTransfer(m, ht, scale, half.Out)
				if err == nil && sign < 0 {
					for i := range r.Num {
						r.Num[i] = -r.Num[i]
					}
				}
				return r, err
			}
		}
	}
	return st.nodeTransferFull(m, t, scale, node)
}

// nodeTransferFull is nodeTransfer on the stage's whole nodal system
// (for a differential stage: both halves, the common-mode poles
// cancelled by cancelCommon where they cancel).
func (st Stage) nodeTransferFull(m Model, t *nodeTable, scale float64, node string) (Rational, error) {
	r, _, err := st.nodeTransferPorts(m, t, scale, node, false)
	return r, err
}

// nodeTransferPorts is nodeTransferFull that, with ports, also returns the
// stage's two-port functions (see Stage.ports) from the same
// interpolation: one factorisation per circle point serves them all.
// ports needs node to be the stage's Out.
func (st Stage) nodeTransferPorts(m Model, t *nodeTable, scale float64, node string, ports bool) (r Rational, pp portPolys, err error) {
	own := st
	st, t = st.withParasitics(m, t)
	natural, _ := stageScale(st, m)
	if scale == 0 {
		scale = natural
	}
	if !finitePositive(scale) {
		return Rational{}, portPolys{}, invalidf("scale %v rad/s is not finite and > 0", scale)
	}
	// Interpolate at the stage's natural scale, where the matrix entries
	// are of order one on the unit circle, then change variable exactly:
	// p_natural = p·(scale/natural).
	sys := compile(st, m, t, natural)
	sys.outCol = sys.col(t, node)
	var num, den []float64
	if ports {
		var nz, ny, nt []float64
		var perr error
		num, den, nz, ny, nt, perr = sys.interpolatePorts()
		if perr != nil {
			return Rational{}, portPolys{}, perr
		}
		_, rn := stageScale(st, m)
		pp = newPortPolys(num, den, nz, ny, nt, rn, natural)
	} else {
		num, den = sys.interpolate()
	}
	if k := scale / natural; k != 1 {
		kj := 1.0
		for j := range num {
			num[j] *= kj
			den[j] *= kj
			kj *= k
		}
	}
	lo := slices.IndexFunc(den, func(v float64) bool { return v != 0 })
	if lo < 0 {
		return Rational{}, portPolys{}, fmt.Errorf("%w: the nodal determinant is identically zero", ErrSingular)
	}
	d := den[lo]
	for i := range num {
		num[i] /= d
		den[i] /= d
		if math.IsInf(num[i], 0) || math.IsNaN(num[i]) || math.IsInf(den[i], 0) || math.IsNaN(den[i]) {
			return Rational{}, portPolys{}, invalidf("scale %v rad/s is too far from the stage's natural scale %v rad/s", scale, natural)
		}
	}
	r = Rational{Num: trimPoly(num), Den: trimPoly(den), ScaleRadPerSec: scale}
	if node == DiffOut {
		// The common-mode poles of a differential stage's two halves
		// are in det A; with matched halves the differential output
		// does not see them, and their zeros cancel them.
		r = r.cancelCommon()
	}
	r.SectionOrder = own.SectionOrderOf(len(r.Den)-1, m)
	return r, pp, nil
}

// trimPoly drops trailing zero coefficients, keeping at least one.
func trimPoly(c []float64) []float64 {
	n := len(c)
	for n > 1 && c[n-1] == 0 {
		n--
	}
	return c[:n:n]
}

// circle holds one interpolation pass at radius rho: the coefficients of
// each polynomial sampled and the noise floor of each, in value units (the
// rounding error of a term c_j·rho^j).
type circle struct {
	rho   float64
	coef  [][]float64
	noise []float64
}

// sampler writes the values of q polynomials in p, each of degree at most
// sys.deg, at p into v (length q).
type sampler func(p complex128, v []complex128)

// interpScratch is the work space of one interpolation: the samples of
// each polynomial on the upper half circle (polynomial i at point k in
// vals[i*half+k]), the twiddle factors e^(−ijθ_k) (tw[j*half+k]), one
// point's values, and a circle's coefficients for the circles after the
// first.
type interpScratch struct {
	vals, tw, pv []complex128
	again        circle
}

func newInterpScratch(q, m int) interpScratch {
	half := m / 2
	cs := make([]complex128, q*half+m*half+q)
	return interpScratch{
		vals: cs[:q*half],
		tw:   cs[q*half : q*half+m*half],
		pv:   cs[q*half+m*half:],
	}
}

// newCircle returns a circle at rho with room for q polynomials of
// degree deg and, after it, extra more float64s.
func newCircle(rho float64, q, deg, extra int) (circle, []float64) {
	fs := make([]float64, q*(deg+2)+extra)
	c := circle{rho: rho, coef: make([][]float64, q), noise: fs[q*(deg+1) : q*(deg+2)]}
	for i := range c.coef {
		c.coef[i] = fs[i*(deg+1) : (i+1)*(deg+1) : (i+1)*(deg+1)]
	}
	return c, fs[q*(deg+2):]
}

// onCircle samples the polynomials (by sample) into c, whose storage it
// reuses and returns filled, at m points (m even, m ≥ deg+1+extraBins)
// p_k = rho·e^(iθ_k), rho = c.rho, θ_k = π(2k+1)/m, and inverts
// the discrete Fourier transform. The points avoid the real axis, where
// real poles lie, and come in conjugate pairs (θ_m−1−k = 2π − θ_k), so
// only the upper half is evaluated: the polynomials are real, so their
// values at conjugate points are conjugate. With degree < m there is no
// aliasing: the coefficients are exact up to rounding, and the transform,
// unitary up to the factor m, spreads the samples' rounding errors evenly
// over the m bins. The bins above the degree bound hold nothing else, so
// their largest magnitude (or ε times the largest sample, if more) is the
// noise floor of every bin. It is measured, not bounded, because at radii
// far from the stage's scale a low-degree cofactor of a matrix with large
// entries is small by cancellation and its error is far above ε·|value|.
func (sys *system) onCircle(c circle, m int, sample sampler, sc *interpScratch) circle {
	deg, rho := sys.deg, c.rho
	clear(c.noise)
	half := m / 2
	tw := sc.tw
	for k := 0; k < half; k++ {
		sin, cos := math.Sincos(math.Pi * float64(2*k+1) / float64(m))
		sample(complex(rho*cos, rho*sin), sc.pv)
		for i, v := range sc.pv {
			sc.vals[i*half+k] = v
			c.noise[i] = math.Max(c.noise[i], lu.Abs1(v))
		}
		tw[k] = 1
		if m > 1 {
			tw[half+k] = complex(cos, -sin)
		}
	}
	// Powers of e^(−iθ_k), by repeated multiplication.
	for j := 2; j < m; j++ {
		prev, w, row := tw[(j-1)*half:j*half], tw[half:2*half], tw[j*half:(j+1)*half]
		for k := range row {
			row[k] = prev[k] * w[k]
		}
	}
	const eps = 0x1p-52
	for i := range c.noise {
		c.noise[i] *= eps
	}
	// c_j·rho^j = (1/m)·Σ_k v_k·e^(−ijθ_k) = (2/m)·Re Σ_{k<m/2} v_k·e^(−ijθ_k).
	for i := range c.coef {
		v := sc.vals[i*half : (i+1)*half]
		rj := 1.0
		for j := 0; j < m; j++ {
			var s float64
			for k, t := range tw[j*half : (j+1)*half] {
				s += real(v[k] * t)
			}
			s *= 2 / float64(m)
			if j > deg {
				c.noise[i] = math.Max(c.noise[i], math.Abs(s))
				continue
			}
			c.coef[i][j] = s / rj
			rj *= rho
		}
	}
	return c
}

// interpolate returns the numerator and denominator coefficients
// (ascending powers of p, length deg+1) of V(Out) = num/det. Both are
// shared polynomials of interpolateShared: a coefficient is read from any
// circle where its term is within shareRatio of its best, so the far
// poles of the op-amps and their parasitics cost two or three circles
// rather than one per coefficient's best radius (3 instead of 4–8 on an
// elliptic-8's stages), each coefficient within about 1e4·ε of its
// polynomial's largest term.
func (sys *system) interpolate() (num, den []float64) {
	c := sys.interpolateAll(2, func(p complex128, v []complex128) {
		v[1], v[0] = sys.detNum(p)
	})
	return c[0], c[1]
}

// interpolateAll returns the coefficients (ascending powers of p, length
// deg+1) of the np polynomials of sample, every one shared (see
// interpolateShared, of which it is the case with no polynomial strict
// and no structural zeros given): the fewest circles that read each
// coefficient within shareRatio of its best.
func (sys *system) interpolateAll(np int, sample sampler) [][]float64 {
	return sys.interpolateShared(np, 0, nil, sample)
}

// shareRatio: a coefficient of a shared polynomial (see interpolateShared)
// may be read from any circle where its term relative to its
// polynomial's largest is at least shareRatio times what it is on its
// best circle, so that its error there is at most 1/shareRatio times the
// least, and at most ε/shareRatio of the polynomial's largest term at any
// radius.
const shareRatio = 1e-4

// interpolateShared returns the coefficients (ascending powers of p, length
// deg+1) of the q polynomials that sample evaluates. Every circle is
// sampled for all of them; the first strict are each resolved as if
// alone, the others (shared) may share circles. Coefficient j < lo[i] of
// polynomial i is structurally zero (lo nil: none is).
//
// One circle at |p| = 1 settles every coefficient whose term there is well
// above its polynomial's noise floor (relative error ≤ acceptRel). Any
// other (the op-amps' far poles, or a structural zero showing as noise) is
// measured again on the circle where its term is largest relative to its
// polynomial's other terms, as estimated from the first pass (where a
// coefficient below the noise floor, an exact zero included, counts as
// the noise floor: its value there is rounding), and there it is either
// accurate or below noiseFactor times that circle's noise floor, and then
// exactly zero; so is a coefficient whose estimate is negligible
// everywhere in the window. A strict polynomial's result does not depend
// on the others sampled with it. A shared polynomial's coefficient is
// read from a circle where its term is within shareRatio of its best
// (see shareRatio), the fewest circles that serve all being chosen among
// the strict polynomials' and new ones (interval stabbing, greedy on the
// intervals' upper ends, which is optimal).
func (sys *system) interpolateShared(q, strict int, lo []int, sample sampler) [][]float64 {
	m := (sys.deg + 2 + extraBins) &^ 1 // even, ≥ deg+1+extraBins
	sc := newInterpScratch(q, m)
	base, logs := newCircle(1, q, sys.deg, sys.deg+1)
	base = sys.onCircle(base, m, sample, &sc)
	coef := base.coef

	type redo struct {
		key  int // radius 10^(key/2)
		poly int
		j    int
	}
	type shared struct {
		poly, j, lo, hi, best int // keys
	}
	todo := make([]redo, 0, 8)
	flex := make([]shared, 0, 8)
	var lt logTerms
	for i, c := range coef {
		noise := base.noise[i]
		first := 0
		if lo != nil {
			first = lo[i]
		}
		for k, v := range c {
			logs[k] = math.Log(math.Max(math.Abs(v), noise))
			if k < first {
				c[k], logs[k] = 0, math.Inf(-1)
			}
		}
		ready := false
		for j, v := range c[first:] {
			j += first
			if noise <= acceptRel*math.Abs(v) {
				continue
			}
			if !ready {
				lt.set(logs)
				ready = true
			}
			x, r := lt.best(j)
			key := int(math.Round(2 * x / math.Ln10))
			kl, kh := key, key
			if i >= strict && r >= negligibleRatio {
				kl, kh = lt.keyRange(j, key, math.Log(r*shareRatio))
			}
			switch {
			case r < negligibleRatio:
				c[j] = 0
			case kl <= 0 && 0 <= kh:
				if math.Abs(v) < noiseFactor*noise {
					c[j] = 0
				}
			case i < strict:
				todo = append(todo, redo{key: key, poly: i, j: j})
			default:
				flex = append(flex, shared{poly: i, j: j, lo: kl, hi: kh, best: key})
			}
		}
	}
	if len(flex) > 0 {
		keys := []int{0}
		for _, t := range todo {
			keys = append(keys, t.key)
		}
		slices.SortFunc(flex, func(a, b shared) int { return a.hi - b.hi })
		for _, f := range flex {
			if !slices.ContainsFunc(keys, func(k int) bool { return f.lo <= k && k <= f.hi }) {
				keys = append(keys, f.hi)
			}
		}
		for _, f := range flex {
			at := f.hi
			for _, k := range keys {
				if f.lo <= k && k <= f.hi && abs(k-f.best) < abs(at-f.best) {
					at = k
				}
			}
			todo = append(todo, redo{key: at, poly: f.poly, j: f.j})
		}
	}
	slices.SortFunc(todo, func(a, b redo) int { return a.key - b.key })
	for i := 0; i < len(todo); {
		key := todo[i].key
		var c circle
		if key == 0 {
			c = base
		} else {
			if sc.again.coef == nil {
				sc.again, _ = newCircle(0, q, sys.deg, 0)
			}
			sc.again.rho = math.Pow(10, float64(key)/2)
			c = sys.onCircle(sc.again, m, sample, &sc)
		}
		for ; i < len(todo) && todo[i].key == key; i++ {
			t := todo[i]
			v := c.coef[t.poly][t.j]
			if math.Abs(v)*math.Pow(c.rho, float64(t.j)) < noiseFactor*c.noise[t.poly] {
				v = 0
			}
			coef[t.poly][t.j] = v
		}
	}
	return coef
}

func abs(k int) int {
	if k < 0 {
		return -k
	}
	return k
}

// keyRange returns the keys (radii 10^(key/2) in the window) around best
// at which term j, relative to the largest term, has a log at least floor.
// The log ratio is concave in the log-radius (a linear term minus a
// maximum of linear terms), so the keys form an interval; best is always
// in it.
func (lt *logTerms) keyRange(j, best int, floor float64) (lo, hi int) {
	lim := 2 * windowDecades
	if len(lt.keyTops) == 0 {
		if cap(lt.keyTops) < 2*lim+1 {
			lt.keyTops = make([]float64, 0, 2*lim+1)
		}
		for k := -lim; k <= lim; k++ {
			x := float64(k) / 2 * math.Ln10
			top := math.Inf(-1)
			for i, l := range lt.logs {
				if v := l + float64(i)*x; v > top {
					top = v
				}
			}
			lt.keyTops = append(lt.keyTops, top)
		}
	}
	ok := func(key int) bool {
		return lt.logs[j]+float64(j)*(float64(key)/2*math.Ln10)-lt.keyTops[key+lim] >= floor
	}
	lo, hi = best, best
	for lo > -lim && ok(lo-1) {
		lo--
	}
	for hi < lim && ok(hi+1) {
		hi++
	}
	return lo, hi
}

// logTerms holds a polynomial's log-magnitude coefficients (−Inf for an
// exact zero), the candidate log-radii at which one of its terms can be
// largest relative to the others (0, the window's ends, and where two
// terms are equal), and the largest term's log at each.
type logTerms struct {
	logs, cands, tops []float64
	keyTops           []float64 // the largest term's log at key k−2·windowDecades (keyRange), or nil
}

// set fills lt for the coefficients logs (kept, not copied).
func (lt *logTerms) set(logs []float64) {
	lim := windowDecades * math.Ln10
	lt.logs = logs
	if lt.cands == nil {
		d := len(logs)
		n := 3 + d*(d-1)/2
		buf := make([]float64, 2*n)
		lt.cands, lt.tops = buf[:0:n], buf[n:n]
	}
	lt.cands = append(lt.cands[:0], 0, -lim, lim)
	for i := range logs {
		for k := i + 1; k < len(logs); k++ {
			if math.IsInf(logs[i], -1) || math.IsInf(logs[k], -1) {
				continue
			}
			if b := (logs[i] - logs[k]) / float64(k-i); b > -lim && b < lim {
				lt.cands = append(lt.cands, b)
			}
		}
	}
	lt.keyTops = lt.keyTops[:0]
	lt.tops = lt.tops[:0]
	for _, xc := range lt.cands {
		top := math.Inf(-1)
		for i, l := range logs {
			if v := l + float64(i)*xc; v > top {
				top = v
			}
		}
		lt.tops = append(lt.tops, top)
	}
}

// best returns the log-radius x in the window at which term j is largest
// relative to the largest term, preferring the x nearest 0 among the
// best, and that ratio. Terms with log −Inf (exact zeros) are ignored.
func (lt *logTerms) best(j int) (x, ratio float64) {
	const tie = 1e-9
	best := math.Inf(-1)
	for c, xc := range lt.cands {
		f := lt.logs[j] + float64(j)*xc - lt.tops[c]
		switch {
		case f > best+tie:
			best, x = f, xc
		case f > best-tie && math.Abs(xc) < math.Abs(x):
			best, x = math.Max(best, f), xc
		}
	}
	return x, math.Exp(best)
}

// SectionOrderOf returns the section order of the stage's transfer
// function whose denominator has degree deg under model m: deg less one
// pole per single-pole op-amp, and at most the stage's own capacitors (of
// a fully differential stage's halves, half A's), so
// that the poles the model's parasitics add (input capacitance behind an
// output resistance) do not count as the section's.
func (st Stage) SectionOrderOf(deg int, m Model) int {
	if !m.Ideal {
		deg -= len(st.OpAmps)
	}
	if m.HasParasitics() {
		caps := 0
		for _, p := range st.Parts {
			// A fully differential stage's two halves are one section:
			// half B's parts mirror half A's.
			if p.Kind == Capacitor && HalfOf(p.Ref) != HalfB {
				caps++
			}
		}
		deg = min(deg, caps)
	}
	return max(0, deg)
}
