package verify

import (
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/internal/lu"
)

// Exact pole sensitivities by the adjoint of the nodal system.
//
// A stage's poles are the roots λ of det A(p), A(p) = G + p·C + Σ_u
// (α + β·p)·E_u the normalised modified nodal matrix of package circuit
// (every part a rank-one stamp y_x·u_x·u_xᵀ, u_x = e_a − e_b; every
// single-pole op-amp u the entry 1/A(p) = α + β·p of its equation's row
// and its output's column, E_u; α = β = 0 for the ideal model). The
// derivative of a simple root with respect to a parameter θ is
//
//	dλ/dθ = −(∂det A/∂θ)/(∂det A/∂p) = −wᵀ(∂A/∂θ)v / wᵀA'(λ)v,
//
// with v and w the right and left null vectors of A(λ): by Jacobi's
// formula ∂det A/∂θ = tr(adj A·∂A/∂θ), and at a simple root adj A(λ) is
// a multiple of v·wᵀ. This is the derivative that the multi-affine
// expansion of det A (expand.go) gives term by term, ∂det/∂ln y_x being
// the sum of the monomials that hold y_x, but at the cost of one complex
// LU of the nodal matrix instead of 2^k vertex determinants. For a part,
// ∂A/∂ln x = ∓y_x(λ)·u_x·u_xᵀ (− for a resistor, y = rn/R; + for a
// capacitor, y = λ·rn·C·scale), so that
//
//	dλ/dln R = +y_R·(wᵀu)(uᵀv)/wᵀA'v,  dλ/dln C = −y_C(λ)·(wᵀu)(uᵀv)/wᵀA'v,
//
// and A'(p) = C + β·Σ_u E_u. v and w come from two steps of inverse
// iteration with the LU factors of A(λ), which are nearly singular: the
// pole is the circuit package's, accurate to rounding.

// adjointSingularTol is the largest smallest pivot of A(λ), relative to
// the largest entry of A(λ), at which λ is taken as a root of det A: the
// circuit package's poles leave a pivot of rounding size (at most 1e-15,
// often exactly 0, measured on the example designs' stages with four
// op-amp models); a larger one means that the nodal system here is not
// the circuit package's, and the sensitivities are taken by central
// differences instead.
const adjointSingularTol = 1e-8

// adjointSplitTol: when the two poles that stand for a section's pair are
// closer than this fraction of their magnitude (|Q − ½| below about 1e-5),
// the root derivatives lose too many digits to the near-double root (each
// is of order 1/|λ1 − λ2|, their symmetric functions are not, and the
// poles themselves are found only to rounding over |λ1 − λ2|): the error
// grows as 1e-16/|λ1 − λ2|³ relative, measured 1e-11 at 6e-3, 1e-10 to
// 1e-8 at 2e-3 and up to 4e-7 at 6e-4 on a Sallen-Key stage near Q = ½.
// The sensitivities are then taken by central differences instead.
const adjointSplitTol = 1e-2

// nodal is a stage's normalised modified nodal system, split by
// parameter: A(p) = g + p·c + (alpha + beta·p)·Σ_u E_u.
type nodal struct {
	n           int
	g, c        []float64 // n×n row-major: the resistors and the source; the capacitors per unit p
	ops         []opEntry // each single-pole op-amp's 1/A entries
	alpha, beta float64
	parts       []nodalPart
}

// opEntry is one entry of an op-amp's 1/A term: sign·(α + β·p) at (row,
// col); a fully differential op-amp has two, +1 at its Out and −1 at its
// OutN.
type opEntry struct {
	row, col int
	sign     float64
}

// nodalPart is one part's stamp.
type nodalPart struct {
	a, b  int     // unknowns of its nodes, −1 for ground
	y     float64 // rn/R for a resistor, rn·C·scale for a capacitor
	isCap bool
}

// newNodal compiles a valid stage and model with p = s/scale and
// admittances normalised by rn, as package circuit does.
func newNodal(st circuit.Stage, m circuit.Model, scale, rn float64) *nodal {
	names := []string{circuit.In}
	idx := func(name string) int {
		if name == circuit.Ground {
			return -1
		}
		for i, x := range names {
			if x == name {
				return i
			}
		}
		names = append(names, name)
		return len(names) - 1
	}
	parts := make([]nodalPart, len(st.Parts))
	for i, p := range st.Parts {
		parts[i] = nodalPart{a: idx(p.A), b: idx(p.B), isCap: p.Kind == circuit.Capacitor}
		if parts[i].isCap {
			parts[i].y = rn * p.Value * scale
		} else {
			parts[i].y = rn / p.Value
		}
	}
	type amp struct{ pl, mi, o, on int }
	amps := make([]amp, len(st.OpAmps))
	nFDA := 0
	for i, u := range st.OpAmps {
		amps[i] = amp{idx(u.Plus), idx(u.Minus), idx(u.Out), -1}
		if u.FullyDifferential() {
			amps[i].on = idx(u.OutN)
			nFDA++
		}
	}
	inn := -1
	if st.DiffIn {
		inn = idx(circuit.InN)
	}
	nodes := len(names)
	src := nodes
	// As package circuit compiles it: the op-amps' rows, then a
	// common-mode row per fully differential op-amp, then the drive of
	// InN (DiffIn); the differential output's sense unknown, which
	// leaves det A unchanged, is left out.
	n := nodes + 1 + len(st.OpAmps) + nFDA
	innRow := -1
	if st.DiffIn {
		innRow = n
		n++
	}
	ns := &nodal{n: n, g: make([]float64, n*n), c: make([]float64, n*n), parts: parts}
	for _, p := range parts {
		mat := ns.g
		if p.isCap {
			mat = ns.c
		}
		if p.a >= 0 {
			mat[p.a*n+p.a] += p.y
		}
		if p.b >= 0 {
			mat[p.b*n+p.b] += p.y
		}
		if p.a >= 0 && p.b >= 0 {
			mat[p.a*n+p.b] -= p.y
			mat[p.b*n+p.a] -= p.y
		}
	}
	ns.g[0*n+src] += 1
	ns.g[src*n+0] = 1
	if st.DiffIn {
		ns.g[src*n+0] = 2
		ns.g[inn*n+innRow] += 1
		ns.g[innRow*n+inn] = 1
		ns.g[innRow*n+0] = 1
	}
	cm := nodes + 1 + len(st.OpAmps)
	for i, u := range amps {
		row := nodes + 1 + i
		ns.g[u.o*n+row] += 1
		if u.pl >= 0 {
			ns.g[row*n+u.pl] -= 1
		}
		if u.mi >= 0 {
			ns.g[row*n+u.mi] += 1
		}
		ns.ops = append(ns.ops, opEntry{row, u.o, 1})
		if u.on >= 0 {
			ns.g[u.on*n+cm] += 1
			ns.g[cm*n+u.o] = 1
			ns.g[cm*n+u.on] = 1
			cm++
			ns.ops = append(ns.ops, opEntry{row, u.on, -1})
		}
	}
	if !m.Ideal {
		ns.alpha = math.Pow(10, -m.DCGainDB/20)
		ns.beta = scale / (2 * math.Pi * m.GBWHz)
	}
	return ns
}

// rootDerivatives returns dλ/dln x for every part of the stage at the
// simple root lam (in units of p) of det A, or ok false when A(lam) is
// not singular to within adjointSingularTol or the root is not simple.
func (ns *nodal) rootDerivatives(lam complex128, dst []complex128) (ok bool) {
	n := ns.n
	a := make([]complex128, n*n)
	big := 0.0
	for i := range a {
		a[i] = complex(ns.g[i], 0) + lam*complex(ns.c[i], 0)
	}
	for _, e := range ns.ops {
		a[e.row*n+e.col] += complex(e.sign, 0) * (complex(ns.alpha, 0) + lam*complex(ns.beta, 0))
	}
	for _, x := range a {
		big = math.Max(big, lu.Abs1(x))
	}
	piv := make([]int, n)
	small := lu.FactorGuarded(a, n, piv, big)
	if !(small <= adjointSingularTol*big) {
		return false
	}
	// Inverse iteration from a fixed start with no special direction.
	v := make([]complex128, n)
	w := make([]complex128, n)
	for i := range v {
		v[i] = complex(1+0.37*float64(i%5), 0.61-0.23*float64(i%3))
		w[i] = v[i]
	}
	for range 2 {
		lu.Solve(a, n, piv, v)
		normalise(v)
		lu.SolveTransposed(a, n, piv, w)
		normalise(w)
	}
	// wᵀA'v, A' = C + β·Σ E_u.
	var den complex128
	for i := range n {
		if w[i] == 0 {
			continue
		}
		var s complex128
		for j, cij := range ns.c[i*n : i*n+n] {
			if cij != 0 {
				s += complex(cij, 0) * v[j]
			}
		}
		den += w[i] * s
	}
	for _, e := range ns.ops {
		den += complex(ns.beta*e.sign, 0) * w[e.row] * v[e.col]
	}
	if den == 0 || cmplx.IsNaN(den) || cmplx.IsInf(den) {
		return false
	}
	at := func(x []complex128, k int) complex128 {
		if k < 0 {
			return 0
		}
		return x[k]
	}
	for j, p := range ns.parts {
		t := (at(w, p.a) - at(w, p.b)) * (at(v, p.a) - at(v, p.b))
		if p.isCap {
			dst[j] = -lam * complex(p.y, 0) * t / den
		} else {
			dst[j] = complex(p.y, 0) * t / den
		}
		if cmplx.IsNaN(dst[j]) || cmplx.IsInf(dst[j]) {
			return false
		}
	}
	return true
}

// normalise scales x to a largest |Re| + |Im| of 1.
func normalise(x []complex128) {
	big := 0.0
	for _, v := range x {
		big = math.Max(big, lu.Abs1(v))
	}
	if big == 0 || math.IsInf(big, 0) || math.IsNaN(big) {
		return
	}
	inv := complex(1/big, 0)
	for i := range x {
		x[i] *= inv
	}
}
