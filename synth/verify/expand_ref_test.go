package verify

import (
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

	"github.com/polewright/polewright/synth/circuit"
)

// fullVertexExpansion is the expansion as it was computed before the
// source's row and column were eliminated (expand.go: the determinants of
// M and M_b): det A and det A_out of the whole nodal system (n unknowns)
// at every vertex, A_out with the output's column replaced by the
// source's unit vector, then the Möbius transform. It is the reference of
// TestExpansionMatchesFullSystem: the coefficients, indexed by the mask of
// their variables, must come out the same, exactly (they are integers).
func fullVertexExpansion(sm *stageModel) (detD, detN []float64, err error) {
	st := sm.aug
	k := len(st.Parts) + sm.nOps
	if k > maxExpandVars {
		return nil, nil, errNoExpansion
	}
	// Unknowns: node voltages (In = 0, then the other non-ground nodes in
	// order of appearance), the source current, one current per op-amp.
	names := []string{circuit.In}
	idx := func(n string) int {
		if n == circuit.Ground {
			return -1
		}
		for i, m := range names {
			if m == n {
				return i
			}
		}
		names = append(names, n)
		return len(names) - 1
	}
	type stamp struct{ a, b int }
	stamps := make([]stamp, len(st.Parts))
	for i, p := range st.Parts {
		stamps[i] = stamp{idx(p.A), idx(p.B)}
	}
	type amp struct{ pl, mi, o int }
	amps := make([]amp, len(st.OpAmps))
	for i, u := range st.OpAmps {
		amps[i] = amp{idx(u.Plus), idx(u.Minus), idx(u.Out)}
	}
	out := idx(st.Out)
	nodes := len(names)
	src := nodes
	n := nodes + 1 + len(st.OpAmps)

	fixed := make([]float64, n*n)
	fixed[0*n+src] += 1
	fixed[src*n+0] = 1
	for i, u := range amps {
		row := nodes + 1 + i
		fixed[u.o*n+row] += 1
		if u.pl >= 0 {
			fixed[row*n+u.pl] -= 1
		}
		if u.mi >= 0 {
			fixed[row*n+u.mi] += 1
		}
	}
	build := func(a []float64, mask uint32, numerator bool) {
		copy(a, fixed)
		for i, s := range stamps {
			if mask&(1<<i) == 0 {
				continue
			}
			if s.a >= 0 {
				a[s.a*n+s.a]++
			}
			if s.b >= 0 {
				a[s.b*n+s.b]++
			}
			if s.a >= 0 && s.b >= 0 {
				a[s.a*n+s.b]--
				a[s.b*n+s.a]--
			}
		}
		for i := 0; i < sm.nOps; i++ {
			if mask&(1<<(len(stamps)+i)) != 0 {
				row := nodes + 1 + i
				a[row*n+amps[i].o]++
			}
		}
		if numerator {
			for r := 0; r < n; r++ {
				a[r*n+out] = 0
			}
			a[src*n+out] = 1
		}
	}
	// A node that is neither the input (whose row holds the source
	// current) nor an op-amp output (whose row holds the op-amp's output
	// current) has a zero row in both matrices at every vertex that
	// includes none of its parts: both determinants vanish there.
	var needs []uint32
	for node := 1; node < nodes; node++ {
		isOut := false
		for _, u := range amps {
			isOut = isOut || u.o == node
		}
		if isOut {
			continue
		}
		var touch uint32
		for i, s := range stamps {
			if s.a == node || s.b == node {
				touch |= 1 << i
			}
		}
		needs = append(needs, touch)
	}
	size := 1 << k
	detD = make([]float64, size)
	detN = make([]float64, size)
	// The vertices are independent: large expansions are split over the
	// cores (each determinant is an exact integer, so the split does not
	// change the result).
	chunks := 1
	if size >= 4096 {
		chunks = min(runtime.GOMAXPROCS(0), size/1024)
	}
	var bad atomic.Bool
	var wg sync.WaitGroup
	for c := range chunks {
		wg.Add(1)
		go func() {
			defer wg.Done()
			a := make([]float64, n*n)
			x := make([]float64, n)
			piv := make([]int, n)
			integer := func(d float64) (float64, bool) {
				r := math.Round(d)
				return r, math.Abs(d-r) <= 1e-6*math.Max(1, math.Abs(r)) && math.Abs(r) <= 1<<40
			}
		vertices:
			for mask := c * size / chunks; mask < (c+1)*size/chunks && !bad.Load(); mask++ {
				for _, t := range needs {
					if uint32(mask)&t == 0 {
						continue vertices // detD, detN stay 0
					}
				}
				build(a, uint32(mask), false)
				dd, ok := integer(realDet(a, n, piv))
				if !ok {
					bad.Store(true)
					return
				}
				detD[mask] = dd
				// det A_out = det A · x_out by Cramer's rule, from the same
				// factors, when that is an integer to rounding; else (A
				// singular, or too much rounding) its own LU.
				if dd != 0 {
					clear(x)
					x[src] = 1
					realSolve(a, n, piv, x)
					if dn, ok := integer(dd * x[out]); ok {
						detN[mask] = dn
						continue
					}
				}
				build(a, uint32(mask), true)
				dn, ok := integer(realDet(a, n, piv))
				if !ok {
					bad.Store(true)
					return
				}
				detN[mask] = dn
			}
		}()
	}
	wg.Wait()
	if bad.Load() {
		return nil, nil, fmt.Errorf("%w: a vertex determinant is not an integer", errNoExpansion)
	}
	mobius(detD, k)
	mobius(detN, k)
	return detD, detN, nil
}
