package circuit

import (
	"cmp"
	"math"
	"math/cmplx"
	"slices"
	"sync/atomic"

	"gonum.org/v1/gonum/mat"
)

// Rational is a transfer function H(s) = N(p)/D(p) in the normalised
// variable p = s/ScaleRadPerSec, with real coefficients in ascending
// powers of p. [Stage.TransferFunction] returns it with D's lowest
// non-zero coefficient equal to 1 and no trailing zero coefficients.
type Rational struct {
	// Num and Den are the numerator and denominator coefficients, Num[i]
	// and Den[i] multiplying p^i.
	Num, Den []float64
	// ScaleRadPerSec is the unit of p, in rad/s.
	ScaleRadPerSec float64
	// SectionOrder is the number of poles that belong to the filter
	// section itself rather than to the op-amps: [Stage.TransferFunction]
	// sets it to the degree of Den less one per single-pole op-amp (each
	// adds one pole), never below 0. [Rational.DominantPair] uses it; set
	// it to the degree of Den for a Rational built by hand.
	SectionOrder int
}

// At returns H(s) at the complex frequency s in rad/s (s = j2πf on the
// frequency axis).
func (r Rational) At(s complex128) complex128 {
	p := s / complex(r.ScaleRadPerSec, 0)
	return horner(r.Num, p) / horner(r.Den, p)
}

// AtHz returns H(j2πf) at the frequency fHz.
func (r Rational) AtHz(fHz float64) complex128 {
	n, d := r.axis(2 * math.Pi * fHz / r.ScaleRadPerSec)
	return div(n, d)
}

// horner evaluates the real polynomial c (ascending) at p.
func horner(c []float64, p complex128) complex128 {
	var v complex128
	for i := len(c) - 1; i >= 0; i-- {
		v = v*p + complex(c[i], 0)
	}
	return v
}

// axisPoly evaluates the real polynomial c (ascending) at p = jx in real
// arithmetic: the even powers give the real part, Σ c_2m·(−x²)^m, and the
// odd ones the imaginary part, x·Σ c_2m+1·(−x²)^m.
func axisPoly(c []float64, x float64) complex128 {
	u := -x * x
	n := len(c)
	if n == 0 {
		return 0
	}
	top := (n - 1) &^ 1
	var re, im float64
	for i := top; i >= 0; i -= 2 {
		re = re*u + c[i]
	}
	for i := top + 1; i > 0; i -= 2 {
		if i < n {
			im = im*u + c[i]
		}
	}
	return complex(re, im*x)
}

// evenOdd splits c (ascending) into its even and odd powers' coefficients.
func evenOdd(c, even, odd []float64) ([]float64, []float64) {
	for i, v := range c {
		if i%2 == 0 {
			even = append(even, v)
		} else {
			odd = append(odd, v)
		}
	}
	return even, odd
}

// hornerU evaluates Σ c_m·u^m.
func hornerU(c []float64, u float64) float64 {
	var v float64
	for j := len(c) - 1; j >= 0; j-- {
		v = v*u + c[j]
	}
	return v
}

// evenOddPoly is a real polynomial split into its even and odd powers'
// coefficients, for evaluation on the jω axis.
type evenOddPoly struct{ even, odd []float64 }

// newEvenOddPoly splits c (ascending).
func newEvenOddPoly(c []float64) evenOddPoly {
	var p evenOddPoly
	p.even, p.odd = evenOdd(c, make([]float64, 0, (len(c)+1)/2), make([]float64, 0, len(c)/2))
	return p
}

// at returns the polynomial at p = jx, with u = −x².
func (p evenOddPoly) at(x, u float64) complex128 {
	return complex(hornerU(p.even, u), hornerU(p.odd, u)*x)
}

// axis returns N(jx) and D(jx).
func (r Rational) axis(x float64) (complex128, complex128) {
	return axisPoly(r.Num, x), axisPoly(r.Den, x)
}

// div returns a/b: directly as a·conj(b)/|b|² while |b|² is safely in
// range, else by Smith's algorithm, which neither overflows nor underflows
// in the intermediate products.
func div(a, b complex128) complex128 {
	ar, ai, br, bi := real(a), imag(a), real(b), imag(b)
	if d := br*br + bi*bi; d > 1e-280 && d < 1e280 {
		inv := 1 / d
		return complex((ar*br+ai*bi)*inv, (ai*br-ar*bi)*inv)
	}
	if math.Abs(br) >= math.Abs(bi) {
		if br == 0 {
			return a / b // both parts zero: let Go produce Inf/NaN
		}
		t := bi / br
		d := br + bi*t
		return complex((ar+ai*t)/d, (ai-ar*t)/d)
	}
	t := br / bi
	d := br*t + bi
	return complex((ar*t+ai)/d, (ai*t-ar)/d)
}

// Poles returns the roots of the denominator in rad/s: real poles and
// conjugate pairs (the one with positive imaginary part first), in
// ascending magnitude. See [Rational.Zeros] for how they are found.
func (r Rational) Poles() []complex128 { return scaledRoots(r.Den, r.ScaleRadPerSec) }

// Zeros returns the roots of the numerator in rad/s, ordered as
// [Rational.Poles]. Zero low-order coefficients (Num[0], Num[1], ...) give
// exact zeros at s = 0; the rest are the eigenvalues of the companion matrix (gonum's mat.Eigen,
// which balances it first), each polished by Newton's method on the
// polynomial, with conjugate pairs kept exactly conjugate.
func (r Rational) Zeros() []complex128 { return scaledRoots(r.Num, r.ScaleRadPerSec) }

// DominantPair returns the natural frequency and quality factor of the
// section's own poles, as opposed to the far poles the op-amps add:
//
//   - For a second- or higher-order section (SectionOrder ≥ 2), the
//     complex pair nearest the jω axis relative to its magnitude, i.e.
//     the smallest |Re p|/|p|, which is the pair of largest Q: f0Hz =
//     |p|/2π and q = |p|/(−2·Re p). If every pole is real (an overdamped
//     pair, Q < 0.5, as rounding can make of a Q ≈ 0.5 design), the two
//     real poles nearest the origin p1, p2 stand for the pair: f0Hz =
//     √(p1·p2)/2π and q = √(p1·p2)/−(p1 + p2), the Q of their quadratic.
//   - For a first-order section (SectionOrder 1), the real pole nearest
//     the origin (all real poles are equally near the axis relative to
//     their magnitude), with q = 0 as for a first-order section in
//     package section.
//
// q is negative for poles in the right half plane. Poles at s = 0 are
// skipped. ok is false when SectionOrder is 0 (a gain stage) or no pole
// qualifies. A stage whose op-amp poles form a pair of higher Q than its
// own pair (possible with several slow op-amps) reports that pair instead.
func (r Rational) DominantPair() (f0Hz, q float64, ok bool) {
	if r.SectionOrder < 1 {
		return 0, 0, false
	}
	var pair complex128
	var reals []float64
	bestKey := math.Inf(1)
	for _, p := range r.Poles() {
		mag := cmplx.Abs(p)
		switch {
		case mag == 0 || imag(p) < 0:
		case imag(p) == 0:
			reals = append(reals, real(p)) // ascending magnitude
		case math.Abs(real(p))/mag < bestKey:
			pair, bestKey = p, math.Abs(real(p))/mag
		}
	}
	const toHz = 1 / (2 * math.Pi)
	pairOK := !math.IsInf(bestKey, 1)
	switch {
	case r.SectionOrder == 1 && len(reals) > 0:
		return math.Abs(reals[0]) * toHz, 0, true
	case pairOK:
		mag := cmplx.Abs(pair)
		return mag * toHz, mag / (-2 * real(pair)), true
	case len(reals) >= 2:
		w0 := math.Sqrt(reals[0] * reals[1])
		return w0 * toHz, w0 / -(reals[0] + reals[1]), true
	case len(reals) == 1:
		return math.Abs(reals[0]) * toHz, 0, true
	}
	return 0, 0, false
}

// scaledRoots returns the roots of c (ascending powers of p) times scale.
func scaledRoots(c []float64, scale float64) []complex128 {
	roots := polyRoots(c)
	for i := range roots {
		roots[i] *= complex(scale, 0)
	}
	return roots
}

// polyRoots returns the roots of the real polynomial c (ascending powers);
// trailing zero coefficients are ignored.
func polyRoots(c []float64) []complex128 {
	n := len(c)
	for n > 0 && c[n-1] == 0 {
		n--
	}
	c = c[:n]
	var roots []complex128
	for len(c) > 0 && c[0] == 0 {
		roots = append(roots, 0)
		c = c[1:]
	}
	switch deg := len(c) - 1; {
	case deg < 1:
	case deg == 1:
		roots = append(roots, complex(-c[0]/c[1], 0))
	case deg == 2:
		roots = append(roots, quadRoots(c[2], c[1], c[0])...)
	default:
		roots = append(roots, cachedCompanionRoots(c)...)
	}
	sortRoots(roots)
	return roots
}

// rootCache remembers the companion roots of the last polynomials seen,
// direct-mapped by a hash of their coefficients: a design asks for the
// roots of the same polynomial several times (a stage's poles for its
// figures, its step response, its swing nodes; a third of the calls in an
// elliptic-8 design), each an eigenvalue problem. Entries are immutable
// and swapped atomically, so the cache is safe for concurrent designs; a
// hit is the same computation's result, bit for bit.
var rootCache [256]atomic.Pointer[rootEntry]

type rootEntry struct {
	c     []float64
	roots []complex128
}

// sameBits reports whether a and b hold the same float64 values bit for
// bit (−0 is not 0 here).
func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// ResetRootCache empties the cache of polynomial roots that [Rational.Poles]
// and [Rational.Zeros] keep. Results do not depend on it; benchmarks that
// design the same spec again and again call it so that each design pays
// for its own roots, as a new design would.
func ResetRootCache() {
	for i := range rootCache {
		rootCache[i].Store(nil)
	}
}

// cachedCompanionRoots is companionRoots through rootCache.
func cachedCompanionRoots(c []float64) []complex128 {
	h := uint64(14695981039346656037) // FNV-1a over the coefficients' bits
	for _, v := range c {
		h ^= math.Float64bits(v)
		h *= 1099511628211
	}
	slot := &rootCache[h%uint64(len(rootCache))]
	if e := slot.Load(); e != nil && sameBits(e.c, c) {
		return slices.Clone(e.roots)
	}
	roots := companionRoots(c)
	if roots != nil {
		slot.Store(&rootEntry{c: slices.Clone(c), roots: slices.Clone(roots)})
	}
	return roots
}

// quadRoots returns the roots of a·p² + b·p + c without cancellation.
func quadRoots(a, b, c float64) []complex128 {
	disc := b*b - 4*a*c
	if disc >= 0 {
		q := -(b + math.Copysign(math.Sqrt(disc), b)) / 2
		if q == 0 {
			return []complex128{0, 0}
		}
		return []complex128{complex(q/a, 0), complex(c/q, 0)}
	}
	re, im := -b/(2*a), math.Sqrt(-disc)/(2*math.Abs(a))
	return []complex128{complex(re, im), complex(re, -im)}
}

// companionRoots returns the roots of c (degree ≥ 3, c[0] ≠ 0) as the
// eigenvalues of its companion matrix, polished.
func companionRoots(c []float64) []complex128 {
	n := len(c) - 1
	comp := mat.NewDense(n, n, nil)
	for i := 1; i < n; i++ {
		comp.Set(i, i-1, 1)
	}
	for i := 0; i < n; i++ {
		comp.Set(i, n-1, -c[i]/c[n])
	}
	var eig mat.Eigen
	if !eig.Factorize(comp, mat.EigenNone) {
		return nil
	}
	vals := eig.Values(nil)
	var out []complex128
	for _, v := range vals {
		switch {
		case imag(v) == 0:
			out = append(out, complex(polishReal(c, real(v)), 0))
		case imag(v) > 0:
			if p := polish(c, v); imag(p) > 0 {
				v = p // else Newton left the upper half plane: keep v
			}
			out = append(out, v, cmplx.Conj(v))
		}
	}
	return out
}

// polish improves a root of c by Newton's method, keeping each step only
// while it reduces |c(z)|.
func polish(c []float64, z complex128) complex128 {
	f := cmplx.Abs(horner(c, z))
	for range 4 {
		if f == 0 {
			break
		}
		var v, d complex128
		for i := len(c) - 1; i >= 0; i-- {
			d = d*z + v
			v = v*z + complex(c[i], 0)
		}
		if d == 0 {
			break
		}
		next := z - v/d
		fn := cmplx.Abs(horner(c, next))
		if !(fn < f) {
			break
		}
		z, f = next, fn
	}
	return z
}

// polishReal is polish on the real axis.
func polishReal(c []float64, x float64) float64 {
	return real(polish(c, complex(x, 0)))
}

// sortRoots orders roots by magnitude, then by real part, with a
// conjugate pair's upper member first.
func sortRoots(r []complex128) {
	slices.SortStableFunc(r, func(a, b complex128) int {
		if c := cmp.Compare(cmplx.Abs(a), cmplx.Abs(b)); c != 0 {
			return c
		}
		if c := cmp.Compare(real(a), real(b)); c != 0 {
			return c
		}
		return cmp.Compare(imag(b), imag(a))
	})
}

// cancelTol is the relative distance |z − p|/|p| within which
// [Rational.cancelCommon] takes a zero and a pole to be the same root.
// Matched halves cancel to rounding (about 1e-10 here); the mismatch of
// real parts (≥ 1e-4 in any Monte Carlo trial of interest) moves them
// far further apart.
const cancelTol = 1e-6

// cancelCommon returns r with every pole that a zero cancels (within
// cancelTol) removed together with that zero, the gain kept (matched at
// a point off the axis and away from every root), the denominator's
// lowest coefficient 1 again; r itself when nothing cancels. It is for
// the differential output of a stage with two matched halves, whose
// common-mode poles are in the nodal determinant but not in the
// difference of the outputs.
func (r Rational) cancelCommon() Rational {
	zs, ps := polyRoots(r.Num), polyRoots(r.Den)
	if len(zs) == 0 || len(ps) == 0 {
		return r
	}
	usedZ := make([]bool, len(zs))
	keepP := make([]complex128, 0, len(ps))
	cancelled := 0
	for _, p := range ps {
		best, bestD := -1, math.Inf(1)
		for i, z := range zs {
			if usedZ[i] {
				continue
			}
			if d := cmplx.Abs(z - p); d < bestD {
				best, bestD = i, d
			}
		}
		if best >= 0 && bestD <= cancelTol*cmplx.Abs(p) {
			usedZ[best] = true
			cancelled++
			continue
		}
		keepP = append(keepP, p)
	}
	if cancelled == 0 {
		return r
	}
	keepZ := make([]complex128, 0, len(zs))
	for i, z := range zs {
		if !usedZ[i] {
			keepZ = append(keepZ, z)
		}
	}
	num, den := fromRoots(keepZ), fromRoots(keepP)
	lo := slices.IndexFunc(den, func(v float64) bool { return v != 0 })
	if lo < 0 {
		return r
	}
	d := den[lo]
	for i := range den {
		den[i] /= d
	}
	// The gain: H(p0)·D(p0)/N(p0) at p0 off the axis, away from the
	// roots (a fixed point; |p0| ≈ 1 at the stage's scale).
	p0 := complex(0.61803398875, 1.1180339887)
	k := horner(r.Num, p0) / horner(r.Den, p0) * horner(den, p0) / horner(num, p0)
	for i := range num {
		num[i] *= real(k)
	}
	out := r
	out.Num, out.Den = trimPoly(num), trimPoly(den)
	return out
}

// fromRoots returns the monic real polynomial (ascending powers) with
// the given roots, whose complex ones come in conjugate pairs.
func fromRoots(roots []complex128) []float64 {
	c := []complex128{1}
	for _, z := range roots {
		next := make([]complex128, len(c)+1)
		for i, v := range c {
			next[i+1] += v
			next[i] -= v * z
		}
		c = next
	}
	out := make([]float64, len(c))
	for i, v := range c {
		out[i] = real(v)
	}
	return out
}

// Mag2Hz returns |H(j2πf)|² for each f in freqHz, in dst (a new slice if
// dst is shorter than freqHz): N and D split into even and odd powers
// once, two real Horner evaluations each per frequency, and |N|²/|D|²
// with no complex division. Where |D|² or |N|² leaves the range in which
// that quotient is safe it falls back on [Rational.AtHz].
func (r Rational) Mag2Hz(dst []float64, freqHz []float64) []float64 {
	if len(dst) < len(freqHz) {
		dst = make([]float64, len(freqHz))
	}
	dst = dst[:len(freqHz)]
	if len(r.Num) > maxSplit || len(r.Den) > maxSplit {
		for i, f := range freqHz {
			h := r.AtHz(f)
			dst[i] = real(h)*real(h) + imag(h)*imag(h)
		}
		return dst
	}
	var buf [4][maxSplit / 2]float64
	ne, no := evenOdd(r.Num, buf[0][:0], buf[1][:0])
	de, do := evenOdd(r.Den, buf[2][:0], buf[3][:0])
	k := 2 * math.Pi / r.ScaleRadPerSec
	for i, f := range freqHz {
		x := k * f
		u := -x * x
		a, b := hornerU(ne, u), hornerU(no, u)*x
		c, e := hornerU(de, u), hornerU(do, u)*x
		n2, d2 := a*a+b*b, c*c+e*e
		if d2 > 1e-300 && d2 < 1e300 && n2 < 1e300 {
			dst[i] = n2 / d2
		} else {
			h := r.AtHz(f)
			dst[i] = real(h)*real(h) + imag(h)*imag(h)
		}
	}
	return dst
}
