package step

import (
	"cmp"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// block is a first- or second-order factor of a stage in its own variable
// σ = s/w: numerator c[0] + c[1]·σ + c[2]·σ² over the monic denominator
// σ + d0 (order 1) or σ² + d1·σ + d0 (order 2).
type block struct {
	order  int
	d0, d1 float64
	c      [3]float64
	zeros  int // zeros assigned so far
	w      float64
}

// mulNum multiplies the block's numerator by f (ascending in σ).
func (b *block) mulNum(f ...float64) {
	var out [3]float64
	for i, a := range b.c {
		if a == 0 {
			continue
		}
		for j, v := range f {
			if i+j < len(out) {
				out[i+j] += a * v
			}
		}
	}
	b.c = out
	b.zeros += len(f) - 1
}

// realised is one stage as blocks followed by a constant gain, with the
// roots it was factored from.
type realised struct {
	blocks []block
	gain   float64
	roots  rooted
}

// rooted is a stage's poles and zeros in its normalised variable x, its
// leading constant K = Num[n]/Den[d] and its scale ws in rad/s.
type rooted struct {
	poles, zeros []complex128
	k, ws        float64
}

// realise factors st (already validated) into blocks; see the package
// documentation. zero reports a stage that is identically 0.
func realise(st Stage) (r realised, zero bool, err error) {
	dn, dd := degree(st.Num), degree(st.Den)
	if dn < 0 {
		return realised{}, true, nil
	}
	rat := st.rational()
	rat.Num, rat.Den = st.Num[:dn+1], st.Den[:dd+1]
	ws := st.ScaleRadPerSec
	rat.ScaleRadPerSec = 1
	xp, xz := rat.Poles(), rat.Zeros()
	if len(xp) != dd || len(xz) != dn {
		return realised{}, false, invalidf("the roots of a stage of degree %d/%d cannot be found", dn, dd)
	}
	r.roots = rooted{poles: xp, zeros: xz, k: st.Num[dn] / st.Den[dd], ws: ws}
	// The roots in rad/s, as circuit.Rational.Poles scales them.
	scaled := func(xs []complex128) []complex128 {
		out := make([]complex128, len(xs))
		for i, x := range xs {
			out[i] = x * complex(ws, 0)
		}
		return out
	}
	poles, zeros := scaled(xp), scaled(xz)
	lowest := func(c []float64) float64 {
		for _, v := range c {
			if v != 0 {
				return v
			}
		}
		return 1
	}
	// N(x) = Num[k]·x^k·∏(1 − x/ζ), D(x) = Den[j]·x^j·∏(1 − x/π).
	r.gain = lowest(rat.Num) / lowest(rat.Den)

	var pairs, reals []complex128
	origin, upper, lower := 0, 0, 0
	for _, p := range poles {
		switch {
		case imag(p) > 0:
			pairs = append(pairs, p)
			upper++
		case imag(p) < 0:
			lower++
		case p == 0:
			origin++
		default:
			reals = append(reals, p)
		}
	}
	var zPairs, zReals []complex128
	zOrigin, zUpper, zLower := 0, 0, 0
	for _, z := range zeros {
		switch {
		case imag(z) > 0:
			zPairs = append(zPairs, z)
			zUpper++
		case imag(z) < 0:
			zLower++
		case z == 0:
			zOrigin++
		default:
			zReals = append(zReals, z)
		}
	}
	if upper != lower || zUpper != zLower {
		return realised{}, false, invalidf("complex roots of a stage are not in conjugate pairs")
	}

	for _, p := range pairs {
		// (1 − σw/p)(1 − σw/p̄) with w = |p|: 1 − 2σ·Re p/|p| + σ².
		w := cmplx.Abs(p)
		r.blocks = append(r.blocks, block{order: 2, d0: 1, d1: -2 * real(p) / w, c: [3]float64{1}, w: w})
	}
	// Complex zero pairs need second-order blocks: pair up real poles,
	// nearest in magnitude first, when the complex pole pairs are too few.
	slices.SortFunc(reals, func(a, b complex128) int { return cmp.Compare(math.Abs(real(a)), math.Abs(real(b))) })
	for len(zPairs) > len(r.blocks) {
		if len(reals) < 2 {
			return realised{}, false, invalidf("a stage has more complex zero pairs than pole pairs can hold")
		}
		best := 0
		for i := 1; i+1 < len(reals); i++ {
			if math.Abs(real(reals[i+1])/real(reals[i])) < math.Abs(real(reals[best+1])/real(reals[best])) {
				best = i
			}
		}
		p1, p2 := real(reals[best]), real(reals[best+1])
		reals = slices.Delete(reals, best, best+2)
		// (1 − σw/p1)(1 − σw/p2) = L·(σ² + d1σ + d0), L = w²/(p1p2) = ±1.
		w := math.Sqrt(math.Abs(p1 * p2))
		lead := w * w / (p1 * p2)
		lead = math.Copysign(1, lead)
		r.blocks = append(r.blocks, block{order: 2, d0: 1 / lead, d1: -w * (1/p1 + 1/p2) / lead, c: [3]float64{1}, w: w})
		r.gain /= lead
	}
	for _, p := range reals {
		// 1 − σw/p with w = |p|: σ + 1 for p < 0, −(σ − 1) for p > 0.
		w := math.Abs(real(p))
		lead := -w / real(p)
		r.blocks = append(r.blocks, block{order: 1, d0: 1 / lead, c: [3]float64{1}, w: w})
		r.gain /= lead
	}
	for range origin {
		// x^−1 = (ws/w)/σ with w = ws: an integrator.
		r.blocks = append(r.blocks, block{order: 1, d0: 0, c: [3]float64{1}, w: ws})
	}

	logDist := func(a, b float64) float64 { return math.Abs(math.Log(a / b)) }
	pick := func(need int, key func(b *block) float64) *block {
		var best *block
		for i := range r.blocks {
			b := &r.blocks[i]
			if b.order-b.zeros >= need && (best == nil || key(b) < key(best)) {
				best = b
			}
		}
		return best
	}
	for _, z := range zPairs {
		a := cmplx.Abs(z)
		b := pick(2, func(b *block) float64 {
			if b.order != 2 {
				return math.Inf(1)
			}
			return logDist(a, b.w)
		})
		if b == nil || b.order != 2 {
			return realised{}, false, invalidf("a stage has more complex zero pairs than pole pairs can hold")
		}
		// (1 − σw/z)(1 − σw/z̄) = 1 − 2σ·w·Re z/|z|² + σ²·w²/|z|².
		q := b.w / a
		b.mulNum(1, -2*q*real(z)/a, q*q)
	}
	for _, z := range zReals {
		a := math.Abs(real(z))
		b := pick(1, func(b *block) float64 { return logDist(a, b.w) })
		if b == nil {
			return realised{}, false, invalidf("a stage has more zeros than poles")
		}
		b.mulNum(1, -b.w/real(z))
	}
	for range zOrigin {
		b := pick(1, func(b *block) float64 { return b.w })
		if b == nil {
			return realised{}, false, invalidf("a stage has more zeros than poles")
		}
		// x = σ·w/ws.
		b.mulNum(0, 1)
		r.gain *= b.w / ws
	}
	return r, false, nil
}

// system is the state-space model dx/dτ = A·x + B·u, y = C·x + D·u of a
// cascade in the normalised time τ = wRef·t.
type system struct {
	n    int
	a    []float64 // n×n, row major
	b, c []float64
	d    float64
	wRef float64
	// sizes are 1 (the input u of the augmented system) then the order of
	// each block, in state order.
	sizes []int
	zero  bool // the cascade is identically 0
	// roots are the roots of each stage, for modesOf.
	roots []rooted
	// rowEnd[r] bounds the non-zero columns of row r of A and of every
	// function of A that keeps its block lower-triangular structure (E of
	// a step): the end of the row's diagonal block.
	rowEnd []int
}

// build validates the stages and chains their blocks into one system.
func build(stages []Stage) (*system, error) {
	rs := make([]realised, 0, len(stages))
	n := 0
	zero := false
	for k, st := range stages {
		if err := st.validate(); err != nil {
			return nil, invalidf("stage %d: %v", k, err)
		}
		r, z, err := realise(st)
		if err != nil {
			return nil, invalidf("stage %d: %v", k, err)
		}
		zero = zero || z
		for _, b := range r.blocks {
			n += b.order
		}
		if n > MaxStates {
			return nil, invalidf("more than %d poles in all", MaxStates)
		}
		rs = append(rs, r)
	}
	if zero {
		return &system{zero: true}, nil
	}
	roots := make([]rooted, len(rs))
	for i, r := range rs {
		roots[i] = r.roots
	}
	logSum, count := 0.0, 0
	for _, r := range rs {
		for _, b := range r.blocks {
			logSum += math.Log(b.w)
			count++
		}
	}
	sys := &system{n: n, a: make([]float64, n*n), b: make([]float64, n), wRef: 1, sizes: []int{1}, roots: roots}
	if count > 0 {
		sys.wRef = math.Exp(logSum / float64(count))
	}
	// in = cIn·x + dIn·u is the signal entering the next block.
	cIn := make([]float64, n)
	dIn := 1.0
	o := 0
	for _, r := range rs {
		for _, b := range r.blocks {
			s := b.w / sys.wRef
			sys.sizes = append(sys.sizes, b.order)
			row := o + b.order - 1 // the row driven by the block's input
			for j := range o {
				sys.a[row*n+j] = s * cIn[j]
			}
			sys.b[row] = s * dIn
			c := b.c
			if b.order == 1 {
				// z' = −d0·z + v;  y = (c0 − c1·d0)·z + c1·v.
				sys.a[o*n+o] = -s * b.d0
				scale(cIn[:o], c[1])
				cIn[o] = c[0] - c[1]*b.d0
				dIn *= c[1]
			} else {
				// z1' = z2, z2' = −d0·z1 − d1·z2 + v;
				// y = (c0 − c2·d0)·z1 + (c1 − c2·d1)·z2 + c2·v.
				sys.a[o*n+o+1] = s
				sys.a[row*n+o] = -s * b.d0
				sys.a[row*n+o+1] = -s * b.d1
				scale(cIn[:o], c[2])
				cIn[o] = c[0] - c[2]*b.d0
				cIn[o+1] = c[1] - c[2]*b.d1
				dIn *= c[2]
			}
			o += b.order
		}
		scale(cIn[:o], r.gain)
		dIn *= r.gain
	}
	sys.c, sys.d = cIn, dIn
	sys.rowEnd = make([]int, n)
	o = 0
	for _, k := range sys.sizes[1:] {
		for r := o; r < o+k; r++ {
			sys.rowEnd[r] = o + k
		}
		o += k
	}
	return sys, nil
}

func scale(v []float64, k float64) {
	for i := range v {
		v[i] *= k
	}
}

// discrete holds E = Φ − I and Γ of exp([[A, B], [0, 0]]·Δ) =
// [[Φ, Γ], [0, 1]] for one step Δ in τ.
type discrete struct {
	delta float64
	e     []float64 // n×n, row major
	gamma []float64
}

// discretise returns the exact zero-order-hold step of sys over Δ (in τ).
// The augmented matrix has the input first, [[0, 0], [B, A]]·Δ, so that it
// is block lower triangular like A.
func (sys *system) discretise(delta float64, dst *discrete) {
	n := sys.n
	m := mat.NewDense(n+1, n+1, nil)
	raw := m.RawMatrix()
	for i := range n {
		row := raw.Data[(i+1)*raw.Stride:]
		row[0] = sys.b[i] * delta
		for j := range n {
			row[j+1] = sys.a[i*n+j] * delta
		}
	}
	var e mat.Dense
	expm1(&e, m, sys.sizes)
	er := e.RawMatrix()
	if dst.e == nil {
		dst.e = make([]float64, n*n)
		dst.gamma = make([]float64, n)
	}
	for i := range n {
		row := er.Data[(i+1)*er.Stride:]
		dst.gamma[i] = row[0]
		copy(dst.e[i*n:(i+1)*n], row[1:n+1])
	}
	dst.delta = delta
}

// double turns the step over Δ into the step over 2Δ: Φ(2Δ) = Φ(Δ)²
// gives E' = 2E + E² and Γ' = Γ + Φ·Γ = 2Γ + E·Γ, the squaring of
// [expm1] (so as accurate as a fresh exponential of the doubled step, at
// the cost of one product).
func (sys *system) double(dst *discrete) {
	n := sys.n
	e := mat.NewDense(n, n, dst.e)
	var sq mat.Dense
	sq.Mul(e, e)
	g := mat.NewVecDense(n, dst.gamma)
	var eg mat.VecDense
	eg.MulVec(e, g)
	sr := sq.RawMatrix()
	for i := range n {
		row := dst.e[i*n : (i+1)*n]
		for j := range row {
			row[j] = 2*row[j] + sr.Data[i*sr.Stride+j]
		}
		dst.gamma[i] = 2*dst.gamma[i] + eg.AtVec(i)
	}
	dst.delta *= 2
}

// dot returns Σ a[j]·b[j] over the indices of a (len(b) ≥ len(a)), in
// four partial sums, which breaks the chain of dependent additions of a
// single sum (about three times faster for the state update).
func dot(a, b []float64) float64 {
	b = b[:len(a)]
	var s0, s1, s2, s3 float64
	j := 0
	for ; j+4 <= len(a); j += 4 {
		s0 += a[j] * b[j]
		s1 += a[j+1] * b[j+1]
		s2 += a[j+2] * b[j+2]
		s3 += a[j+3] * b[j+3]
	}
	for ; j < len(a); j++ {
		s0 += a[j] * b[j]
	}
	return (s0 + s1) + (s2 + s3)
}

// cachedSteps is the number of distinct steps a [stepCache] keeps.
const cachedSteps = 8

// stepCache holds the discretisations of the last few distinct steps of
// a system, so that the simulations of one [Measure] (its grid and the
// refinements of its intervals, which share their sub-steps) compute
// each matrix exponential once.
type stepCache struct {
	sys   *system
	steps []*discrete // the most recent last
}

// get returns the step over delta (in τ): a cached step within tol of it
// (steps that differ by the rounding of the times count as equal), one
// derived from a cached step of half delta by one squaring, or a fresh
// exponential.
func (c *stepCache) get(delta, tol float64) *discrete {
	for _, d := range c.steps {
		if math.Abs(delta-d.delta) <= tol {
			return d
		}
	}
	var d *discrete
	for i := len(c.steps) - 1; i >= 0; i-- {
		if h := c.steps[i]; math.Abs(delta-2*h.delta) <= tol {
			d = &discrete{delta: h.delta, e: slices.Clone(h.e), gamma: slices.Clone(h.gamma)}
			c.sys.double(d)
			break
		}
	}
	if d == nil {
		d = &discrete{}
		c.sys.discretise(delta, d)
	}
	if len(c.steps) == cachedSteps {
		c.steps = slices.Delete(c.steps, 0, 1)
	}
	c.steps = append(c.steps, d)
	return d
}

// simulate writes the step response at tS (validated) into y.
func (sys *system) simulate(y, tS []float64) {
	sys.advance(make([]float64, sys.n), 0, tS, y, nil, &stepCache{sys: sys})
}

// advance steps the state x (overwritten) from the normalised time prev
// through the times tS in seconds (≥ prev/wRef, non-decreasing), writes
// the response at each into y and, when keep is not nil, the state at
// tS[i] into keep[i·n:(i+1)·n].
func (sys *system) advance(x []float64, prev float64, tS, y, keep []float64, cache *stepCache) {
	n := sys.n
	if n == 0 {
		for i := range y {
			y[i] = sys.d
		}
		return
	}
	next := make([]float64, n)
	for i, t := range tS {
		tau := t * sys.wRef
		if delta := tau - prev; delta > 0 {
			step := cache.get(delta, 4*0x1p-52*tau)
			// x ← x + (E·x + Γ): the increment keeps full precision. E is
			// block lower triangular: the columns past a row's diagonal
			// block are zero.
			for r := range n {
				end := sys.rowEnd[r]
				next[r] = x[r] + (step.gamma[r] + dot(step.e[r*n:r*n+end], x))
			}
			copy(x, next)
		}
		prev = tau
		v := sys.d
		for j, cj := range sys.c {
			v += cj * x[j]
		}
		y[i] = v
		if keep != nil {
			copy(keep[i*n:(i+1)*n], x)
		}
	}
}
