package proto

import (
	"math"
	"sync"

	"github.com/polewright/polewright/synth/zpk"
)

// The Gaussian prototype approximates the Gaussian magnitude
// |H(jω)|² = e^(−a·ω²) by the truncated series of its reciprocal:
//
//	|H(jω)|² = 1/e_n(a·ω²),   e_n(z) = Σ_{k=0..n} z^k/k!,
//
// the classical Taylor-series form of the Gaussian approximation (a
// monotonic, all-pole magnitude whose step response has almost no
// overshoot). a > 0 is chosen so that the loss at ω = 1 is rippleDB:
// e_n(a) = 10^(rippleDB/10). The poles are s = −√(−z/a) for the zeros z of
// e_n (H(s)·H(−s) = 1/e_n(−a·s²)); e_n is the defining series itself, so
// nothing is expanded.

// gaussLnSum returns ln Σ_{k=k0..n} y^k/k! for y > 0, k0 = 0 or 1, as a
// log-sum-exp, so that it neither overflows nor loses the small terms.
func gaussLnSum(n, k0 int, lny float64) (v, dv float64) {
	m := math.Inf(-1)
	lf := 0.0
	for k := 1; k <= n; k++ {
		lf += math.Log(float64(k))
		m = math.Max(m, float64(k)*lny-lf)
	}
	if k0 == 0 {
		m = math.Max(m, 0)
	}
	sum, dsum := 0.0, 0.0
	if k0 == 0 {
		sum = math.Exp(-m)
	}
	lf = 0
	for k := 1; k <= n; k++ {
		lf += math.Log(float64(k))
		w := math.Exp(float64(k)*lny - lf - m)
		sum += w
		dsum += float64(k) * w
	}
	return m + math.Log(sum), dsum / sum
}

// gaussLnA returns ln a for the order-n Gaussian normalised to rippleDB at
// 1 rad/s: the solution of ln Σ_{k=1..n} a^k/k! = ln(10^(rippleDB/10) − 1),
// by Newton's method on t = ln a. The left side is convex and increasing
// in t and at t = ln(10^(rippleDB/10) − 1) it is at least the right side,
// so the iteration falls monotonically onto the root.
func gaussLnA(n int, rippleDB float64) float64 {
	target := lnPow10m1(rippleDB)
	if target < 300 && target > -300 {
		// Plain arithmetic while nothing can overflow: Newton on
		// f(a) = Σ_{k=1..n} a^k/k! − (10^(rippleDB/10) − 1), convex and
		// increasing, from the smaller of 10^(rippleDB/10) − 1 and
		// (n!·(10^(rippleDB/10) − 1))^(1/n), where f ≥ 0 (the first and the
		// last term alone reach the right side).
		rhs := math.Exp(target)
		lnFact := 0.0
		for k := 2; k <= n; k++ {
			lnFact += math.Log(float64(k))
		}
		a := math.Min(rhs, math.Exp((lnFact+target)/float64(n)))
		for range 200 {
			// f and f′ = e_{n−1}(a) by Horner, the k = 0 term left out.
			f, df := 0.0, 1.0
			term := 1.0
			for k := 1; k <= n; k++ {
				term *= a / float64(k)
				f += term
				if k < n {
					df += term
				}
			}
			step := (f - rhs) / df
			a -= step
			if math.Abs(step) <= 1e-16*a {
				break
			}
		}
		if a > 0 && !math.IsInf(a, 0) {
			return math.Log(a)
		}
	}
	t := target
	for range 200 {
		g, dg := gaussLnSum(n, 1, t)
		step := (g - target) / dg
		t -= step
		if math.Abs(step) <= 1e-15*math.Max(1, math.Abs(t)) {
			break
		}
	}
	return t
}

// gaussianLossAt returns the loss in dB at ratio of the order-n Gaussian
// prototype normalised to rippleDB at 1 rad/s.
func gaussianLossAt(n int, rippleDB, ratio float64) float64 {
	lnA := gaussLnA(n, rippleDB)
	g, _ := gaussLnSum(n, 0, lnA+2*math.Log(ratio))
	return g * (10 / math.Ln10)
}

// expSeriesStep returns e_n(z)/e_n′(z), with e_n′ = e_{n−1} = e_n − z^n/n!.
// e_n is evaluated in nested form, 1 + z(1 + z/2(1 + … (1 + z/n))).
func expSeriesStep(n int, z complex128) complex128 {
	b := complex128(1)
	t := complex128(1)
	for k := n; k >= 1; k-- {
		r := 1 / float64(k)
		zb := z * b
		b = 1 + complex(real(zb)*r, imag(zb)*r)
		zt := z * t
		t = complex(real(zt)*r, imag(zt)*r)
	}
	return b / (b - t)
}

// expSeriesZeros returns the n zeros of e_n, or nil if the iteration did
// not settle. They depend on n alone, so those of orders up to MaxOrder
// are computed once and kept.
func expSeriesZeros(n int) []complex128 {
	if n <= MaxOrder {
		expZeros.once[n].Do(func() { expZeros.z[n] = findExpSeriesZeros(n) })
		return expZeros.z[n]
	}
	return findExpSeriesZeros(n)
}

var expZeros struct {
	once [MaxOrder + 1]sync.Once
	z    [MaxOrder + 1][]complex128
}

func findExpSeriesZeros(n int) []complex128 {
	if n == 1 {
		return []complex128{-1}
	}
	// The zeros of e_n lie in 1 ≤ |z| ≤ n (Eneström–Kakeya: the ratios
	// of consecutive coefficients are 1…n), near n times the curve
	// |w·e^(1−w)| = 1 (Szegő). Start on a circle through that region.
	z := make([]complex128, n)
	for i := range z {
		phi := 2*math.Pi*(float64(i)+0.25)/float64(n) + 0.1
		z[i] = complex(0.3*float64(n), 0) + complex(0.7*float64(n)+0.5, 0)*complex(math.Cos(phi), math.Sin(phi))
	}
	step := func(u complex128) complex128 { return expSeriesStep(n, u) }
	if !aberthAll(z, step, 1e-14, 1e-9, 300) {
		return nil
	}
	return z
}

// gaussianRoots returns the left-half-plane poles of the order-n Gaussian
// prototype with a = e^lnA.
func gaussianRoots(n int, lnA float64) (upper []complex128, reals []float64, ok bool) {
	zeros := expSeriesZeros(n)
	if zeros == nil {
		return nil, nil, false
	}
	z := make([]complex128, n)
	r := math.Exp(-lnA / 2)
	for i, u := range zeros {
		z[i] = leftRoot(-u) * complex(r, 0)
	}
	return splitConjugates(z)
}

// gaussian returns the Gaussian prototype normalised to rippleDB at
// 1 rad/s.
func gaussian(n int, rippleDB float64) zpk.ZPK {
	upper, reals, ok := gaussianRoots(n, gaussLnA(n, rippleDB))
	if !ok || 2*len(upper)+len(reals) != n {
		return zpk.ZPK{Gain: math.NaN()}
	}
	return zpk.ZPK{Poles: assemble(upper, reals...), Gain: dcGain(1, upper, reals, nil)}
}

// gaussianEdge returns the normalised frequency where the order-n
// Gaussian prototype's loss reaches attenDB: e_n(a·ω²) = 10^(attenDB/10).
func gaussianEdge(n int, rippleDB, attenDB float64) float64 {
	// a·ω² is the value a' of the order-n normalisation to attenDB.
	return math.Exp((gaussLnA(n, attenDB) - gaussLnA(n, rippleDB)) / 2)
}

// gaussianMinOrder searches n = 1, 2, … for the first order whose loss at
// ratio reaches attenDB. The loss at a fixed ratio rises with n toward the
// Gaussian limit rippleDB·ratio² (checked numerically in the tests), so a
// mask asking at least that much is met by no order.
func gaussianMinOrder(rippleDB, attenDB, ratio float64) (int, error) {
	limit := rippleDB * ratio * ratio
	if attenDB >= limit {
		return 0, &OrderError{Max: MaxOrder, Unreachable: true, limitDB: limit}
	}
	prev := math.Inf(-1)
	for n := 1; n <= BesselSearchCap; n++ {
		l := gaussianLossAt(n, rippleDB, ratio)
		if l >= attenDB {
			if n <= MaxOrder {
				return n, nil
			}
			return 0, &OrderError{Needed: n, Max: MaxOrder}
		}
		if l <= prev {
			// The series has converged to the limit in float64: no
			// higher order gives more.
			return 0, &OrderError{Max: MaxOrder, Unreachable: true, limitDB: l}
		}
		prev = l
	}
	return 0, &OrderError{Needed: BesselSearchCap + 1, Max: MaxOrder, atLeast: true}
}
