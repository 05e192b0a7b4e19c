package verify

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"strconv"
	"sync"
	"sync/atomic"

	"github.com/polewright/polewright/synth/circuit"
)

// maxExpandVars is the largest number of variables (parts plus single-pole
// op-amps) of a stage that is expanded into its multi-affine form; the
// expansion costs up to 2^k pairs of determinants once per run and
// structure of stage (about 20 ms of one core at k = 16, a state-variable
// notch stage with four single-pole op-amps). Larger stages take the
// generic path (see stageModel).
const maxExpandVars = 16

// alwaysExpandVars: a stage of at most this many variables is always
// expanded (a few ms at most). Between it and maxExpandVars a stage is
// expanded when the run has at least 2^k/expandPerTrial trials, where the
// expansion's cost (about 0.2 µs of one core per vertex, most vertices
// being skipped as structurally singular) is below that of the generic
// path (about 100 µs per trial for such a stage): for k = 16, 128 trials.
const (
	alwaysExpandVars = 12
	expandPerTrial   = 512
)

// maxDegree bounds the degree of a stage's polynomials on the fast path
// (capacitors plus single-pole op-amps of one stage).
const maxDegree = maxExpandVars

// errNoExpansion reports that a stage cannot take the fast path.
var errNoExpansion = errors.New("verify: stage not expandable")

// term is one monomial of a multi-affine expansion: coef times the
// product of the normalised admittances of vars (resistors and
// capacitors, by part index), times p^caps, times the product of the
// op-amp factors 1/A(p) of ops.
type term struct {
	coef float64
	vars []int32
	caps int
	ops  []int32
}

// expansion is a polynomial in p, as a list of monomials in the parts.
type expansion []term

// stageModel is the per-trial analysis of one stage.
//
// The fast path rests on the structure of modified nodal analysis. Every
// part x enters the nodal matrix as a rank-one stamp y_x·u·uᵀ (u = e_a −
// e_b) with y_x its normalised admittance (rn/R for a resistor, rn·C·scale·p
// for a capacitor), and every single-pole op-amp as one entry 1/A(p) =
// 1/A0 + p·scale/ωt of its equation's row. A determinant is affine in each
// rank-one term, so det A and the output cofactor det A_out (Cramer's
// rule: V(out) = det A_out/det A, A_out being A with the output column
// replaced by the source vector) are multi-affine polynomials in the k
// variables:
//
//	det = Σ_S d_S · Π_{x∈S} y_x.
//
// Because every stamp and every fixed entry (source, op-amp equations) is
// ±1, d_S is an integer: the expansion is computed once, exactly, from the
// determinants at the 2^k vertices y ∈ {0,1}^k (real LU, rounded to the
// nearest integer, which is checked) and a Möbius transform. A trial then
// costs one product per monomial (a few dozen flops for a Sallen-Key
// stage) instead of a nodal solve. Monomials with d_S = 0 are dropped, so
// structural zeros (a lowpass numerator's p-terms, a highpass numerator's
// constant) are exact.
//
// A stage with more than maxExpandVars variables, one of more than
// alwaysExpandVars in a run too short to repay the expansion, or one whose
// vertex determinants are not integers to rounding, takes the generic
// path: the
// perturbed stage is analysed with [circuit.Stage.TransferFunctionScaled]
// each trial (all its op-amps then share one GBW draw, as the circuit
// package has one model per chain).
type stageModel struct {
	stage        circuit.Stage
	aug          circuit.Stage // stage with the model's parasitic parts after its own (circuit.Stage.WithParasitics)
	scale, rn    float64       // natural scale (rad/s) and resistance of the nominal stage
	nOps         int           // single-pole op-amps (0 for the ideal model)
	sectionOrder int
	num, den     expansion
	numC, denC   compiled // num and den laid out for the trials
	degNum       int
	degDen       int
	generic      bool
	nomRoots     []complex128 // nominal poles in units of scale
	nomF0, nomQ  float64
	cache        expansionCache // see newStageModel; nil for none
	nomOK        bool
	y0           []float64 // nominal normalised admittances (capacitors per unit p)
	isCap        []bool
}

// stageScale is circuit's natural scale of a stage: 1/(R·C) with R and C
// the geometric means of its resistors and capacitors, ωt without
// capacitors (1 rad/s for ideal op-amps), and the resistance rn that
// normalises admittances.
func stageScale(st circuit.Stage, m circuit.Model) (scale, rn float64) {
	var lr, lc float64
	var nr, nc int
	for _, p := range st.Parts {
		switch p.Kind {
		case circuit.Resistor:
			lr += math.Log(p.Value)
			nr++
		case circuit.Capacitor:
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
		scale = 1 / (rn * math.Exp(lc/float64(nc)))
	case !m.Ideal:
		scale = 2 * math.Pi * m.GBWHz
	default:
		scale = 1
	}
	return scale, rn
}

// expandMode says whether a stage is expanded.
type expandMode int

const (
	expandAuto   expandMode = iota // by the number of variables and trials
	expandNever                    // the generic path (tests)
	expandAlways                   // up to maxExpandVars (tests)
)

// newStageModel prepares a valid stage with a valid model for a run of
// the given number of trials.
//
// cache, when not nil, holds the expansions already computed in the run by
// the structure of their stage (see expansionCache); the stage's is looked
// up there before it is computed, and stored there after.
func newStageModel(st circuit.Stage, m circuit.Model, trials int, mode expandMode, cache expansionCache) (*stageModel, error) {
	sm := &stageModel{stage: st, aug: st.WithParasitics(m), cache: cache}
	sm.scale, sm.rn = stageScale(sm.aug, m)
	if !m.Ideal {
		sm.nOps = len(st.OpAmps)
	}
	for _, p := range sm.aug.Parts {
		c := p.Kind == circuit.Capacitor
		sm.isCap = append(sm.isCap, c)
		if c {
			sm.y0 = append(sm.y0, sm.rn*p.Value*sm.scale)
		} else {
			sm.y0 = append(sm.y0, sm.rn/p.Value)
		}
	}
	k := len(sm.aug.Parts) + sm.nOps
	var err error
	switch {
	case mode == expandNever,
		st.Differential(), // the expansion knows single-ended op-amps only
		k > maxExpandVars,
		mode == expandAuto && k > alwaysExpandVars && trials < (1<<k)/expandPerTrial:
		err = errNoExpansion
	default:
		err = sm.expand()
	}
	switch {
	case errors.Is(err, errNoExpansion):
		sm.generic = true
	case err != nil:
		return nil, err
	}
	// The nominal transfer function: from the expansion on the fast path,
	// from the circuit package on the generic one. Its poles (the circuit
	// package's companion-matrix eigenvalues, polished) are the starting
	// points of every trial's root polishing.
	var r circuit.Rational
	if sm.generic {
		if r, err = st.TransferFunctionScaled(m, sm.scale); err != nil {
			return nil, err
		}
	} else {
		var alpha float64
		beta := make([]float64, sm.nOps)
		if sm.nOps > 0 {
			alpha = math.Pow(10, -m.DCGainDB/20)
			for u := range beta {
				beta[u] = sm.scale / (2 * math.Pi * m.GBWHz)
			}
		}
		r = circuit.Rational{
			Num:            make([]float64, sm.degNum+1),
			Den:            make([]float64, sm.degDen+1),
			ScaleRadPerSec: sm.scale,
			SectionOrder:   st.SectionOrderOf(sm.degDen, m),
		}
		evalExpansion(sm.num, r.Num, sm.y0, alpha, beta)
		evalExpansion(sm.den, r.Den, sm.y0, alpha, beta)
	}
	sm.sectionOrder = r.SectionOrder
	for _, p := range r.Poles() {
		sm.nomRoots = append(sm.nomRoots, p/complex(sm.scale, 0))
	}
	sm.nomF0, sm.nomQ, sm.nomOK = r.DominantPair()
	if !sm.generic && len(sm.nomRoots) != sm.degDen {
		return nil, fmt.Errorf("%w: stage %s: %d poles found for a denominator of degree %d", circuit.ErrSingular, st.Topology, len(sm.nomRoots), sm.degDen)
	}
	return sm, nil
}

// expansionCache maps the structure of a stage (structureKey) to its
// expansions. The expansion's integer coefficients depend on the stage's
// structure alone, not on its part values: which nodes each part joins
// and whether it is a capacitor, how each op-amp is wired, which node is
// the output and whether the op-amps are single-pole. A chain of stages
// of one topology (the sections of a high-order filter) therefore
// expands once; the other stages take the same expansion with their own
// admittances.
type expansionCache map[string]*cachedExpansion

// cachedExpansion is what expand leaves in a stageModel, or its error.
type cachedExpansion struct {
	num, den       expansion
	numC, denC     compiled
	degNum, degDen int
	err            error
}

// structureKey encodes the structure of a stage as expand numbers it:
// nodes by order of first appearance (In first, ground −1).
func structureKey(kinds []circuit.PartKind, stamps [][2]int, amps [][3]int, out, nOps int) string {
	b := make([]byte, 0, 8*len(stamps)+8*len(amps)+16)
	b = strconv.AppendInt(b, int64(out), 10)
	b = append(b, '/')
	b = strconv.AppendInt(b, int64(nOps), 10)
	for i, s := range stamps {
		b = append(b, ';')
		b = append(b, kinds[i]...)
		b = append(b, ',')
		b = strconv.AppendInt(b, int64(s[0]), 10)
		b = append(b, ',')
		b = strconv.AppendInt(b, int64(s[1]), 10)
	}
	for _, a := range amps {
		b = append(b, '|')
		for _, v := range a {
			b = strconv.AppendInt(b, int64(v), 10)
			b = append(b, ',')
		}
	}
	return string(b)
}

// expand computes the multi-affine expansions of the output cofactor and
// the determinant, or returns errNoExpansion; with a cache, a stage of a
// structure already expanded takes that expansion.
func (sm *stageModel) expand() (err error) {
	st := sm.aug
	k := len(st.Parts) + sm.nOps
	if k > maxExpandVars {
		return errNoExpansion
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
	if sm.cache != nil {
		kinds := make([]circuit.PartKind, len(st.Parts))
		ks := make([][2]int, len(stamps))
		for i, p := range st.Parts {
			kinds[i] = p.Kind
			ks[i] = [2]int{stamps[i].a, stamps[i].b}
		}
		ka := make([][3]int, len(amps))
		for i, u := range amps {
			ka[i] = [3]int{u.pl, u.mi, u.o}
		}
		key := structureKey(kinds, ks, ka, out, sm.nOps)
		if c, ok := sm.cache[key]; ok {
			sm.num, sm.den, sm.numC, sm.denC = c.num, c.den, c.numC, c.denC
			sm.degNum, sm.degDen = c.degNum, c.degDen
			return c.err
		}
		defer func() {
			sm.cache[key] = &cachedExpansion{sm.num, sm.den, sm.numC, sm.denC, sm.degNum, sm.degDen, err}
		}()
	}
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
	// The determinants are those of M, the system without the input's
	// voltage and the source's current (A's rows and columns other than
	// In and src), m = n − 2 unknowns, with b the input's column of the
	// other rows: the source's row and column each hold a single 1 (V(In)
	// = 1, and the source current in In's row only), so that expanding
	// along them gives det A = −det M and det A_out = det M_b, M_b being M
	// with the output's column replaced by b (the same expansions, the
	// output's column of A_out being the source's unit vector).
	if out <= 0 {
		// The output is the input or ground: nothing to expand.
		return fmt.Errorf("%w: the output is node %q", errNoExpansion, st.Out)
	}
	m := n - 2
	outR := out - 1 // the output's index in M
	// M and b are kept in one buffer, M row-major in its first m² entries
	// and b after them; pos is where A's entry (r, c) goes in it, −1 for
	// an entry of the rows and columns left out.
	pos := func(r, c int) int {
		if r == 0 || r == src || c == src {
			return -1
		}
		rr := r - 1
		if r > src {
			rr--
		}
		if c == 0 {
			return m*m + rr
		}
		cc := c - 1
		if c > src {
			cc--
		}
		return rr*m + cc
	}
	// fixedMB is M and b of the fixed entries; updates[i] what variable i
	// adds when it is 1 (its stamp's ±1 at their places).
	type update struct {
		at    int32
		delta float64
	}
	fixedMB := make([]float64, m*m+m)
	for r := range n {
		for c := range n {
			if v := fixed[r*n+c]; v != 0 {
				if at := pos(r, c); at >= 0 {
					fixedMB[at] += v
				}
			}
		}
	}
	updates := make([][]update, k)
	add := func(i, r, c int, delta float64) {
		if at := pos(r, c); at >= 0 {
			updates[i] = append(updates[i], update{int32(at), delta})
		}
	}
	for i, s := range stamps {
		if s.a >= 0 {
			add(i, s.a, s.a, 1)
		}
		if s.b >= 0 {
			add(i, s.b, s.b, 1)
		}
		if s.a >= 0 && s.b >= 0 {
			add(i, s.a, s.b, -1)
			add(i, s.b, s.a, -1)
		}
	}
	for i := 0; i < sm.nOps; i++ {
		add(len(stamps)+i, nodes+1+i, amps[i].o, 1)
	}
	build := func(mb []float64, mask uint32) {
		copy(mb, fixedMB)
		for i, ups := range updates {
			if mask&(1<<i) == 0 {
				continue
			}
			for _, u := range ups {
				mb[u.at] += u.delta
			}
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
	detD := make([]float64, size)
	detN := make([]float64, size)
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
			mb := make([]float64, m*m+m)
			mr, cin := mb[:m*m:m*m], mb[m*m:]
			x := make([]float64, m)
			piv := make([]int, m)
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
				build(mb, uint32(mask))
				dm := realDet(mr, m, piv)
				dd, ok := integer(-dm)
				if !ok {
					bad.Store(true)
					return
				}
				detD[mask] = dd
				// det A_out = det M_b = det M · x_out with M·x = b by
				// Cramer's rule, from the same factors, when that is an
				// integer to rounding; else (M singular, or too much
				// rounding) M_b's own LU.
				if dd != 0 {
					copy(x, cin)
					realSolve(mr, m, piv, x)
					if dn, ok := integer(dm * x[outR]); ok {
						detN[mask] = dn
						continue
					}
				}
				build(mb, uint32(mask))
				for r := range m {
					mr[r*m+outR] = cin[r]
				}
				dn, ok := integer(realDet(mr, m, piv))
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
		return fmt.Errorf("%w: a vertex determinant is not an integer", errNoExpansion)
	}
	mobius(detD, k)
	mobius(detN, k)
	nParts := len(st.Parts)
	collect := func(d []float64) (expansion, int) {
		var e expansion
		deg := -1
		for mask, c := range d {
			if c == 0 {
				continue
			}
			t := term{coef: c}
			for i := 0; i < k; i++ {
				if mask&(1<<i) == 0 {
					continue
				}
				if i < nParts {
					t.vars = append(t.vars, int32(i))
					if st.Parts[i].Kind == circuit.Capacitor {
						t.caps++
					}
				} else {
					t.ops = append(t.ops, int32(i-nParts))
				}
			}
			deg = max(deg, t.caps+len(t.ops))
			e = append(e, t)
		}
		return e, deg
	}
	sm.den, sm.degDen = collect(detD)
	sm.num, sm.degNum = collect(detN)
	sm.denC, sm.numC = compile(sm.den, nParts), compile(sm.num, nParts)
	if sm.degDen < 0 {
		return fmt.Errorf("%w: stage %s: the nodal determinant is identically zero", circuit.ErrSingular, st.Topology)
	}
	if sm.degNum < 0 {
		sm.degNum = 0 // V(out) ≡ 0
	}
	return nil
}

// mobius turns the values f(T) of a multi-affine function at the vertices
// T ⊆ {0..k−1} into its coefficients, in place: d_S = Σ_{T⊆S} (−1)^|S∖T|
// f(T). Exact for integers below 2^53.
func mobius(f []float64, k int) {
	for i := 0; i < k; i++ {
		bit := 1 << i
		for s := range f {
			if s&bit != 0 {
				f[s] -= f[s^bit]
			}
		}
	}
}

// realDet returns the determinant of the n×n row-major matrix a by LU
// with partial pivoting, which it leaves in a (L below the diagonal, U on
// and above) and piv (the row exchanged with row k at step k), as
// realSolve needs them when the determinant is not zero.
func realDet(a []float64, n int, piv []int) float64 {
	det := 1.0
	for k := 0; k < n; k++ {
		p, big := k, math.Abs(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(a[i*n+k]); v > big {
				p, big = i, v
			}
		}
		piv[k] = p
		if big == 0 {
			return 0
		}
		if p != k {
			rk, rp := a[k*n:k*n+n], a[p*n:p*n+n]
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
			}
			det = -det
		}
		pivot := a[k*n+k]
		det *= pivot
		rk := a[k*n+k+1 : k*n+n]
		for i := k + 1; i < n; i++ {
			ri := a[i*n+k : i*n+n]
			l := ri[0] / pivot
			ri[0] = l
			if l == 0 {
				continue
			}
			ri = ri[1:]
			for j, u := range rk {
				ri[j] -= l * u
			}
		}
	}
	return det
}

// realSolve solves a·x = b in place in b, with a and piv from a realDet
// that returned a non-zero determinant.
func realSolve(a []float64, n int, piv []int, b []float64) {
	for k := 0; k < n; k++ {
		if p := piv[k]; p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
	for i := 1; i < n; i++ {
		s := b[i]
		for j, l := range a[i*n : i*n+i] {
			s -= l * b[j]
		}
		b[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		row := a[i*n : i*n+n]
		for j := i + 1; j < n; j++ {
			s -= row[j] * b[j]
		}
		b[i] = s / row[i]
	}
}

// evalExpansion writes the coefficients (ascending powers of p) of e into
// c (length ≥ deg+1, cleared here), with y the normalised admittances of
// the parts (capacitors without their factor p), alpha = 1/A0 and beta[u]
// = scale/ωt of op-amp u.
func evalExpansion(e expansion, c []float64, y []float64, alpha float64, beta []float64) {
	clear(c)
	for _, t := range e {
		v := t.coef
		for _, i := range t.vars {
			v *= y[i]
		}
		switch len(t.ops) {
		case 0:
			c[t.caps] += v
		case 1:
			c[t.caps] += v * alpha
			c[t.caps+1] += v * beta[t.ops[0]]
		default:
			// Π (alpha + beta_u·p) by repeated multiplication.
			var poly [maxDegree + 2]float64
			poly[0] = v
			d := 0
			for _, u := range t.ops {
				b := beta[u]
				poly[d+1] = poly[d] * b
				for j := d; j > 0; j-- {
					poly[j] = poly[j]*alpha + poly[j-1]*b
				}
				poly[0] *= alpha
				d++
			}
			for j := 0; j <= d; j++ {
				c[t.caps+j] += poly[j]
			}
		}
	}
}
