package circuit

import (
	"fmt"
	"github.com/polewright/polewright/synth/internal/lu"
	"math"
	"math/cmplx"
)

// system is the modified nodal analysis of one stage, compiled to index
// form: A(p)·x = b with A(p) = G + p·C, p = s/scale, b the unit vector of
// the source equation.
//
// The unknowns are the voltages of the stage's nodes other than ground
// (the input first), then the current of the 1 V input source, then one
// output current per op-amp. Rows are the node current balances, the
// source equation V(in) = 1, and one equation per op-amp:
//
//	V(out)/A(s) − V(+) + V(−) = 0,  1/A(s) = 1/A0 + s/ωt,
//
// which is the single-pole VCVS V(out) = A(s)·(V(+) − V(−)), and for the
// ideal model (1/A = 0) the nullor's V(+) = V(−) with a free output
// current. Every admittance is multiplied by rn (a typical resistance of
// the stage), and so the current unknowns stand for rn times the
// currents, so that entries are of order one near p = 1; this changes
// neither the voltages nor the degree of any determinant.
type system struct {
	n      int
	g, c   []float64 // n×n row-major
	srcRow int       // the source equation, where b is 1
	outCol int       // the unknown V(Out), or vd of a differential stage
	sense  int       // the unknown vd = V(Out) − V(OutN), or −1
	deg    int       // degree bound of det A(p): capacitors + single-pole op-amps
	scale  float64   // rad/s per unit of p
	a      []complex128
	piv    []int
	x, r   []complex128
}

// stageScale returns the stage's natural scale in rad/s, 1/(R·C) with R
// and C the geometric means of its resistors and capacitors, and the
// resistance rn the admittances are normalised by. Without capacitors the
// scale is the op-amp's ωt = 2π·GBW (or 1 rad/s for ideal op-amps).
func stageScale(st Stage, m Model) (scale, rn float64) {
	var lr, lc float64
	var nr, nc int
	for _, p := range st.Parts {
		switch p.Kind {
		case Resistor:
			lr += math.Log(p.Value)
			nr++
		case Capacitor:
			lc += math.Log(p.Value)
			nc++
		}
	}
	rn = 1
	if nr > 0 {
		rn = math.Exp(lr / float64(nr))
	}
	switch {
	case nc > 0:
		cn := math.Exp(lc / float64(nc))
		scale = 1 / (rn * cn)
	case !m.Ideal:
		scale = 2 * math.Pi * m.GBWHz
	default:
		scale = 1
	}
	return scale, rn
}

// compile builds the nodal system of a valid stage and model, whose node
// table (from Stage.check) is t, with p measured in units of scale rad/s
// (finite, > 0).
//
// A fully differential amplifier (OpAmp.OutN set) has its differential
// equation in the op-amp rows, V(Out) − V(OutN) over A(s) as above, and
// a second row (V(Out) + V(OutN) = 0: the output common mode at the
// reference) after all op-amp rows, whose unknown is the current into
// OutN. A stage with DiffIn drives In at ½ (its source row is
// 2·V(In) = 1) and InN at −V(In) (one more row and current unknown). A
// differential stage (Stage.OutN set) has a last unknown vd with the row
// vd − V(Out) + V(OutN) = 0, which no other row touches: its column holds
// a single 1, so det A is unchanged, and vd is the stage's output.
func compile(st Stage, m Model, t *nodeTable, scale float64) *system {
	_, rn := stageScale(st, m)
	idx := t.unknown
	nodes := len(t.names) - 1
	nFDA := 0
	for _, u := range st.OpAmps {
		if u.FullyDifferential() {
			nFDA++
		}
	}
	n := nodes + 1 + len(st.OpAmps) + nFDA
	innRow, sense := -1, -1
	if st.DiffIn {
		innRow = n
		n++
	}
	if st.Differential() {
		sense = n
		n++
	}
	// One backing array for the real matrices and one for the complex
	// scratch: fewer allocations per compile.
	real2 := make([]float64, 2*n*n)
	cplx := make([]complex128, n*n+2*n)
	sys := &system{
		n:      n,
		g:      real2[: n*n : n*n],
		c:      real2[n*n:],
		srcRow: nodes,
		outCol: idx(st.Out),
		sense:  sense,
		scale:  scale,
		a:      cplx[: n*n : n*n],
		piv:    make([]int, n),
		x:      cplx[n*n : n*n+n : n*n+n],
		r:      cplx[n*n+n:],
	}
	for _, p := range st.Parts {
		sys.stampPart(p, t, rn, scale)
		if p.Kind == Capacitor {
			sys.deg++
		}
	}
	// Source: current into In, and V(In) = 1 (½ with DiffIn).
	sys.g[0*n+nodes] += 1
	sys.g[nodes*n+0] = 1
	if st.DiffIn {
		sys.g[nodes*n+0] = 2
		inn := idx(InN)
		sys.g[inn*n+innRow] += 1 // the drive's current into InN
		sys.g[innRow*n+inn] = 1  // V(InN) + V(In) = 0
		sys.g[innRow*n+0] = 1
	}
	var invA0, invWt float64
	if !m.Ideal {
		invA0 = 1 / m.a0()
		invWt = 1 / (2 * math.Pi * m.GBWHz)
	}
	// The output resistance, eliminated (see withParasitics): the
	// amplifier's internal voltage is V(Out) + ρ·x with x the output
	// current unknown, which is rn times the current from Out into the
	// amplifier (it enters Out's balance with +1): ρ = −Ro/rn.
	rho := -m.OutputResistanceOhm / rn
	cm := nodes + 1 + len(st.OpAmps)
	for k, u := range st.OpAmps {
		row := nodes + 1 + k
		o := idx(u.Out)
		sys.g[o*n+row] += 1 // output current into Out
		if pl := idx(u.Plus); pl >= 0 {
			sys.g[row*n+pl] -= 1
		}
		if mi := idx(u.Minus); mi >= 0 {
			sys.g[row*n+mi] += 1
		}
		on, cmCol := -1, -1
		if u.FullyDifferential() {
			on, cmCol = idx(u.OutN), cm
			sys.g[on*n+cm] += 1 // output current into OutN
			sys.g[cm*n+o] = 1   // V(Out) + V(OutN) = 0 at the internal nodes
			sys.g[cm*n+on] = 1
			sys.g[cm*n+row] += rho
			sys.g[cm*n+cm] += rho
			cm++
		}
		if !m.Ideal {
			sys.g[row*n+o] += invA0
			sys.c[row*n+o] += invWt * scale
			sys.g[row*n+row] += rho * invA0
			sys.c[row*n+row] += rho * invWt * scale
			if on >= 0 {
				sys.g[row*n+on] -= invA0
				sys.c[row*n+on] -= invWt * scale
				sys.g[row*n+cmCol] -= rho * invA0
				sys.c[row*n+cmCol] -= rho * invWt * scale
			}
			sys.deg++
		}
	}
	if sense >= 0 {
		sys.g[sense*n+sense] = 1
		sys.g[sense*n+idx(st.Out)] -= 1
		sys.g[sense*n+idx(st.OutN)] += 1
		sys.outCol = sense
	}
	return sys
}

// col returns the unknown of a node, or of [DiffOut] (the stage's
// differential output), or −1 (ground, or DiffOut in a stage that is not
// differential).
func (sys *system) col(t *nodeTable, name string) int {
	if name == DiffOut {
		return sys.sense
	}
	return t.unknown(name)
}

// unknown returns the unknown number of a node: In is 0, Ground (−1) is
// not an unknown, the others follow in the table's order.
func (t *nodeTable) unknown(name string) int {
	switch i := t.index(name); i {
	case 0:
		return 0
	case 1:
		return -1
	default:
		return i - 1
	}
}

// stampPart adds the rank-one stamp of a resistor's or capacitor's
// admittance, normalised by rn (a capacitor's per unit p at scale rad/s),
// to sys.g or sys.c.
func (sys *system) stampPart(p Part, t *nodeTable, rn, scale float64) {
	n := sys.n
	i, j, y, isCap := partStamp(p, t, rn, scale)
	mat := sys.g
	if isCap {
		mat = sys.c
	}
	if i >= 0 {
		mat[i*n+i] += y
	}
	if j >= 0 {
		mat[j*n+j] += y
	}
	if i >= 0 && j >= 0 {
		mat[i*n+j] -= y
		mat[j*n+i] -= y
	}
}

// partStamp returns a part's stamp y·u·uᵀ, u = e_i − e_j (an index −1,
// ground, drops out): the unknowns of its nodes and its admittance
// normalised by rn, per unit p at scale rad/s for a capacitor (isCap),
// whose stamp goes into C rather than G.
func partStamp(p Part, t *nodeTable, rn, scale float64) (i, j int, y float64, isCap bool) {
	i, j = t.unknown(p.A), t.unknown(p.B)
	if p.Kind == Capacitor {
		return i, j, rn * p.Value * scale, true
	}
	return i, j, rn / p.Value, false
}

// fill sets sys.a to A(p).
func (sys *system) fill(p complex128) {
	for j, g := range sys.g {
		v := complex(g, 0)
		if c := sys.c[j]; c != 0 {
			v += p * complex(c, 0)
		}
		sys.a[j] = v
	}
}

// solve returns V(Out) at p by LU with partial pivoting and two steps of
// iterative refinement, or ErrSingular.
func (sys *system) solve(p complex128) (complex128, error) {
	sys.fill(p)
	if lu.Factor(sys.a, sys.n, sys.piv) == 0 {
		return 0, fmt.Errorf("%w: nodal matrix is singular at s = %v rad/s", ErrSingular, p*complex(sys.scale, 0))
	}
	clear(sys.x)
	sys.x[sys.srcRow] = 1
	lu.Solve(sys.a, sys.n, sys.piv, sys.x)
	// Fixed-precision iterative refinement: the residual b − A·x, solved
	// with the same factors, corrects x. Two steps make the solution
	// componentwise accurate, which matters deep in a stopband, where
	// V(Out) is many orders below the other unknowns.
	n := sys.n
	r := sys.r
	for range 2 {
		for i := 0; i < n; i++ {
			var acc complex128
			if i == sys.srcRow {
				acc = 1
			}
			for j := i * n; j < i*n+n; j++ {
				v := complex(sys.g[j], 0)
				if c := sys.c[j]; c != 0 {
					v += p * complex(c, 0)
				}
				acc -= v * sys.x[j-i*n]
			}
			r[i] = acc
		}
		lu.Solve(sys.a, n, sys.piv, r)
		for i := range r {
			sys.x[i] += r[i]
		}
	}
	return sys.x[sys.outCol], nil
}

// detNum returns det A(p) and the numerator cofactor det A_out(p) (A with
// the output column replaced by b), so that V(Out) = num/det. Both are
// polynomials in p of degree at most sys.deg.
func (sys *system) detNum(p complex128) (det, num complex128) {
	sys.fill(p)
	det = lu.Factor(sys.a, sys.n, sys.piv)
	if det != 0 {
		clear(sys.x)
		sys.x[sys.srcRow] = 1
		lu.Solve(sys.a, sys.n, sys.piv, sys.x)
		return det, det * sys.x[sys.outCol]
	}
	// Cramer's rule directly: A is exactly singular at this p.
	sys.fill(p)
	n := sys.n
	for i := 0; i < n; i++ {
		sys.a[i*n+sys.outCol] = 0
	}
	sys.a[sys.srcRow*n+sys.outCol] = 1
	return 0, lu.Factor(sys.a, n, sys.piv)
}

// SolveAt returns the stage's voltage transfer V(Out)/V(In) at the complex
// frequency s (rad/s) with the op-amp model m, by a direct modified nodal
// analysis at that one frequency (see the package documentation). It is
// the reference that [Stage.TransferFunction] is checked against; for
// sweeps use the rational form. It returns an error wrapping [ErrInvalid]
// for an invalid stage or model or a non-finite s, and one wrapping
// [ErrSingular] when the nodal matrix is singular at s.
func (st Stage) SolveAt(m Model, s complex128) (complex128, error) {
	if cmplx.IsNaN(s) || cmplx.IsInf(s) {
		return 0, invalidf("s %v is not finite", s)
	}
	if err := m.Validate(); err != nil {
		return 0, err
	}
	t, err := st.check()
	if err != nil {
		return 0, err
	}
	st, t = st.withParasitics(m, t)
	scale, _ := stageScale(st, m)
	return compile(st, m, t, scale).solve(s / complex(scale, 0))
}
