package verify

import (
	"math"
	"math/cmplx"
	"slices"
)

// Root polishing. Each trial's poles are found from the nominal ones: the
// trial's denominator differs from the nominal by the part spread (a few
// per cent), so its roots lie near the nominal roots and the Aberth-Ehrlich
// iteration started there converges (cubically for simple roots) in a few
// steps, to all roots at once, never two to the same root.
const (
	// aberthMaxIter bounds the iterations; a run that does not converge
	// falls back to the circuit package's root finder.
	aberthMaxIter = 40
	// aberthTol: the iteration stops when every step is below this
	// fraction of its root's magnitude.
	aberthTol = 1e-13
	// realTol: a root whose imaginary part is at most this fraction of
	// its magnitude is taken as real (the iteration leaves a residual
	// imaginary part of rounding size on real roots).
	realTol = 1e-9
)

// polyRoots writes the roots of the real polynomial c (ascending powers,
// c[deg] ≠ 0, deg = len(z)) into z, starting from the guesses already in
// z for degree ≥ 3 (the nominal roots). It reports whether the iteration
// converged.
//
// Degree ≤ 2 is solved in closed form. Above, when the guesses hold at
// most one complex pair (the common case: a section's pair and the
// op-amps' real poles), each real root is polished by Newton's method in
// real arithmetic and divided out (forward deflation for a root smaller
// than the pair, backward for a larger one, each the stable direction),
// and the remaining quadratic is solved in closed form. Otherwise, or
// when that fails, the Aberth-Ehrlich iteration refines all roots at
// once.
func polyRoots(c []float64, z []complex128) bool {
	deg := len(z)
	switch deg {
	case 0:
		return true
	case 1:
		z[0] = complex(-c[0]/c[1], 0)
		return true
	case 2:
		z[0], z[1] = quadRoots(c[2], c[1], c[0])
		return true
	}
	if deg <= maxDegree && realDeflate(c, z) {
		return true
	}
	return aberth(c, z)
}

// realDeflate is polyRoots' real-arithmetic path; it leaves z unchanged
// when it does not apply or fails.
func realDeflate(c []float64, z []complex128) bool {
	deg := len(z)
	var reals [maxDegree]float64
	nr := 0
	pairMag := 0.0
	for _, r := range z {
		switch {
		case imag(r) == 0:
			reals[nr] = real(r)
			nr++
		case imag(r) > 0:
			if pairMag != 0 {
				return false // two pairs
			}
			pairMag = cmplx.Abs(r)
		}
	}
	if nr < deg-2 || (pairMag == 0) != (nr == deg) {
		return false
	}
	if pairMag == 0 {
		// All real: keep the two smallest for the closed form (they are
		// the ones an overdamped section pair would be).
		slices.SortFunc(reals[:nr], func(a, b float64) int {
			return cmpAbs(b, a)
		})
		pairMag = math.Sqrt(math.Abs(reals[nr-1] * reals[nr-2]))
	}
	var orig [maxDegree]complex128
	copy(orig[:], z)
	var buf [maxDegree + 1]float64
	q := buf[:deg+1]
	copy(q, c)
	var found [maxDegree]float64
	for i := 0; i < deg-2; i++ {
		x := reals[i]
		if !newtonReal(c, &x) {
			return false
		}
		found[i] = x
		n := len(q) - 1 // degree of q
		if math.Abs(x) <= pairMag {
			// Forward deflation, from the leading coefficient.
			acc := q[n]
			for j := n - 1; j >= 0; j-- {
				acc, q[j] = q[j]+acc*x, acc
			}
		} else {
			// Backward deflation, from the constant term.
			if x == 0 {
				return false
			}
			prev := 0.0
			for j := 0; j < n; j++ {
				prev = (prev - q[j]) / x
				q[j] = prev
			}
		}
		q = q[:n]
	}
	a, b := quadRoots(q[2], q[1], q[0])
	for i := 0; i < deg-2; i++ {
		z[i] = complex(found[i], 0)
	}
	if cmplx.IsNaN(a) || cmplx.IsNaN(b) || cmplx.IsInf(a) || cmplx.IsInf(b) {
		return false
	}
	z[deg-2], z[deg-1] = a, b
	if !vieta(c, z) {
		copy(z[:deg-2], orig[:deg-2])
		z[deg-2], z[deg-1] = orig[deg-2], orig[deg-1]
		return false
	}
	return true
}

// vieta checks roots z of c against the sum and the product of the roots
// that the coefficients give (−c[n−1]/c[n] and (−1)^n·c[0]/c[n]), which
// catches two polishings that converged to the same root.
func vieta(c []float64, z []complex128) bool {
	const tol = 1e-8
	n := len(z)
	var sum complex128
	prod := complex(1, 0)
	var big float64
	for _, r := range z {
		sum += r
		prod *= r
		big = math.Max(big, math.Abs(real(r))+math.Abs(imag(r)))
	}
	wantSum := -c[n-1] / c[n]
	wantProd := c[0] / c[n]
	if n%2 == 1 {
		wantProd = -wantProd
	}
	if math.Abs(real(sum)-wantSum)+math.Abs(imag(sum)) > tol*big*float64(n) {
		return false
	}
	return math.Abs(real(prod)-wantProd)+math.Abs(imag(prod)) <= tol*math.Abs(wantProd)*float64(n)
}

// cmpAbs orders by magnitude.
func cmpAbs(a, b float64) int {
	switch x, y := math.Abs(a), math.Abs(b); {
	case x < y:
		return -1
	case x > y:
		return 1
	}
	return 0
}

// newtonReal polishes the real root *x of c by Newton's method.
func newtonReal(c []float64, x *float64) bool {
	r := *x
	for range aberthMaxIter {
		var p, d float64
		for j := len(c) - 1; j >= 0; j-- {
			d = d*r + p
			p = p*r + c[j]
		}
		if p == 0 {
			break
		}
		step := p / d
		if math.IsNaN(step) || math.IsInf(step, 0) {
			return false
		}
		r -= step
		if math.Abs(step) <= aberthTol*math.Abs(r) {
			*x = r
			return true
		}
	}
	*x = r
	return true
}

// aberth is the Aberth-Ehrlich iteration on all roots, from z.
func aberth(c []float64, z []complex128) bool {
	deg := len(z)
	for range aberthMaxIter {
		worst := 0.0
		for i, zi := range z {
			// P(zi) and P'(zi) by Horner.
			var p, d complex128
			for j := deg; j >= 0; j-- {
				d = d*zi + p
				p = p*zi + complex(c[j], 0)
			}
			if p == 0 {
				continue
			}
			w := p / d
			var s complex128
			for j, zj := range z {
				if j != i {
					s += 1 / (zi - zj)
				}
			}
			step := w / (1 - w*s)
			if cmplx.IsNaN(step) || cmplx.IsInf(step) {
				return false
			}
			z[i] = zi - step
			if m := abs2(z[i]); m > 0 {
				worst = math.Max(worst, abs2(step)/m)
			}
		}
		if worst < aberthTol*aberthTol {
			return true
		}
	}
	return false
}

// abs2 is |z|².
func abs2(z complex128) float64 { return real(z)*real(z) + imag(z)*imag(z) }

// quadRoots returns the roots of a·p² + b·p + c without cancellation; a
// complex pair is exactly conjugate, the upper one first.
func quadRoots(a, b, c float64) (complex128, complex128) {
	disc := b*b - 4*a*c
	if disc >= 0 {
		q := -(b + math.Copysign(math.Sqrt(disc), b)) / 2
		if q == 0 {
			return 0, 0
		}
		return complex(q/a, 0), complex(c/q, 0)
	}
	re, im := -b/(2*a), math.Sqrt(-disc)/(2*math.Abs(a))
	return complex(re, im), complex(re, -im)
}

// dominantPair is [circuit.Rational.DominantPair] on roots already found
// (in rad/s when scaled by scale): the section's pole pair of largest Q,
// or for a first-order section its real pole nearest the origin, with the
// same rules for overdamped pairs and poles at s = 0. reals is scratch
// space of capacity ≥ len(roots).
func dominantPair(roots []complex128, scale float64, sectionOrder int, reals []float64) (f0Hz, q float64, ok bool) {
	if sectionOrder < 1 {
		return 0, 0, false
	}
	reals = reals[:0]
	var pair complex128
	bestKey := math.Inf(1)
	for _, p := range roots {
		mag := cmplx.Abs(p)
		switch {
		case mag == 0:
		case math.Abs(imag(p)) <= realTol*mag:
			reals = append(reals, real(p))
		case imag(p) < 0:
		case math.Abs(real(p))/mag < bestKey:
			pair, bestKey = p, math.Abs(real(p))/mag
		}
	}
	if len(reals) > 1 {
		slices.SortFunc(reals, func(a, b float64) int {
			switch x, y := math.Abs(a), math.Abs(b); {
			case x < y:
				return -1
			case x > y:
				return 1
			}
			return 0
		})
	}
	toHz := scale / (2 * math.Pi)
	switch {
	case sectionOrder == 1 && len(reals) > 0:
		return math.Abs(reals[0]) * toHz, 0, true
	case !math.IsInf(bestKey, 1):
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
