package noise

import (
	"fmt"
	"github.com/polewright/polewright/synth/internal/lu"
	"math"

	"github.com/polewright/polewright/synth/circuit"
)

// source is one noise source of a stage, as seen from the adjoint
// solution y of Aᵀ·y = e_out: a current source between the unknowns a and
// b (−1 for ground) contributes psd·|y_a − y_b|² to the stage output, a
// voltage source in an op-amp equation (a is the row, b is −1) psd·|y_a|².
type source struct {
	a, b int
	psd  float64 // the source's density squared, times rn² for currents
	who  int     // contributor index
}

// stageSys is the modified nodal analysis of one stage for noise, in the
// layout of package circuit (see the package documentation): unknowns are
// the voltages of the nodes other than ground (In first), the current of
// the input source, and one output current per op-amp; A(s) = G + s·C with
// every admittance multiplied by rn.
type stageSys struct {
	n      int
	g, c   []float64 // n×n row-major
	outCol int
	srcs   []source
	at     []complex128 // Aᵀ(s), then its LU factors
	piv    []int
	y, r   []complex128
}

// newStageSys compiles stage st (validated) with model m. k is the stage
// number (1-based) for the contributors' refs, which it appends to refs
// (index of each contributor is its position there). fourKT is 4kT.
func newStageSys(ch circuit.Chain, k int, on OpAmpNoise, fourKT float64, refs *[]string) *stageSys {
	st := ch.Stages[k-1]
	m := ch.Model
	var lr float64
	var nr int
	for _, p := range st.Parts {
		if p.Kind == circuit.Resistor {
			lr += math.Log(p.Value)
			nr++
		}
	}
	rn := 1.0
	if nr > 0 {
		rn = math.Exp(lr / float64(nr))
	}
	names := []string{circuit.In}
	idx := func(name string) int {
		if name == circuit.Ground {
			return -1
		}
		for i, v := range names {
			if v == name {
				return i
			}
		}
		names = append(names, name)
		return len(names) - 1
	}
	for _, p := range st.Parts {
		idx(p.A)
		idx(p.B)
	}
	for _, u := range st.OpAmps {
		idx(u.Plus)
		idx(u.Minus)
		idx(u.Out)
	}
	nodes := len(names)
	n := nodes + 1 + len(st.OpAmps)
	sys := &stageSys{
		n: n, g: make([]float64, n*n), c: make([]float64, n*n),
		outCol: idx(st.Out),
		at:     make([]complex128, n*n), piv: make([]int, n),
		y: make([]complex128, n), r: make([]complex128, n),
	}
	stamp := func(mat []float64, i, j int, v float64) {
		if i >= 0 {
			mat[i*n+i] += v
		}
		if j >= 0 {
			mat[j*n+j] += v
		}
		if i >= 0 && j >= 0 {
			mat[i*n+j] -= v
			mat[j*n+i] -= v
		}
	}
	for _, p := range st.Parts {
		i, j := idx(p.A), idx(p.B)
		switch p.Kind {
		case circuit.Resistor:
			stamp(sys.g, i, j, rn/p.Value)
			*refs = append(*refs, ch.Ref(k, p.Ref))
			// Thermal noise: a current source of density² 4kT/R across R.
			sys.srcs = append(sys.srcs, source{a: i, b: j, psd: fourKT / p.Value * rn * rn, who: len(*refs) - 1})
		case circuit.Capacitor:
			stamp(sys.c, i, j, rn*p.Value)
		}
	}
	// The input source: its current enters In's balance, and V(In) = 0
	// (an ideal source is a short for noise).
	sys.g[0*n+nodes] += 1
	sys.g[nodes*n+0] = 1
	var invA0, invWt float64
	if !m.Ideal {
		invA0 = math.Pow(10, -m.DCGainDB/20)
		invWt = 1 / (2 * math.Pi * m.GBWHz)
	}
	for q, u := range st.OpAmps {
		row := nodes + 1 + q
		o, pl, mi := idx(u.Out), idx(u.Plus), idx(u.Minus)
		sys.g[o*n+row] += 1
		if pl >= 0 {
			sys.g[row*n+pl] -= 1
		}
		if mi >= 0 {
			sys.g[row*n+mi] += 1
		}
		if !m.Ideal {
			sys.g[row*n+o] += invA0
			sys.c[row*n+o] += invWt
		}
		*refs = append(*refs, ch.Ref(k, u.Ref))
		who := len(*refs) - 1
		// V(out)/A − (V(+) + en) + V(−) = 0: en is the right-hand side of
		// the op-amp's row.
		if on.VoltageVPerRtHz > 0 {
			sys.srcs = append(sys.srcs, source{a: row, b: -1, psd: on.VoltageVPerRtHz * on.VoltageVPerRtHz, who: who})
		}
		// Current noise from each input to ground, uncorrelated.
		if ci := on.CurrentAPerRtHz; ci > 0 {
			for _, node := range []int{pl, mi} {
				if node >= 0 {
					sys.srcs = append(sys.srcs, source{a: node, b: -1, psd: ci * ci * rn * rn, who: who})
				}
			}
		}
	}
	return sys
}

// adjoint solves Aᵀ(jω)·y = e_out into sys.y, with one step of iterative
// refinement, so that the small transfers of a stopband keep their
// relative accuracy (a second step changed nothing measurable against
// ngspice and cost a third of the time).
func (sys *stageSys) adjoint(w float64) error {
	n := sys.n
	jw := complex(0, w)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			// (Aᵀ)_ij = A_ji.
			v := complex(sys.g[j*n+i], 0)
			if c := sys.c[j*n+i]; c != 0 {
				v += jw * complex(c, 0)
			}
			sys.at[i*n+j] = v
		}
	}
	if lu.Factor(sys.at, n, sys.piv) == 0 {
		return fmt.Errorf("%w: the nodal matrix is singular at %v Hz", circuit.ErrSingular, w/(2*math.Pi))
	}
	clear(sys.y)
	sys.y[sys.outCol] = 1
	lu.Solve(sys.at, n, sys.piv, sys.y)
	for range 1 {
		for i := 0; i < n; i++ {
			var acc complex128
			if i == sys.outCol {
				acc = 1
			}
			for j := 0; j < n; j++ {
				v := complex(sys.g[j*n+i], 0)
				if c := sys.c[j*n+i]; c != 0 {
					v += jw * complex(c, 0)
				}
				acc -= v * sys.y[j]
			}
			sys.r[i] = acc
		}
		lu.Solve(sys.at, n, sys.piv, sys.r)
		for i := range sys.r {
			sys.y[i] += sys.r[i]
		}
	}
	return nil
}

// accumulate adds each source's density² at the stage output, times gain
// (the later stages' |H|²), to perWho, and returns their sum.
func (sys *stageSys) accumulate(gain float64, perWho []float64) float64 {
	var total float64
	for _, s := range sys.srcs {
		t := sys.y[s.a]
		if s.b >= 0 {
			t -= sys.y[s.b]
		}
		v := s.psd * (real(t)*real(t) + imag(t)*imag(t)) * gain
		perWho[s.who] += v
		total += v
	}
	return total
}
