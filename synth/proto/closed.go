package proto

import (
	"cmp"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/zpk"
)

// assemble builds the conjugate-complete root list from the upper-half-plane
// members upper (Im > 0) and the real roots, in the package's canonical
// order: pairs by increasing imaginary part, upper member first, then the
// real roots. upper is sorted in place.
func assemble(upper []complex128, reals ...float64) []complex128 {
	slices.SortFunc(upper, func(a, b complex128) int { return cmp.Compare(imag(a), imag(b)) })
	out := make([]complex128, 0, 2*len(upper)+len(reals))
	for _, p := range upper {
		out = append(out, p, complex(real(p), -imag(p)))
	}
	for _, r := range reals {
		out = append(out, complex(r, 0))
	}
	return out
}

// dcGain returns the gain K that gives |H(0)| = h0 for the given upper
// poles/zeros and real poles, with H(s) = K·∏(s−z)/∏(s−p).
func dcGain(h0 float64, upperPoles []complex128, realPoles []float64, upperZeros []complex128) float64 {
	// H(0) = K·∏(−z)/∏(−p); each conjugate pair contributes |r|², each
	// left-half-plane real pole −r > 0. Logs keep high orders in range.
	lg := math.Log(h0)
	for _, p := range upperPoles {
		lg += 2 * math.Log(abs(p))
	}
	for _, r := range realPoles {
		lg += math.Log(-r)
	}
	for _, z := range upperZeros {
		lg -= 2 * math.Log(abs(z))
	}
	return math.Exp(lg)
}

func abs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// halfAngle returns sin and cos of θ_m = (2m−1)π/(2n).
func halfAngle(m, n int) (sin, cos float64) {
	return math.Sincos(float64(2*m-1) * math.Pi / float64(2*n))
}

// butterworth: |H|² = 1/(1+ε²ω^(2n)) with ε² = 10^(Ap/10)−1, poles on the
// circle of radius ε^(−1/n) at angles π/2 + θ_m.
func butterworth(n int, ap float64) zpk.ZPK {
	lnEps := lnPow10m1(ap) / 2
	r := math.Exp(-lnEps / float64(n))
	upper := make([]complex128, 0, n/2)
	for m := 1; m <= n/2; m++ {
		s, c := halfAngle(m, n)
		upper = append(upper, complex(-r*s, r*c))
	}
	var reals []float64
	if n%2 == 1 {
		reals = []float64{-r}
	}
	return zpk.ZPK{Poles: assemble(upper, reals...), Gain: dcGain(1, upper, reals, nil)}
}

// chebyshevPoles returns the upper poles and the real pole (0 if n is even)
// of the Chebyshev I prototype with ripple factor 1/e1 (e1 = 1/ε),
// p_m = −sinh(μ)·sin θ_m + j·cosh(μ)·cos θ_m, μ = asinh(e1)/n.
func chebyshevPoles(n int, lnE1 float64) ([]complex128, []float64) {
	var mu float64
	if lnE1 > 20 {
		mu = (lnE1 + math.Ln2 + math.Exp(-2*lnE1)/4) / float64(n) // asinh(y) = ln 2y + 1/(4y²) − …
	} else {
		mu = math.Asinh(math.Exp(lnE1)) / float64(n)
	}
	sh, ch := math.Sinh(mu), math.Cosh(mu)
	upper := make([]complex128, 0, n/2)
	for m := 1; m <= n/2; m++ {
		s, c := halfAngle(m, n)
		upper = append(upper, complex(-sh*s, ch*c))
	}
	var reals []float64
	if n%2 == 1 {
		reals = []float64{-sh}
	}
	return upper, reals
}

// chebyshev1: |H|² = 1/(1+ε²T_n²(ω)), ε² = 10^(Ap/10)−1.
func chebyshev1(n int, ap float64) zpk.ZPK {
	upper, reals := chebyshevPoles(n, -lnPow10m1(ap)/2)
	h0 := 1.0
	if n%2 == 0 {
		h0 = math.Pow(10, -ap/20)
	}
	return zpk.ZPK{Poles: assemble(upper, reals...), Gain: dcGain(h0, upper, reals, nil)}
}

// chebyshev2: |H|² = 1/(1 + εs²/T_n²(ωs/ω)), εs² = 10^(As/10)−1, with
// ωs = cosh(acosh(√D)/n) so that the loss at ω = 1 is Ap. Its poles are ωs
// divided by the Chebyshev I poles of ripple factor 1/εs, its zeros
// ±j·ωs/cos θ_m.
func chebyshev2(n int, ap, as float64) zpk.ZPK {
	ws := chebyshevEdge(n, ap, as)
	q, qr := chebyshevPoles(n, lnPow10m1(as)/2)
	upper := make([]complex128, len(q))
	for i, v := range q {
		// ωs/conj(v) has a positive imaginary part: ωs·v/|v|².
		a := abs(v)
		upper[i] = complex(ws*real(v)/a/a, ws*imag(v)/a/a)
	}
	var reals []float64
	if n%2 == 1 {
		reals = []float64{ws / qr[0]}
	}
	zeros := make([]complex128, 0, n/2)
	for m := 1; m <= n/2; m++ {
		_, c := halfAngle(m, n)
		zeros = append(zeros, complex(0, ws/c))
	}
	h := zpk.ZPK{Gain: dcGain(1, upper, reals, zeros)}
	h.Poles = assemble(upper, reals...)
	h.Zeros = assemble(zeros)
	return h
}
