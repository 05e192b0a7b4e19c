package circuit

import (
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/internal/lu"
)

// PartSlopes is a stage's transfer function as a function of each of its
// parts taken alone. A part enters the nodal matrix as one rank-one stamp
// of its admittance, so the nodal determinant and the output cofactor are
// affine in that admittance: with part j's admittance multiplied by a
// (a = 1 nominal; a resistor of value R·f has a = 1/f, a capacitor of
// value C·f has a = f) and every other part nominal,
//
//	V(Out)/V(In) = (Num + (a−1)·DNum[j]) / (Den + (a−1)·DDen[j]),
//
// polynomials in p = s/ScaleRadPerSec, ascending, all scaled by one common
// factor (Den's lowest non-zero coefficient is 1).
type PartSlopes struct {
	Num, Den       []float64
	DNum, DDen     [][]float64
	ScaleRadPerSec float64
}

// At returns the stage's polynomials with part j's admittance scaled by a,
// in num and den (each grown to the needed length; the results are
// returned).
func (ps PartSlopes) At(j int, a float64, num, den []float64) ([]float64, []float64) {
	num = affineAt(num[:0], ps.Num, ps.DNum[j], a-1)
	den = affineAt(den[:0], ps.Den, ps.DDen[j], a-1)
	return num, den
}

func affineAt(dst, c, d []float64, t float64) []float64 {
	n := max(len(c), len(d))
	for i := range n {
		var v float64
		if i < len(c) {
			v = c[i]
		}
		if i < len(d) {
			v += t * d[i]
		}
		dst = append(dst, v)
	}
	return dst
}

// Slopes returns the stage's [PartSlopes] with the op-amp model m, in the
// variable s/scaleRadPerSec (0: the stage's own scale, as for
// [Stage.TransferFunctionScaled]). Errors are as for
// [Stage.TransferFunctionScaled].
//
// A part's stamp is y·u·uᵀ (u = e_a − e_b over its nodes), so by the
// matrix determinant lemma and the Sherman–Morrison formula, with
// x = A⁻¹b and w = A⁻¹u at one point p,
//
//	∂ det A / ∂y     = det A·uᵀw,
//	∂ det A_out / ∂y = det A·(uᵀw·x_out − w_out·uᵀx),
//
// exactly, and the slopes DDen, DNum are these times the part's
// admittance (a capacitor's carry its factor p: no constant term). One LU
// of A(p) and one solve per node of the stage give every part's slopes at
// p; they are interpolated together with the nominal determinant and
// cofactor on the nominal's circles. Num and Den are exactly those of
// [Stage.TransferFunctionScaled]; a slope's coefficient that the first
// circle does not settle is read from a circle where its term, relative
// to its polynomial's largest, is within a factor 1e4 of the best in the
// window, one more circle being added only where none of those serves
// (typically one, at a small radius), so its error is at most about 1e-12
// of its polynomial's largest term at any radius, as for the nominal's
// coefficients that the first circle settles.
func (st Stage) Slopes(m Model, scaleRadPerSec float64) (PartSlopes, error) {
	if err := m.Validate(); err != nil {
		return PartSlopes{}, err
	}
	t, err := st.check()
	if err != nil {
		return PartSlopes{}, err
	}
	nReal := len(st.Parts)
	st, t = st.withParasitics(m, t)
	natural, rn := stageScale(st, m)
	scale := scaleRadPerSec
	if scale == 0 {
		scale = natural
	}
	if !finitePositive(scale) {
		return PartSlopes{}, invalidf("scale %v rad/s is not finite and > 0", scale)
	}
	sys := compile(st, m, t, natural)
	// Slopes of the stage's own parts only: the parasitic parts are in
	// the nominal system but have no figure.
	own := st
	own.Parts = st.Parts[:nReal]
	ss := newSlopeSampler(sys, own, t, rn)
	// A capacitor's slopes carry its admittance's factor p: no constant
	// term.
	lo := make([]int, 2+2*nReal)
	for j, p := range own.Parts {
		if p.Kind == Capacitor {
			lo[2+2*j], lo[3+2*j] = 1, 1
		}
	}
	coef := sys.interpolateShared(len(lo), 0, lo, ss.sample)
	num0, den0 := coef[0], coef[1]
	low := slices.IndexFunc(den0, func(v float64) bool { return v != 0 })
	if low < 0 {
		return PartSlopes{}, fmt.Errorf("%w: the nodal determinant is identically zero", ErrSingular)
	}
	norm := den0[low]
	k := scale / natural
	rescale := func(c []float64) []float64 {
		kj := 1.0
		for j := range c {
			c[j] = c[j] * kj / norm
			kj *= k
		}
		return c
	}
	ps := PartSlopes{ScaleRadPerSec: scale}
	for j := range nReal {
		ps.DNum = append(ps.DNum, trimPoly(rescale(coef[2+2*j])))
		ps.DDen = append(ps.DDen, trimPoly(rescale(coef[3+2*j])))
	}
	ps.Num = trimPoly(rescale(num0))
	ps.Den = trimPoly(rescale(den0))
	for _, c := range [][]float64{ps.Num, ps.Den} {
		for _, v := range c {
			if math.IsInf(v, 0) || math.IsNaN(v) {
				return PartSlopes{}, invalidf("scale %v rad/s is too far from the stage's natural scale %v rad/s", scale, natural)
			}
		}
	}
	return ps, nil
}

// slopeSampler evaluates, at a point p, the nodal cofactor det A_out and
// determinant det A of a stage and, per part, their derivatives times the
// part's admittance (the slopes of [PartSlopes] before normalisation), in
// the order num, det, then dNum, dDet of each part.
type slopeSampler struct {
	sys    *system
	st     Stage
	t      *nodeTable
	rn     float64
	stamps []partStampIdx
	colOf  []int          // unknown → its column of z, or −1
	cols   []int          // the node unknowns the parts touch
	z      [][]complex128 // z[c] = A⁻¹·e_cols[c]
	inv    []complex128   // the reciprocals of U's diagonal
	g0, c0 []float64      // the nominal G and C (for the singular fallback)
}

// partStampIdx is a part's stamp in index form (see partStamp).
type partStampIdx struct {
	a, b  int
	y     float64
	isCap bool
}

func newSlopeSampler(sys *system, st Stage, t *nodeTable, rn float64) *slopeSampler {
	ss := &slopeSampler{sys: sys, st: st, t: t, rn: rn, colOf: make([]int, sys.n), inv: make([]complex128, sys.n)}
	for i := range ss.colOf {
		ss.colOf[i] = -1
	}
	for _, p := range st.Parts {
		a, b, y, isCap := partStamp(p, t, rn, sys.scale)
		ss.stamps = append(ss.stamps, partStampIdx{a: a, b: b, y: y, isCap: isCap})
		for _, i := range []int{a, b} {
			if i >= 0 && ss.colOf[i] < 0 {
				ss.colOf[i] = len(ss.cols)
				ss.cols = append(ss.cols, i)
				ss.z = append(ss.z, make([]complex128, sys.n))
			}
		}
	}
	ss.g0, ss.c0 = slices.Clone(sys.g), slices.Clone(sys.c)
	return ss
}

// sample is a [sampler] for 2 + 2·len(parts) polynomials.
func (ss *slopeSampler) sample(p complex128, v []complex128) {
	sys := ss.sys
	n := sys.n
	sys.fill(p)
	det := lu.Factor(sys.a, n, sys.piv)
	if det == 0 {
		ss.sampleSingular(p, v)
		return
	}
	x := sys.x
	clear(x)
	x[sys.srcRow] = 1
	lu.Solve(sys.a, n, sys.piv, x)
	for i := range ss.inv {
		ss.inv[i] = 1 / sys.a[i*n+i]
	}
	for c, col := range ss.cols {
		lu.SolveUnit(sys.a, n, sys.piv, ss.inv, col, ss.z[c])
	}
	out := sys.outCol
	xo := x[out]
	v[0], v[1] = det*xo, det
	for k, s := range ss.stamps {
		// beta = uᵀA⁻¹u, wo = (A⁻¹u)_out, ux = uᵀx.
		var beta, wo, ux complex128
		if s.a >= 0 {
			za := ss.z[ss.colOf[s.a]]
			beta += za[s.a]
			wo += za[out]
			ux += x[s.a]
			if s.b >= 0 {
				beta -= za[s.b]
			}
		}
		if s.b >= 0 {
			zb := ss.z[ss.colOf[s.b]]
			beta += zb[s.b]
			wo -= zb[out]
			ux -= x[s.b]
			if s.a >= 0 {
				beta -= zb[s.a]
			}
		}
		dy := det * complex(s.y, 0)
		if s.isCap {
			dy *= p
		}
		v[2+2*k] = dy * (beta*xo - wo*ux)
		v[3+2*k] = dy * beta
	}
}

// sampleSingular is sample at a p where A(p) is exactly singular, so that
// it cannot be solved: each part's slopes are the differences of the
// determinants with the part's stamp added once more and the nominal ones
// (the determinants being affine in the admittance, the difference is the
// slope exactly).
func (ss *slopeSampler) sampleSingular(p complex128, v []complex128) {
	sys := ss.sys
	det0, num0 := sys.detNum(p)
	v[0], v[1] = num0, det0
	for k, part := range ss.st.Parts {
		copy(sys.g, ss.g0)
		copy(sys.c, ss.c0)
		sys.stampPart(part, ss.t, ss.rn, sys.scale)
		det2, num2 := sys.detNum(p)
		v[2+2*k], v[3+2*k] = num2-num0, det2-det0
	}
	copy(sys.g, ss.g0)
	copy(sys.c, ss.c0)
}
