package circuit

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/internal/lu"
)

// Loading is how much each stage's output is pulled down by the input of
// the stage it drives. With an op-amp output resistance Ro the output of
// a stage is not a perfect voltage source: seen from the next stage it
// has the Thévenin impedance Zout(s), which the stage's feedback holds
// small while its loop gain is large and which approaches Ro where the
// loop gain falls.
//
// Each stage is a two-port between its input and its output:
//
//	V(out) = H·V(in) + Zout·I,   I(in) = Yin·V(in) + T·I,
//
// with I the current injected into its output from outside and I(in) the
// current its input draws; all four are rational functions with the
// stage's nodal determinant as denominator. The last stage's output is
// open; a stage loaded by the admittance YL (the next stage's input, as
// loaded in turn) passes on G = H/(1 + Zout·YL) and draws
// Yin − T·YL·G. The chain's response as built is the product of the
// unloaded stages ([Chain.TransferFunctions]) times every loaded stage's
// 1/(1 + Zout·YL): exact, boundary by boundary from the output back.
// Matched fully differential stages are taken by their half circuits
// (bisection), a single-ended-to-differential stage's input by the whole
// stage; a boundary between stages of other forms is left uncorrected,
// as is every boundary when Ro is zero or the op-amp ideal (Zout is then
// zero).
type Loading struct {
	stages []stagePorts
	joined []bool // joined[k]: the boundary after stage k is corrected
}

// stagePorts are a stage's two-port functions: the output side (Zout in
// Ω, T, H over den, p = s/outScale) and the input side (Yin in S over
// inDen, p = s/inScale), which differ only for a stage whose input is
// taken whole and its output by its half.
type stagePorts struct {
	outOK, inOK       bool
	outScale, inScale float64
	den, zout, tr, h  []float64
	inDen, yin        []float64
	sameDen           bool // both sides from one nodal system: inDen is den
	outWhole          bool // the output side from the whole (single-ended) stage
}

// portPolys are the four two-port numerators of one nodal system over its
// determinant, at scale rad/s per unit p.
type portPolys struct {
	scale                 float64
	den, h, zout, tr, yin []float64
}

// Empty reports whether no boundary is corrected (L = 1 everywhere).
func (l Loading) Empty() bool {
	for _, j := range l.joined {
		if j {
			return false
		}
	}
	return true
}

// step visits stage k in the recursion at angular frequency w: yl is the
// load of its output (0 when the boundary after it is not corrected). It
// returns its factor's numerator and denominator, d and d + zout·yl
// (both 1 when the stage is not loaded), and the load it puts on the
// stage before, Yin − T·yl·H/(d·(d + zout·yl)) (0 when that boundary is
// not corrected).
func (l *Loading) step(k int, w float64, yl complex128) (num, den, ylPrev complex128) {
	sp := &l.stages[k]
	num, den = 1, 1
	loaded := k < len(l.joined) && l.joined[k]
	needIn := k > 0 && l.joined[k-1]
	var tail complex128 // T·yl·G: the output's pull on the input current
	var d complex128
	if loaded {
		x := w / sp.outScale
		d = axisPoly(sp.den, x)
		num, den = d, d+axisPoly(sp.zout, x)*yl
		if needIn {
			tail = div(axisPoly(sp.tr, x)*yl*axisPoly(sp.h, x), d*den)
		}
	}
	if needIn {
		x := w / sp.inScale
		di := d
		if !loaded || !sp.sameDen {
			di = axisPoly(sp.inDen, x)
		}
		ylPrev = div(axisPoly(sp.yin, x), di) - tail
	}
	return num, den, ylPrev
}

// AtHz returns the loading's factor L, the product of every corrected
// stage's 1/(1 + Zout·YL), at fHz.
func (l Loading) AtHz(fHz float64) complex128 {
	h := complex(1, 0)
	if l.Empty() {
		return h
	}
	w := 2 * math.Pi * fHz
	var yl complex128
	for k := len(l.stages) - 1; k >= 0; k-- {
		var num, den complex128
		num, den, yl = l.step(k, w, yl)
		h = div(h*num, den)
	}
	return h
}

// Loaded reports whether the loading corrects the boundary after stage k
// (the next stage's input loads its output).
func (l Loading) Loaded(k int) bool {
	return k >= 0 && k < len(l.joined) && l.joined[k]
}

// Factor2At writes |1/(1 + Zout·YL)|², the squared magnitude of the
// factor the loading puts on each stage's transfer, at fHz into dst
// (grown to the chain's length; 1 where a stage's output is not loaded)
// and returns it. An output-referred source inside stage k reaches the
// port through the same factor (Thévenin), so the noise takes it too.
func (l Loading) Factor2At(fHz float64, dst []float64) []float64 {
	n := len(l.stages)
	if cap(dst) < n {
		dst = make([]float64, n)
	}
	dst = dst[:n]
	w := 2 * math.Pi * fHz
	var y complex128
	for k := n - 1; k >= 0; k-- {
		var num, den complex128
		num, den, y = l.step(k, w, y)
		f := div(num, den)
		dst[k] = real(f)*real(f) + imag(f)*imag(f)
	}
	return dst
}

// Sweep returns, for every stage k of the chain and every freqHz[i], the
// admittance yl[k][i] in S that the stages after it put on its output port
// (per side for a differential stage; 0 where that boundary is not
// corrected), and the factor fac[k][i] = 1/(1 + Zout·YL) the loading puts
// on its transfer. With an empty loading both are nil.
func (l Loading) Sweep(freqHz []float64) (yl, fac [][]complex128) {
	if l.Empty() {
		return nil, nil
	}
	n, m := len(l.stages), len(freqHz)
	back := make([]complex128, 2*n*m)
	yl, fac = make([][]complex128, n), make([][]complex128, n)
	for k := range n {
		yl[k] = back[2*k*m : (2*k+1)*m : (2*k+1)*m]
		fac[k] = back[(2*k+1)*m : (2*k+2)*m : (2*k+2)*m]
	}
	l.sweep(freqHz, yl, fac)
	return yl, fac
}

// sweep is the recursion of [Loading.step] stage by stage over the whole
// grid, each polynomial split into even and odd powers once (as
// sweepStage does): it fills fac[k] and, when yl is not nil, yl[k]. The
// load on the stage being visited is carried in the next stage's yl row,
// or in scratch when yl is nil.
func (l Loading) sweep(freqHz []float64, yl, fac [][]complex128) {
	var cur, next []complex128 // the load on stage k's output, and on k−1's
	if yl == nil {
		buf := make([]complex128, 2*len(freqHz))
		cur, next = buf[:len(freqHz)], buf[len(freqHz):]
	}
	for k := len(l.stages) - 1; k >= 0; k-- {
		if yl != nil {
			cur = yl[k]
			if k > 0 {
				next = yl[k-1]
			}
		}
		sp := &l.stages[k]
		loaded := k < len(l.joined) && l.joined[k]
		needIn := k > 0 && l.joined[k-1]
		if !loaded {
			for i := range fac[k] {
				fac[k][i] = 1
			}
		}
		if !loaded && !needIn {
			if k > 0 {
				clear(next)
			}
			cur, next = next, cur
			continue
		}
		var den, zout, tr, h, inDen, yin evenOddPoly
		var ko, ki float64
		if loaded {
			den, zout = newEvenOddPoly(sp.den), newEvenOddPoly(sp.zout)
			if needIn {
				tr, h = newEvenOddPoly(sp.tr), newEvenOddPoly(sp.h)
			}
			ko = 2 * math.Pi / sp.outScale
		}
		shared := loaded && sp.sameDen
		if needIn {
			yin = newEvenOddPoly(sp.yin)
			if !shared {
				inDen = newEvenOddPoly(sp.inDen)
			}
			ki = 2 * math.Pi / sp.inScale
		}
		for i, f := range freqHz {
			var tail, d complex128
			if loaded {
				x := ko * f
				u := -x * x
				d = den.at(x, u)
				e := d + zout.at(x, u)*cur[i]
				fac[k][i] = div(d, e)
				if needIn {
					tail = div(tr.at(x, u)*cur[i]*h.at(x, u), d*e)
				}
			}
			if needIn {
				x := ki * f
				u := -x * x
				di := d
				if !shared {
					di = inDen.at(x, u)
				}
				next[i] = div(yin.at(x, u), di) - tail
			}
		}
		if yl == nil {
			cur, next = next, cur
		}
	}
}

// Apply multiplies dst[i] by the loading at freqHz[i].
func (l Loading) Apply(dst []complex128, freqHz []float64) {
	if l.Empty() {
		return
	}
	for i, f := range freqHz {
		dst[i] *= l.AtHz(f)
	}
}

// DBAt returns 20·log10|L| at fHz, from |num|²/|den|² of the stages'
// factors with one logarithm while the products stay in range.
func (l Loading) DBAt(fHz float64) float64 {
	if l.Empty() {
		return 0
	}
	w := 2 * math.Pi * fHz
	n2, d2, acc := 1.0, 1.0, 0.0
	var yl complex128
	for k := len(l.stages) - 1; k >= 0; k-- {
		var num, den complex128
		num, den, yl = l.step(k, w, yl)
		n2 *= real(num)*real(num) + imag(num)*imag(num)
		d2 *= real(den)*real(den) + imag(den)*imag(den)
		if !(n2 > 1e-200 && n2 < 1e200 && d2 > 1e-200 && d2 < 1e200) {
			acc += math.Log(n2) - math.Log(d2)
			n2, d2 = 1, 1
		}
	}
	if acc == 0 {
		return dbPerLn10 * lnRatio(n2, d2)
	}
	v := dbPerLn10 * (acc + math.Log(n2/d2))
	if math.IsNaN(v) {
		return 20 * math.Log10(cmplx.Abs(l.AtHz(fHz)))
	}
	return v
}

// dbPerLn10 is 10/ln 10: 10·log10(v) = dbPerLn10·ln(v).
const dbPerLn10 = 10 / math.Ln10

// ApplyDB adds the loading's 20·log10|L| at freqHz[i] to dst[i]: the
// recursion of [Loading.DBAt] over the whole grid ([Loading.Sweep]'s),
// with one logarithm per frequency while the product of the factors'
// squared magnitudes stays in range.
func (l Loading) ApplyDB(dst []float64, freqHz []float64) {
	if l.Empty() {
		return
	}
	n, m := len(l.stages), len(freqHz)
	back := make([]complex128, n*m)
	fac := make([][]complex128, n)
	for k := range n {
		fac[k] = back[k*m : (k+1)*m : (k+1)*m]
	}
	l.sweep(freqHz, nil, fac)
	for i, f := range freqHz {
		p2 := 1.0
		for k := range n {
			v := fac[k][i]
			p2 *= real(v)*real(v) + imag(v)*imag(v)
		}
		v := dbPerLn10 * lnRatio(p2, 1)
		if math.IsNaN(v) || math.IsInf(v, 0) || p2 == 0 {
			v = 20 * math.Log10(cmplx.Abs(l.AtHz(f)))
		}
		dst[i] += v
	}
}

// lnRatio returns ln(a/b) for positive a and b. The loading is mostly a
// factor within a part in a thousand of 1, where the series of ln(1+x) to
// x⁶ is exact to rounding (its remainder is below x⁷/7 < 1.5e-22) and
// costs less than a logarithm.
func lnRatio(a, b float64) float64 {
	x := (a - b) / b
	if math.Abs(x) < 1e-3 {
		return x * (1 - x*(1.0/2-x*(1.0/3-x*(1.0/4-x*(1.0/5-x*(1.0/6))))))
	}
	return math.Log(a / b)
}

// Loading returns the chain's inter-stage loading (see [Loading]); it is
// empty unless the model has an output resistance and a finite gain. It
// returns an error wrapping [ErrInvalid] for an invalid chain, or one
// wrapping [ErrSingular].
func (c Chain) Loading() (Loading, error) {
	m := c.Model
	if !(m.OutputResistanceOhm > 0) || m.Ideal || len(c.Stages) < 2 {
		return Loading{}, nil
	}
	if err := m.Validate(); err != nil {
		return Loading{}, err
	}
	n := len(c.Stages)
	l := Loading{stages: make([]stagePorts, n), joined: make([]bool, n-1)}
	for k := 0; k+1 < n; k++ {
		from, to := c.Stages[k], c.Stages[k+1]
		l.joined[k] = from.Differential() == to.DiffIn
	}
	for k, st := range c.Stages {
		needOut := k < n-1 && l.joined[k]
		needIn := k > 0 && l.joined[k-1]
		if !needOut && !needIn {
			continue
		}
		sp, err := c.Memo.stagePorts(st, m, needOut, needIn)
		if err != nil {
			return Loading{}, fmt.Errorf("stage %d (%s): ports: %w", k+1, st.Topology, err)
		}
		l.stages[k] = sp
	}
	for k := range l.joined {
		l.joined[k] = l.joined[k] && l.stages[k].outOK && l.stages[k+1].inOK
	}
	return l, nil
}

// stagePorts returns st's two-port functions for the sides asked for: a
// single-ended stage's from its own nodal system, a matched differential
// stage's output side (and, with a differential input, its input side)
// from its half circuit, a single-ended-to-differential stage's input
// side from the whole stage. A side that cannot be had is left not OK.
func (mm *Memo) stagePorts(st Stage, m Model, out, in bool) (stagePorts, error) {
	var sp stagePorts
	whole := !st.Differential()
	var half Stage
	if !whole {
		h, _, ok := st.matchedHalf()
		if !ok {
			out, in = false, in && !st.DiffIn
		}
		half = h
	}
	if out {
		src := st
		if !whole {
			src = half
		}
		pp, err := mm.ports(src, m)
		if err != nil {
			return sp, err
		}
		sp.outOK, sp.outScale, sp.outWhole = true, pp.scale, whole
		sp.den, sp.zout, sp.tr, sp.h = pp.den, pp.zout, pp.tr, pp.h
	}
	if in {
		src := st
		if !whole && st.DiffIn {
			src = half
		}
		pp, err := mm.ports(src, m)
		if err != nil {
			return sp, err
		}
		sp.inOK, sp.inScale = true, pp.scale
		sp.inDen, sp.yin = pp.den, pp.yin
		sp.sameDen = out && (whole || st.DiffIn)
	}
	return sp, nil
}

// ports returns a stage's two-port functions with the model's parasitics
// (see [Loading]): its transfer from the input to Out, with Out open, and
// Zout, T with the input at 0 V, all over the nodal determinant at the
// stage's natural scale.
func (st Stage) ports(m Model) (portPolys, error) {
	t, err := st.check()
	if err != nil {
		return portPolys{}, err
	}
	_, pp, err := st.nodeTransferPorts(m, t, 0, st.Out, true)
	return pp, err
}

// interpolatePorts is interpolate with three more polynomials from the
// same factorisations: the numerators of the source's current unknown
// under the unit drive (ny), and of V(Out) and the source's current
// unknown with 1 in Out's balance and the input at 0 (nz, nt). It returns
// an error wrapping [ErrSingular] when A is exactly singular at a sample
// point (interpolate alone then falls back on Cramer's rule).
func (sys *system) interpolatePorts() (num, den, nz, ny, nt []float64, err error) {
	out := sys.outCol
	src := sys.srcRow // the source's current unknown has the source row's index
	var singular bool
	c := sys.interpolateAll(5, func(p complex128, v []complex128) {
		sys.fill(p)
		det := lu.Factor(sys.a, sys.n, sys.piv)
		if det == 0 {
			singular = true
			clear(v)
			return
		}
		clear(sys.x)
		sys.x[sys.srcRow] = 1
		lu.Solve(sys.a, sys.n, sys.piv, sys.x)
		h, y := sys.x[out], sys.x[src]
		clear(sys.x)
		sys.x[out] = 1
		lu.Solve(sys.a, sys.n, sys.piv, sys.x)
		v[0], v[1], v[2], v[3], v[4] = det*h, det, det*sys.x[out], det*y, det*sys.x[src]
	})
	if singular {
		return nil, nil, nil, nil, nil, fmt.Errorf("%w: nodal matrix is singular on an interpolation circle", ErrSingular)
	}
	return c[0], c[1], c[2], c[3], c[4], nil
}

// newPortPolys forms the two-port numerators from interpolatePorts'
// polynomials of a system whose admittances are normalised by rn, at
// scale rad/s per unit p: the source's current unknown is −rn times the
// current into the stage's input, and a unit entry in Out's balance
// injects 1/rn A, so Zout = rn·nz, Yin = −ny/rn and T = −nt over den.
// Every slice is a copy (the caller goes on to scale its own).
func newPortPolys(num, den, nz, ny, nt []float64, rn, scale float64) portPolys {
	pp := portPolys{scale: scale, den: trimPoly(append([]float64(nil), den...)), h: trimPoly(append([]float64(nil), num...))}
	pp.zout = make([]float64, len(nz))
	for i, v := range nz {
		pp.zout[i] = v * rn
	}
	pp.yin = make([]float64, len(ny))
	for i, v := range ny {
		pp.yin[i] = -v / rn
	}
	pp.tr = make([]float64, len(nt))
	for i, v := range nt {
		pp.tr[i] = -v
	}
	pp.zout, pp.yin, pp.tr = trimPoly(pp.zout), trimPoly(pp.yin), trimPoly(pp.tr)
	return pp
}
