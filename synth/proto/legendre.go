package proto

import (
	"math"
	"math/cmplx"
	"sync"

	"github.com/polewright/polewright/synth/zpk"
)

// The optimum-L (Legendre–Papoulis) prototype has
//
//	|H(jω)|² = 1/(1 + ε²·L_n(ω²)),   ε² = 10^(rippleDB/10) − 1,
//
// where L_n is Papoulis's polynomial: L_n(0) = 0, L_n(1) = 1, L_n′ ≥ 0 on
// [0, 1] and L_n′(1) as large as possible. In the variable x = 2ω² − 1,
//
//	n = 2k+1:  L_n = ∫_{−1}^{x} q(t)² dt,          a_i = (2i+1)/(√2·(k+1)),        i = 0…k
//	n = 2k+2:  L_n = ∫_{−1}^{x} (1+t)·q(t)² dt,   a_i = (2i+1)/√((k+1)(k+2)), i ≡ k (mod 2), else 0
//
// with q = Σ a_i·P_i and P_i the Legendre polynomials. Everything here
// stays in the Legendre basis: q² by the recurrence for P_i·q, the factor
// (1+t) and the integral by the three-term relations, and the zeros of
// 1 + ε²·L_n (a polynomial of degree n in x) by the Aberth–Ehrlich
// iteration on a forward-recurrence evaluation. No power-basis
// coefficient is ever formed.

// legendreTimesX returns the Legendre coefficients of x·f for the
// Legendre coefficients c of f: x·P_j = ((j+1)·P_{j+1} + j·P_{j−1})/(2j+1).
func legendreTimesX(c []float64) []float64 {
	out := make([]float64, len(c)+1)
	for j, v := range c {
		out[j+1] += v * float64(j+1) / float64(2*j+1)
		if j > 0 {
			out[j-1] += v * float64(j) / float64(2*j+1)
		}
	}
	return out
}

// legendreL returns the Legendre coefficients (in x = 2ω²−1) of Papoulis's
// L_n, n ≥ 1; len n+1. Those of orders up to LegendreSearchCap are
// computed once and kept; the caller must not modify them.
func legendreL(n int) []float64 {
	if n <= LegendreSearchCap {
		legendreCoef.once[n].Do(func() { legendreCoef.c[n] = buildLegendreL(n) })
		return legendreCoef.c[n]
	}
	return buildLegendreL(n)
}

var legendreCoef struct {
	once [LegendreSearchCap + 1]sync.Once
	c    [LegendreSearchCap + 1][]float64
}

func buildLegendreL(n int) []float64 {
	k := (n - 1) / 2
	if n%2 == 0 {
		k = (n - 2) / 2
	}
	a := make([]float64, k+1)
	for i := range a {
		switch {
		case n%2 == 1:
			a[i] = float64(2*i+1) / (math.Sqrt2 * float64(k+1))
		case i%2 == k%2:
			a[i] = float64(2*i+1) / math.Sqrt(float64((k+1)*(k+2)))
		}
	}
	// q² = Σ_i a_i·(P_i·q), with P_{i+1}·q = ((2i+1)·x·(P_i·q) − i·(P_{i−1}·q))/(i+1).
	sq := make([]float64, 2*k+1)
	prev, cur := []float64(nil), a
	for i := 0; i <= k; i++ {
		if i > 0 {
			xc := legendreTimesX(cur)
			next := make([]float64, len(xc))
			for j, v := range xc {
				next[j] = v * float64(2*i-1) / float64(i)
			}
			for j, v := range prev {
				next[j] -= v * float64(i-1) / float64(i)
			}
			prev, cur = cur, next
		}
		for j, v := range cur {
			if j < len(sq) {
				sq[j] += a[i] * v
			}
		}
	}
	w := sq
	if n%2 == 0 {
		xw := legendreTimesX(sq)
		for j, v := range sq {
			xw[j] += v
		}
		w = xw
	}
	// ∫_{−1}^{x} P_0 = P_0 + P_1; ∫_{−1}^{x} P_j = (P_{j+1} − P_{j−1})/(2j+1).
	out := make([]float64, len(w)+1)
	for j, v := range w {
		if j == 0 {
			out[0] += v
			out[1] += v
			continue
		}
		out[j+1] += v / float64(2*j+1)
		out[j-1] -= v / float64(2*j+1)
	}
	return out[:n+1]
}

// legendreSeries evaluates Σ c_j·P_j(x) and its derivative for real
// coefficients c by the forward recurrences of P_j and P_j′.
func legendreSeries(c []float64, x complex128) (v, dv complex128) {
	p0, p1 := complex128(1), x
	d0, d1 := complex128(0), complex128(1)
	vr, vi := c[0], 0.0
	dr, di := 0.0, 0.0
	if len(c) > 1 {
		vr += c[1] * real(x)
		vi += c[1] * imag(x)
		dr = c[1]
	}
	for j := 1; j+1 < len(c); j++ {
		a, b := float64(2*j+1)/float64(j+1), float64(j)/float64(j+1)
		xp := x * p1
		p0, p1 = p1, complex(a*real(xp)-b*real(p0), a*imag(xp)-b*imag(p0))
		q := p0 + x*d1
		d0, d1 = d1, complex(a*real(q)-b*real(d0), a*imag(q)-b*imag(d0))
		cj := c[j+1]
		vr += cj * real(p1)
		vi += cj * imag(p1)
		dr += cj * real(d1)
		di += cj * imag(d1)
	}
	return complex(vr, vi), complex(dr, di)
}

// legendreLnL returns ln L_n at x ≥ 1 (ω ≥ 1) from the Legendre
// coefficients c, by the forward recurrence rescaled whenever the values
// pass 1e150, so that it cannot overflow. Every P_j is positive and
// increasing for x ≥ 1, and so is L_n.
func legendreLnL(c []float64, x float64) float64 {
	p0, p1 := 1.0, x
	sum := c[0] + c[1]*x
	lnScale := 0.0
	for j := 1; j+1 < len(c); j++ {
		p0, p1 = p1, (float64(2*j+1)*x*p1-float64(j)*p0)/float64(j+1)
		sum += c[j+1] * p1
		if p1 > 1e150 {
			const f = 1e-150
			p0, p1, sum = p0*f, p1*f, sum*f
			lnScale += 150 * math.Ln10
		}
	}
	return lnScale + math.Log(sum)
}

// legendreLossAt returns the loss in dB at ratio ≥ 1 of the order-n
// optimum-L prototype normalised to rippleDB at 1 rad/s:
// 10·log10(1 + ε²·L_n(ratio²)).
func legendreLossAt(n int, rippleDB, ratio float64) float64 {
	lnE2 := lnPow10m1(rippleDB)
	lnL := legendreLnL(legendreL(n), 2*ratio*ratio-1)
	return lnOnePlusExp(lnE2+lnL) * (10 / math.Ln10)
}

// lnOnePlusExp returns ln(1 + e^y) without overflow.
func lnOnePlusExp(y float64) float64 {
	if y > 30 {
		return y + math.Log1p(math.Exp(-y))
	}
	return math.Log1p(math.Exp(y))
}

// legendreRoots returns the left-half-plane poles of the order-n
// optimum-L prototype with ε² = e^lnE2 as conjugate-pair upper members
// and real poles, or ok false if the iteration did not settle.
func legendreRoots(n int, lnE2 float64) (upper []complex128, reals []float64, ok bool) {
	c := legendreL(n)
	e2 := math.Exp(lnE2)
	d := make([]float64, len(c))
	for j, v := range c {
		d[j] = e2 * v
	}
	d[0]++
	// Start from the Butterworth poles of the same ε, mapped to
	// x = 2ω² − 1 = −2s² − 1: the optimum-L poles lie close to them. A
	// pole in the upper left quadrant maps to x with Im x > 0, the real
	// pole (odd n) to a real x < −1; D is real, so only those are
	// iterated.
	r := math.Exp(-lnE2 / (2 * float64(n)))
	xu := make([]complex128, n/2)
	for i := range xu {
		phi := math.Pi/2 + float64(2*i+1)*math.Pi/float64(2*n)
		s := cmplx.Rect(r, phi)
		xu[i] = -2*s*s - 1
	}
	var xr []float64
	if n%2 == 1 {
		xr = []float64{-2*r*r - 1}
	}
	step := func(z complex128) complex128 {
		v, dv := legendreSeries(d, z)
		return v / dv
	}
	if !aberthConj(xu, xr, step, 1e-14, 1e-9, 200) {
		return legendreRootsFull(n, r, step)
	}
	for i, z := range xu {
		xu[i] = z - step(z) // one more Newton step at full accuracy
		s := leftRoot(-(xu[i] + 1) / 2)
		if imag(s) < 0 {
			s = cmplx.Conj(s)
		}
		xu[i] = s
	}
	for i, z := range xr {
		z -= real(step(complex(z, 0)))
		xr[i] = -math.Sqrt((z + 1) / -2)
	}
	return xu, xr, true
}

// legendreRootsFull is the fallback of legendreRoots: all n zeros of D
// iterated together from the same Butterworth starting values, nudged off
// conjugate symmetry, then paired.
func legendreRootsFull(n int, r float64, step func(complex128) complex128) (upper []complex128, reals []float64, ok bool) {
	x := make([]complex128, n)
	for i := range x {
		phi := math.Pi/2 + float64(2*i+1)*math.Pi/float64(2*n)
		s := cmplx.Rect(r, phi)
		x[i] = -2*s*s - 1 + complex(0, 1e-3*r*r*float64(i+1)/float64(n))
	}
	if !aberthAll(x, step, 1e-14, 1e-9, 200) {
		return nil, nil, false
	}
	for i, z := range x {
		z -= step(z)
		x[i] = leftRoot(-(z + 1) / 2)
	}
	return splitConjugates(x)
}

// legendre returns the optimum-L prototype normalised to rippleDB at
// 1 rad/s.
func legendre(n int, rippleDB float64) zpk.ZPK {
	upper, reals, ok := legendreRoots(n, lnPow10m1(rippleDB))
	if !ok || 2*len(upper)+len(reals) != n {
		return zpk.ZPK{Gain: math.NaN()}
	}
	return zpk.ZPK{Poles: assemble(upper, reals...), Gain: dcGain(1, upper, reals, nil)}
}

// LegendreSearchCap is the highest optimum-L order that [MinOrder]
// evaluates when looking for the order a mask would need beyond
// [MaxOrder].
const LegendreSearchCap = 40

// legendreMinOrder searches n = 1, 2, … for the first order whose loss at
// ratio reaches attenDB; the loss at a fixed ratio > 1 rises with n.
func legendreMinOrder(rippleDB, attenDB, ratio float64) (int, error) {
	for n := 1; n <= LegendreSearchCap; n++ {
		if legendreLossAt(n, rippleDB, ratio) >= attenDB {
			if n <= MaxOrder {
				return n, nil
			}
			return 0, &OrderError{Needed: n, Max: MaxOrder}
		}
	}
	return 0, &OrderError{Needed: LegendreSearchCap + 1, Max: MaxOrder, atLeast: true}
}

// legendreEdge returns the normalised frequency where the order-n
// optimum-L prototype's loss reaches attenDB: L_n(ω²) = ε_A²/ε², solved by
// bisection on ln ω (L_n increases for ω ≥ 1).
func legendreEdge(n int, rippleDB, attenDB float64) float64 {
	c := legendreL(n)
	target := lnPow10m1(attenDB) - lnPow10m1(rippleDB) // ln L_n at the edge
	f := func(lw float64) float64 {
		w := math.Exp(lw)
		return legendreLnL(c, 2*w*w-1) - target
	}
	lo, hi := 0.0, 1.0
	for f(hi) < 0 && hi < 1e4 {
		lo, hi = hi, 2*hi
	}
	return math.Exp(bisect(f, lo, hi))
}

// bisect returns the root of the increasing f in [lo, hi] by bisection to
// rounding level.
func bisect(f func(float64) float64, lo, hi float64) float64 {
	for range 200 {
		mid := (lo + hi) / 2
		if mid <= lo || mid >= hi {
			break
		}
		if f(mid) < 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}
