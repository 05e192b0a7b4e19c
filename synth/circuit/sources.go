package circuit

import (
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/internal/lu"
)

// Source is a small-signal source inside a stage, for [Stage.SourceTransfers]:
// a current of 1 A from node From into node To (either may be [Ground],
// not both), or, when OpAmp is set, a voltage of 1 V in series with the
// non-inverting input of op-amp OpAmp (1-based, in the order of
// Stage.OpAmps), To and From then unused.
type Source struct {
	To, From string
	OpAmp    int
}

// SourceTransfers are the transfers of a stage's internal sources to its
// output, sharing one denominator: source i reaches V(Out) as
// Num[i](p)/Den(p), p = s/ScaleRadPerSec, in V/A for a current and V/V
// for a voltage.
type SourceTransfers struct {
	// ScaleRadPerSec is the unit of p in rad/s: the stage's natural scale.
	ScaleRadPerSec float64
	// Den is the nodal determinant, ascending powers of p, normalised so
	// that its lowest non-zero coefficient is 1 (as [Rational].Den).
	Den []float64
	// Num holds each source's numerator, ascending powers of p, of the
	// length of Den.
	Num [][]float64
}

// sourceRHS is a source as a right-hand side: +w at unknown a, −w at
// unknown b (−1: none).
type sourceRHS struct {
	a, b int
	w    float64
}

// compileSources checks the stage, the model and the sources and compiles
// the stage (with the model's parasitics) with each source as a
// right-hand side; scale is the system's p unit in rad/s.
func (st Stage) compileSources(m Model, srcs []Source) (*system, []sourceRHS, float64, *nodeTable, error) {
	if err := m.Validate(); err != nil {
		return nil, nil, 0, nil, err
	}
	t, err := st.check()
	if err != nil {
		return nil, nil, 0, nil, err
	}
	nOps := len(st.OpAmps)
	st, t = st.withParasitics(m, t)
	scale, rn := stageScale(st, m)
	sys := compile(st, m, t, scale)
	nodes := len(t.names) - 1
	// Each source as a right-hand side: +w at unknown a, −w at unknown b
	// (−1: none). A current's node balances are multiplied by rn.
	bs := make([]sourceRHS, len(srcs))
	for i, s := range srcs {
		if s.OpAmp != 0 {
			if s.OpAmp < 1 || s.OpAmp > nOps {
				return nil, nil, 0, nil, invalidf("source %d: no op-amp %d", i+1, s.OpAmp)
			}
			bs[i] = sourceRHS{a: nodes + s.OpAmp, b: -1, w: 1}
			continue
		}
		for _, name := range []string{s.To, s.From} {
			if t.index(name) < 0 {
				return nil, nil, 0, nil, invalidf("source %d: no node %q", i+1, name)
			}
		}
		a, b := t.unknown(s.To), t.unknown(s.From)
		if a == b {
			return nil, nil, 0, nil, invalidf("source %d: To and From are both %q", i+1, s.To)
		}
		if a < 0 {
			a, b = b, -1
			bs[i] = sourceRHS{a: a, b: b, w: -rn}
			continue
		}
		bs[i] = sourceRHS{a: a, b: b, w: rn}
	}
	return sys, bs, scale, t, nil
}

// SourceTransfers returns the transfer of each source of srcs to the
// stage output with the op-amp model m, the stage's input driven by an
// ideal source (a short for these sources), as polynomials interpolated
// exactly as [Stage.TransferFunction]'s: at each point of each circle one
// LU of the nodal matrix A(p) gives det A, and one solve of Aᵀ·y = e_out
// gives the transfer of every source at once (y_To − y_From for a
// current, the op-amp equation's y for a voltage, which enters that
// equation V(out)/A(s) − (V(+) + v) + V(−) = 0), so det A·y are the values
// of all the numerators, which are cofactors of A of degree at most that
// of det A. The denominator is the same as [Stage.TransferFunction]'s.
//
// It returns an error wrapping [ErrInvalid] for an invalid stage or model
// or a source naming no node or op-amp of the stage, and one wrapping
// [ErrSingular] when the nodal determinant vanishes identically.
func (st Stage) SourceTransfers(m Model, srcs []Source) (SourceTransfers, error) {
	sys, bs, scale, _, err := st.compileSources(m, srcs)
	if err != nil {
		return SourceTransfers{}, err
	}
	n := sys.n
	at := make([]complex128, n*n)
	y := make([]complex128, n)
	coef := sys.interpolateAll(1+len(srcs), func(p complex128, v []complex128) {
		sys.fill(p)
		for i := range n {
			for j := range n {
				at[i*n+j] = sys.a[j*n+i]
			}
		}
		det := lu.Factor(at, n, sys.piv)
		v[0] = det
		if det != 0 {
			clear(y)
			y[sys.outCol] = 1
			lu.Solve(at, n, sys.piv, y)
			for i, b := range bs {
				t := y[b.a]
				if b.b >= 0 {
					t -= y[b.b]
				}
				v[1+i] = det * t * complex(b.w, 0)
			}
			return
		}
		// Cramer's rule directly: A is exactly singular at this p, and
		// the numerator is det A with the output column replaced by b.
		for i, b := range bs {
			sys.fill(p)
			for r := range n {
				sys.a[r*n+sys.outCol] = 0
			}
			sys.a[b.a*n+sys.outCol] = 1
			if b.b >= 0 {
				sys.a[b.b*n+sys.outCol] = -1
			}
			v[1+i] = lu.Factor(sys.a, n, sys.piv) * complex(b.w, 0)
		}
	})
	den := coef[0]
	lo := slices.IndexFunc(den, func(v float64) bool { return v != 0 })
	if lo < 0 {
		return SourceTransfers{}, fmt.Errorf("%w: the nodal determinant is identically zero", ErrSingular)
	}
	d := den[lo]
	for _, c := range coef {
		for j := range c {
			c[j] /= d
			if math.IsInf(c[j], 0) || math.IsNaN(c[j]) {
				return SourceTransfers{}, fmt.Errorf("%w: the nodal determinant is not finite", ErrSingular)
			}
		}
	}
	return SourceTransfers{ScaleRadPerSec: scale, Den: den, Num: coef[1:]}, nil
}

// AtAxis returns |D(jx)|² and sets dst[i] to |Num[i](jx)|², at p = jx
// (x = ω/ScaleRadPerSec), with len(dst) ≥ len(Num).
func (s SourceTransfers) AtAxis(x float64, dst []float64) float64 {
	for i, c := range s.Num {
		v := axisPoly(c, x)
		dst[i] = real(v)*real(v) + imag(v)*imag(v)
	}
	d := axisPoly(s.Den, x)
	return real(d)*real(d) + imag(d)*imag(d)
}

// DCSourceTransfers returns the transfer of each source of srcs to the
// stage output at DC (s = 0), in V/A for a current and V/V for a voltage,
// from one direct solve of the nodal equations at s = 0 (capacitors open,
// the op-amps at their DC gain) rather than from the interpolated
// polynomials, whose constant terms lose digits when the DC behaviour
// rests on the op-amps' large gain (the integrators of a state-variable
// stage). Sources are as for [Stage.SourceTransfers]. It returns an error
// wrapping [ErrSingular] when the stage has no DC solution (a node
// without a DC path).
func (st Stage) DCSourceTransfers(m Model, srcs []Source) ([]float64, error) {
	_, per, err := st.DCNodeTransfers(m, srcs, []string{st.output()})
	if err != nil {
		return nil, err
	}
	return per[0], nil
}

// DCNodeTransfers is [Stage.DCSourceTransfers] to the voltage of each of
// nodes: for node i, fromIn[i] is V(node)/V(In) at DC and perSource[i][j]
// the transfer of source j, from one factorization of the nodal matrix at
// s = 0 and one transposed solve per node.
func (st Stage) DCNodeTransfers(m Model, srcs []Source, nodes []string) (fromIn []float64, perSource [][]float64, err error) {
	sys, bs, _, t, err := st.compileSources(m, srcs)
	if err != nil {
		return nil, nil, err
	}
	cols := make([]int, len(nodes))
	for i, node := range nodes {
		if !st.hasNode(t, node) {
			return nil, nil, invalidf("no node %q", node)
		}
		cols[i] = sys.col(t, node)
	}
	n := sys.n
	a := make([]complex128, n*n)
	for j, g := range sys.g {
		a[j] = complex(g, 0)
	}
	// Aᵀ·y = e_node: V(node) per unit of each right-hand side is y·b.
	if lu.Factor(a, n, sys.piv) == 0 {
		return nil, nil, fmt.Errorf("%w: the nodal matrix is singular at DC (a node without a DC path)", ErrSingular)
	}
	y := make([]complex128, n)
	for _, c := range cols {
		clear(y)
		y[c] = 1
		lu.SolveTransposed(a, n, sys.piv, y)
		fromIn = append(fromIn, real(y[sys.srcRow]))
		out := make([]float64, len(bs))
		for i, b := range bs {
			v := y[b.a]
			if b.b >= 0 {
				v -= y[b.b]
			}
			out[i] = real(v) * b.w
		}
		perSource = append(perSource, out)
	}
	return fromIn, perSource, nil
}
