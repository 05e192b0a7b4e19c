package proto

import (
	"cmp"
	"math"
	"math/cmplx"
	"slices"
)

// aberthAll refines the n approximations in z, in place, to the zeros of
// a polynomial of degree n = len(z) by the Aberth–Ehrlich iteration; eval
// returns p(x)/p′(x) (the Newton step). It runs at most maxSweeps sweeps
// and reports whether the largest relative step fell below tol, or below
// floor and then stopped shrinking (the evaluation's rounding noise). The
// polynomial need not be real; starting values that are conjugate-
// symmetric for a real polynomial stay so up to rounding.
func aberthAll(z []complex128, eval func(complex128) complex128, tol, floor float64, maxSweeps int) bool {
	prev := math.Inf(1)
	for range maxSweeps {
		worst := 0.0
		for i, u := range z {
			w := eval(u)
			var sum complex128
			for j, v := range z {
				if j != i {
					sum += inv(u - v)
				}
			}
			d := w / (1 - w*sum)
			z[i] = u - d
			if m := cmplx.Abs(z[i]); m > 0 {
				worst = math.Max(worst, cmplx.Abs(d)/m)
			} else {
				worst = math.Max(worst, cmplx.Abs(d))
			}
		}
		if math.IsNaN(worst) || math.IsInf(worst, 0) {
			return false
		}
		if worst < tol || (worst < floor && worst >= prev) {
			return true
		}
		prev = worst
	}
	return false
}

// aberthConj is aberthAll for a real polynomial whose zeros are the
// conjugate pairs of upper (imaginary parts > 0) and the real zeros
// reals, refined in place: only the upper members and the real zeros are
// iterated (their conjugates enter the repulsion terms), which halves the
// work and keeps the pairs exactly conjugate. It reports false if the
// iteration did not settle, or two members settled on the same pair or
// on the real axis.
func aberthConj(upper []complex128, reals []float64, eval func(complex128) complex128, tol, floor float64, maxSweeps int) bool {
	prev := math.Inf(1)
	for range maxSweeps {
		worst := 0.0
		for i, u := range upper {
			w := eval(u)
			sum := inv(u - cmplx.Conj(u))
			for j, v := range upper {
				if j != i {
					sum += inv(u-v) + inv(u-cmplx.Conj(v))
				}
			}
			for _, r := range reals {
				sum += inv(u - complex(r, 0))
			}
			d := w / (1 - w*sum)
			upper[i] = u - d
			worst = math.Max(worst, cmplx.Abs(d)/cmplx.Abs(upper[i]))
		}
		for i, x := range reals {
			w := real(eval(complex(x, 0)))
			sum := 0.0
			for _, v := range upper {
				sum += 2 * real(inv(complex(x, 0)-v))
			}
			for j, y := range reals {
				if j != i {
					sum += 1 / (x - y)
				}
			}
			d := w / (1 - w*sum)
			reals[i] = x - d
			worst = math.Max(worst, math.Abs(d/reals[i]))
		}
		if math.IsNaN(worst) || math.IsInf(worst, 0) {
			return false
		}
		if worst < tol || (worst < floor && worst >= prev) {
			// A member may settle on the lower of its pair, a zero
			// all the same: take its conjugate, then require the
			// members distinct and off the real axis.
			for i, u := range upper {
				if imag(u) < 0 {
					upper[i] = cmplx.Conj(u)
				}
			}
			for i, u := range upper {
				if !(imag(u) > 1e-9*cmplx.Abs(u)) {
					return false
				}
				for _, v := range upper[i+1:] {
					if cmplx.Abs(u-v) <= 1e-6*cmplx.Abs(u) {
						return false
					}
				}
			}
			return true
		}
		prev = worst
	}
	return false
}

// splitConjugates sorts the zeros z of a real polynomial into the upper
// members of the conjugate pairs and the real zeros: a zero whose
// imaginary part is below 1e-9 of its modulus counts as real. Each upper
// member is averaged with the conjugate of its partner, so that the pairs
// are exactly conjugate. ok is false when the zeros do not pair up.
func splitConjugates(z []complex128) (upper []complex128, reals []float64, ok bool) {
	var lower []complex128
	for _, x := range z {
		switch {
		case math.Abs(imag(x)) <= 1e-9*cmplx.Abs(x):
			reals = append(reals, real(x))
		case imag(x) > 0:
			upper = append(upper, x)
		default:
			lower = append(lower, x)
		}
	}
	if len(upper) != len(lower) {
		return nil, nil, false
	}
	byIm := func(a, b complex128) int { return cmp.Compare(math.Abs(imag(a)), math.Abs(imag(b))) }
	slices.SortFunc(upper, byIm)
	slices.SortFunc(lower, byIm)
	for i := range upper {
		c := cmplx.Conj(lower[i])
		if cmplx.Abs(c-upper[i]) > 1e-6*cmplx.Abs(upper[i]) {
			return nil, nil, false
		}
		upper[i] = (upper[i] + c) / 2
	}
	slices.Sort(reals)
	return upper, reals, true
}

// leftRoot returns the square root of w with a negative real part.
func leftRoot(w complex128) complex128 {
	r := cmplx.Sqrt(w)
	if real(r) > 0 {
		return -r
	}
	return r
}
