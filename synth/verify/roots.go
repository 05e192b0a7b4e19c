package verify

import (
	"math"
	"math/cmplx"
	"slices"
)

// Root polishing. Each trial's poles are found from the nominal ones: the
// trial's denominator differs from the nominal by the part spread (a few
// per cent), so its roots lie near the nominal roots, and Newton's method
// on each factor of the denominator, started there, converges
// quadratically in a few steps. That replaces a full root solve (the
// eigenvalues of the companion matrix, what the circuit package does) for
// nearly every trial; the full solve remains the fallback.
const (
	// polishMaxIter bounds the Newton steps per factor; a factor that has
	// not converged by then (a guess too far from its root) sends the
	// denominator to the Aberth-Ehrlich iteration and from there to the
	// full solve.
	polishMaxIter = 12
	// aberthMaxIter bounds the Aberth-Ehrlich iterations; a run that does
	// not converge falls back to the circuit package's root finder.
	aberthMaxIter = 40
	// aberthTol: an iteration stops when every step is below this
	// fraction of its root's magnitude.
	aberthTol = 1e-13
	// noiseTol: a Newton iteration whose steps have stopped shrinking
	// (each at least half the one before, rounding noise rather than
	// convergence) is taken as converged once they are below this
	// fraction of the root; above it, as not converging.
	noiseTol = 1e-10
	// clusterTol: two real guesses closer than this fraction of their
	// magnitude are polished together as one real quadratic factor
	// (Bairstow's method), which converges whether the trial moves them
	// apart, onto each other or off the real axis as a complex pair, where
	// Newton's method on each alone would slow down near the double root
	// or find the same root twice.
	clusterTol = 0.25
	// maxStep bounds a Bairstow step, relative to the size of its
	// factor (see bairstow).
	maxStep = 0.25
	// realTol: a root whose imaginary part is at most this fraction of
	// its magnitude is taken as real (the iteration leaves a residual
	// imaginary part of rounding size on real roots).
	realTol = 1e-9
)

// polyRoots writes the roots of the real polynomial c (ascending powers,
// c[deg] ≠ 0, deg = len(z)) into z, starting from the guesses already in
// z for degree ≥ 3 (the nominal roots, conjugate pairs complete). It
// reports whether the iteration converged; when it did not, the caller
// falls back to the full solve.
//
// Degree ≤ 2 is solved in closed form. Above, the guesses are grouped
// into the real factors of the denominator (see factorDeflate): each is
// found by Newton's method, refined on the whole polynomial and divided
// out, and the last quadratic, the section's pole pair, is solved in
// closed form. When that fails (a factor that does not converge within
// polishMaxIter steps, or roots that collide: two factors polished onto
// the same roots, which the sum and the product of the roots catch), the
// Aberth-Ehrlich iteration refines all roots at once from the guesses,
// and when that fails too the caller takes the full solve.
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
	if deg <= maxDegree && factorDeflate(c, z) {
		return true
	}
	return aberth(c, z)
}

// realFactor is a real factor of a polynomial: p − r (linear) or
// p² + u·p + v (quad).
type realFactor struct {
	quad    bool
	r, u, v float64
	mag     float64 // the magnitude of its roots (|r|, √|v|)
}

// factorDeflate is polyRoots' Newton path; it leaves z unchanged when it
// does not apply or fails.
//
// The guesses become factors: the complex pair of least magnitude (the
// section's, as a rule), or without a pair the two real guesses of least
// magnitude, is kept for last; the other pairs are quadratic factors,
// the other real guesses linear ones, except that real guesses closer
// than clusterTol are paired into a quadratic factor. Each factor but
// the kept one is polished (Newton's method for a linear factor,
// Bairstow's for a quadratic one: Newton's method on its two
// coefficients) first on the deflated polynomial, then on the whole one,
// and divided out of the deflated polynomial, forward (from the leading
// coefficient) when its roots are smaller than the kept pair's and
// backward (from the constant term) when larger, each the stable
// direction; the quadratic left is the kept pair's, solved in closed
// form.
func factorDeflate(c []float64, z []complex128) bool {
	deg := len(z)
	var reals [maxDegree]float64
	var facs [maxDegree]realFactor
	nr, nf, nUpper, nLower := 0, 0, 0, 0
	keptIdx := -1
	for _, r := range z {
		switch {
		case imag(r) == 0:
			reals[nr] = real(r)
			nr++
		case imag(r) > 0:
			nUpper++
			f := realFactor{quad: true, u: -2 * real(r), v: abs2(r), mag: cmplx.Abs(r)}
			if keptIdx < 0 || f.mag < facs[keptIdx].mag {
				keptIdx = nf
			}
			facs[nf] = f
			nf++
		default:
			nLower++
		}
	}
	if nUpper != nLower {
		return false // not a real polynomial's guesses
	}
	// The real guesses by value, so that neighbours are adjacent.
	slices.Sort(reals[:nr])
	if keptIdx < 0 {
		if nr < 2 {
			return false
		}
		// All real: keep the two of least magnitude (the ones an
		// overdamped section pair would be).
		i, j := -1, -1
		for k := 0; k < nr; k++ {
			switch {
			case i < 0 || math.Abs(reals[k]) < math.Abs(reals[i]):
				i, j = k, i
			case j < 0 || math.Abs(reals[k]) < math.Abs(reals[j]):
				j = k
			}
		}
		a, b := reals[i], reals[j]
		facs[nf] = realFactor{quad: true, u: -(a + b), v: a * b, mag: math.Sqrt(math.Abs(a * b))}
		keptIdx = nf
		nf++
		// Remove i and j, keeping the order.
		k := 0
		for m := 0; m < nr; m++ {
			if m != i && m != j {
				reals[k] = reals[m]
				k++
			}
		}
		nr = k
	}
	for i := 0; i < nr; i++ {
		a := reals[i]
		if i+1 < nr {
			if b := reals[i+1]; math.Abs(b-a) <= clusterTol*math.Max(math.Abs(a), math.Abs(b)) {
				facs[nf] = realFactor{quad: true, u: -(a + b), v: a * b, mag: math.Sqrt(math.Abs(a * b))}
				nf++
				i++
				continue
			}
		}
		facs[nf] = realFactor{r: a, mag: math.Abs(a)}
		nf++
	}
	keptMag := facs[keptIdx].mag

	var buf [maxDegree + 1]float64
	q := buf[:deg+1]
	copy(q, c)
	var roots [maxDegree]complex128
	nRoots := 0
	for i := 0; i < nf; i++ {
		if i == keptIdx {
			continue
		}
		f := &facs[i]
		n := len(q) - 1 // degree of q
		// Each factor is found on the deflated polynomial q, which no
		// longer has the roots already found (so two guesses cannot end
		// on one root), then refined on the whole c (one or two steps),
		// which undoes the rounding of the deflations.
		if !f.quad {
			if !newtonReal(q, &f.r) || !newtonReal(c, &f.r) {
				return false
			}
			x := f.r
			roots[nRoots] = complex(x, 0)
			nRoots++
			if math.Abs(x) <= keptMag {
				acc := q[n]
				for j := n - 1; j >= 0; j-- {
					acc, q[j] = q[j]+acc*x, acc
				}
			} else {
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
			continue
		}
		if !bairstow(q, &f.u, &f.v) || !bairstow(c, &f.u, &f.v) {
			return false
		}
		u, v := f.u, f.v
		roots[nRoots], roots[nRoots+1] = quadRoots(1, u, v)
		nRoots += 2
		if math.Sqrt(math.Abs(v)) <= keptMag {
			// Forward: q = (p² + u·p + v)·s, s's coefficients from the top.
			var s [maxDegree + 1]float64
			b1, b2 := 0.0, 0.0 // s[k−1], s[k] of the step before
			for k := n; k >= 2; k-- {
				b := q[k] - u*b1 - v*b2
				s[k-2], b1, b2 = b, b, b1
			}
			copy(q, s[:n-1])
		} else {
			// Backward: from the constant term.
			if v == 0 {
				return false
			}
			s1, s2 := 0.0, 0.0 // s[k−1], s[k−2]
			for k := 0; k <= n-2; k++ {
				s := (q[k] - u*s1 - s2) / v
				q[k], s1, s2 = s, s, s1
			}
		}
		q = q[:n-1]
	}
	if len(q) != 3 || nRoots != deg-2 {
		return false
	}
	a, b := quadRoots(q[2], q[1], q[0])
	if cmplx.IsNaN(a) || cmplx.IsNaN(b) || cmplx.IsInf(a) || cmplx.IsInf(b) {
		return false
	}
	roots[nRoots], roots[nRoots+1] = a, b
	if !vieta(c, roots[:deg]) {
		return false
	}
	copy(z, roots[:deg])
	return true
}

// bairstow polishes the quadratic factor p² + u·p + v of c by Newton's
// method on (u, v), the remainder of c's division by the factor being
// driven to zero (Bairstow's method). It reports whether it converged
// within polishMaxIter steps.
func bairstow(c []float64, u, v *float64) bool {
	n := len(c) - 1
	U, V := *u, *v
	prev := math.Inf(1)
	for range polishMaxIter {
		m := math.Sqrt(math.Abs(V))
		if m == 0 || math.IsNaN(m) || math.IsInf(m, 0) {
			return false
		}
		// b_k = c_k − U·b_{k+1} − V·b_{k+2} (the quotient and, in b_1 and
		// b_0, the remainder), d_k = b_k − U·d_{k+1} − V·d_{k+2} (the
		// derivatives: ∂b_k/∂U = −d_{k+1}, ∂b_k/∂V = −d_{k+2}).
		var b0, b1, d1, d2, d3 float64
		var bk1, bk2, dk1, dk2 float64 // b_{k+1}, b_{k+2}, d_{k+1}, d_{k+2}
		for k := n; k >= 0; k-- {
			bk := c[k] - U*bk1 - V*bk2
			dk := bk - U*dk1 - V*dk2
			switch k {
			case 3:
				d3 = dk
			case 2:
				d2 = dk
			case 1:
				d1, b1 = dk, bk
			case 0:
				b0 = bk
			}
			bk1, bk2 = bk, bk1
			dk1, dk2 = dk, dk1
		}
		det := d2*d2 - d1*d3
		du := (b1*d2 - b0*d3) / det
		dv := (b0*d2 - b1*d1) / det
		if math.IsNaN(du) || math.IsNaN(dv) || math.IsInf(du, 0) || math.IsInf(dv, 0) {
			return false
		}
		// A step of more than maxStep of the factor's size is shortened
		// to it: far from the root, Newton's full step can overshoot
		// out of the basin.
		if e := math.Max(math.Abs(du)/m, math.Abs(dv)/(m*m)); e > maxStep {
			du, dv = du*maxStep/e, dv*maxStep/e
		}
		U += du
		V += dv
		e := math.Max(math.Abs(du)/m, math.Abs(dv)/(m*m))
		if e <= aberthTol || (e <= noiseTol && e >= prev/2) {
			*u, *v = U, V
			return true
		}
		prev = e
	}
	return false
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

// newtonReal polishes the real root *x of c by Newton's method. It
// reports whether it converged within polishMaxIter steps.
func newtonReal(c []float64, x *float64) bool {
	r := *x
	prev := math.Inf(1)
	for range polishMaxIter {
		var p, d float64
		for j := len(c) - 1; j >= 0; j-- {
			d = d*r + p
			p = p*r + c[j]
		}
		if p == 0 {
			*x = r
			return true
		}
		step := p / d
		if math.IsNaN(step) || math.IsInf(step, 0) {
			return false
		}
		r -= step
		e := math.Abs(step) / math.Abs(r)
		if e <= aberthTol || (e <= noiseTol && e >= prev/2) {
			*x = r
			return true
		}
		prev = e
	}
	return false
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
