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
