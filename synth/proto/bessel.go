package proto

import (
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"github.com/polewright/polewright/synth/zpk"
)

// The reverse Bessel polynomial θ_n(s) = Σ_k (2n−k)!/(2^(n−k)·k!·(n−k)!)·s^k
// is never expanded. Everything here uses its three-term recurrence
// θ_k = (2k−1)·θ_{k−1} + s²·θ_{k−2}, θ_0 = 1, θ_1 = s+1, divided through by
// θ_k(0) = (2k−1)!! so that the values stay near 1:
//
//	r_k = r_{k−1} + s²/((2k−1)(2k−3))·r_{k−2},   r_0 = 1, r_1 = 1+s,
//
// and r_n = θ_n/θ_n(0) = 1/H(s) for the unit-delay Bessel filter. On the jω
// axis s² = −ω² is real, so the real and imaginary parts obey the same real
// recurrence and |r_n(jω)|² is a sum of two squares (no cancellation).

// besselRoots returns the zeros of θ_n (the unit-delay Bessel poles) in the
// canonical order.
//
// The zeros are found together by the Aberth–Ehrlich iteration, run on the
// upper-half-plane zeros and the real zero only (the repulsion terms include
// the conjugates), so that conjugate symmetry is exact. It starts from
// points spread over the region where the zeros lie, first with Newton
// corrections from float64 evaluation of the normalised recurrence (cheap,
// but at order 20 near the real axis only good to about 1e-7 because the
// recurrence cancels there), then with corrections from a double-double
// evaluation (besselNewtonStep) until the steps are at rounding level. The
// result is accurate to a few ulps (checked against 256-bit arithmetic in
// the tests up to order 30).
//
// Should that not settle, the iteration restarts from the eigenvalues of
// the tridiagonal matrix whose characteristic polynomial is the monic
// ordinary Bessel polynomial y_n(x)/(2n−1)!! (zeros x = 1/s), read off the
// recurrence p_k = x·p_{k−1} + p_{k−2}/((2k−1)(2k−3)), p_1 = x+1: diagonal
// (−1, 0, …, 0) and off-diagonal entries ±1/√((2k−1)(2k−3)), antisymmetric
// so that the matrix is balanced; at order 20 its eigenvalues are good to
// about 1e-6. Neither path needs the other for n ≤ 30 (see the tests);
// beyond about 35 even double-double evaluation is too noisy for the
// settling test, and the last iterate is kept (Lowpass's final check
// rejects anything outside the left half plane).
func besselRoots(n int) []complex128 {
	if n == 1 {
		return []complex128{-1}
	}
	upper, re := besselArcGuesses(n)
	besselAberth(n, upper, &re, besselStep64, 1e-9, 100)
	if besselAberth(n, upper, &re, besselNewtonStep, 1e-15, 60) {
		return besselAssemble(n, upper, re)
	}
	if eu, ere, ok := besselEigenGuesses(n); ok && besselAberth(n, eu, &ere, besselNewtonStep, 1e-15, 60) {
		return besselAssemble(n, eu, ere)
	}
	return besselAssemble(n, upper, re)
}

func besselAssemble(n int, upper []complex128, re float64) []complex128 {
	if n%2 == 1 {
		return assemble(upper, re)
	}
	return assemble(upper)
}

// besselEigenGuesses returns starting values from the tridiagonal matrix
// (see besselRoots): n/2 zeros with positive imaginary part and, for odd
// n, the real one. ok is false if the eigenvalues do not split that way.
func besselEigenGuesses(n int) (upper []complex128, re float64, ok bool) {
	a := mat.NewDense(n, n, nil)
	a.Set(0, 0, -1)
	for k := 2; k <= n; k++ {
		b := 1 / math.Sqrt(float64((2*k-1)*(2*k-3)))
		a.Set(k-2, k-1, b)
		a.Set(k-1, k-2, -b)
	}
	var eig mat.Eigen
	if !eig.Factorize(a, mat.EigenNone) {
		return nil, 0, false
	}
	upper = make([]complex128, 0, n/2)
	reals := 0
	for _, x := range eig.Values(nil) {
		s := 1 / x
		switch {
		case imag(s) > 0:
			upper = append(upper, s)
		case imag(s) == 0:
			re = real(s)
			reals++
		}
	}
	return upper, re, len(upper) == n/2 && reals == n%2
}

// besselArcGuesses returns starting values spread over the region where
// the zeros of θ_n lie (|Im s| < n, −0.7n < Re s < 0).
func besselArcGuesses(n int) ([]complex128, float64) {
	m := n / 2
	upper := make([]complex128, m)
	for i := range upper {
		phi := math.Pi / 2 * (float64(i) + 0.5) / float64(m)
		upper[i] = complex(-0.7*float64(n)*math.Cos(phi), 0.9*float64(n)*math.Sin(phi))
	}
	return upper, -0.7 * float64(n)
}

// besselAberth runs at most maxSweeps Aberth–Ehrlich sweeps over the upper
// zeros and (odd n) the real zero re, in place, with Newton corrections
// from step. It reports whether the iteration settled (largest relative
// step below tol) with every upper zero still above the real axis. It
// gives up early once the steps, already below 0.1, stop shrinking: the
// evaluation's noise floor (about 1e-6 at order 20 in float64, a few
// percent at order 30).
func besselAberth(n int, upper []complex128, re *float64, step func(int, complex128) complex128, tol float64, maxSweeps int) bool {
	odd := n%2 == 1
	prev := math.Inf(1)
	for range maxSweeps {
		worst := 0.0
		for i, u := range upper {
			w := step(n, u)
			sum := inv(u - cmplx.Conj(u))
			for j, v := range upper {
				if j != i {
					sum += inv(u-v) + inv(u-cmplx.Conj(v))
				}
			}
			if odd {
				sum += inv(u - complex(*re, 0))
			}
			d := w / (1 - w*sum)
			upper[i] = u - d
			worst = math.Max(worst, cmplx.Abs(d)/cmplx.Abs(upper[i]))
		}
		if odd {
			x := *re
			w := real(step(n, complex(x, 0)))
			sum := 0.0
			for _, v := range upper {
				sum += 2 * real(inv(complex(x, 0)-v))
			}
			d := w / (1 - w*sum)
			*re = x - d
			worst = math.Max(worst, math.Abs(d/(*re)))
		}
		if math.IsNaN(worst) {
			return false
		}
		if worst < tol {
			for _, u := range upper {
				if !(imag(u) > 0) {
					return false
				}
			}
			return true
		}
		if worst >= prev && worst < 0.1 {
			return false
		}
		prev = worst
	}
	return false
}

// inv returns 1/z without the range guards of complex division; the
// differences of zeros it is used on are far from overflow and underflow.
func inv(z complex128) complex128 {
	m := real(z)*real(z) + imag(z)*imag(z)
	return complex(real(z)/m, -imag(z)/m)
}

// besselStep64 returns θ_n(s)/θ_n′(s) from the normalised recurrence in
// float64, with θ_n′ = θ_n − s·θ_{n−1}, i.e. r_n/(r_n − s·r_{n−1}/(2n−1)).
func besselStep64(n int, s complex128) complex128 {
	s2 := s * s
	r0, r1 := complex128(1), 1+s
	for k := 2; k <= n; k++ {
		c := 1 / float64((2*k-1)*(2*k-3))
		t := s2 * r0
		r0, r1 = r1, r1+complex(c*real(t), c*imag(t))
	}
	t := s * r0
	c := 1 / float64(2*n-1)
	return r1 / (r1 - complex(c*real(t), c*imag(t)))
}

// besselNewtonStep returns θ_n(s)/θ_n′(s). θ_n and θ_{n−1} come from the
// unnormalised recurrence θ_k = (2k−1)·θ_{k−1} + s²·θ_{k−2} in double-double
// arithmetic (s² formed exactly), so the step stays accurate where float64
// evaluation cancels (ten digits and more at order 20), and the derivative
// from the identity θ_n′(s) = θ_n(s) − s·θ_{n−1}(s). Values stay in range
// for n ≤ 100 and |s| ≤ 3n.
func besselNewtonStep(n int, s complex128) complex128 {
	a, b := real(s), imag(s)
	a2, a2e := twoProd(a, a)
	b2, b2e := twoProd(b, b)
	ab, abe := twoProd(a, b)
	s2 := cdd{ddAdd(dd{a2, a2e}, dd{-b2, -b2e}), dd{2 * ab, 2 * abe}}
	re1, re1e := twoSum(1, a)
	t0, t1 := cdd{re: dd{1, 0}}, cdd{dd{re1, re1e}, dd{b, 0}}
	for k := 2; k <= n; k++ {
		t0, t1 = t1, cddAdd(cddScale(t1, float64(2*k-1)), cddMul(s2, t0))
	}
	sc := cdd{dd{a, 0}, dd{b, 0}}
	st := cddMul(sc, t0)
	d := cddAdd(t1, cdd{ddNeg(st.re), ddNeg(st.im)})
	return t1.complex() / d.complex()
}

// besselLog returns g(ω) = ln|r_n(jω)|² (the unit-delay loss in nepers of
// power) and dg/dω. The real part is carried as o + α, with o = 1 and
// α = Re r − 1 from α_k = α_{k−1} − ω²/((2k−1)(2k−3))·(o + α_{k−2}), so
// that g = log1p(2α + α² + b²) keeps full relative accuracy for losses far
// below 1 dB. Once values pass 1e100 the state is rescaled and carried
// plainly (o = 0, α = Re r), the scale kept in a logarithm.
func besselLog(n int, w float64) (g, dg float64) {
	w2 := w * w
	o := 1.0
	a0, a1, b0, b1 := 0.0, 0.0, 0.0, w // α_0 = α_1 = 0 (r_0 = 1, r_1 = 1 + jω)
	da0, da1, db0, db1 := 0.0, 0.0, 0.0, 1.0
	logScale := 0.0
	for k := 2; k <= n; k++ {
		c := 1 / float64((2*k-1)*(2*k-3))
		a0, a1, da0, da1 = a1, a1-c*w2*(o+a0), da1, da1-c*(2*w*(o+a0)+w2*da0)
		b0, b1, db0, db1 = b1, b1-c*w2*b0, db1, db1-c*(2*w*b0+w2*db0)
		if m := math.Abs(a1) + math.Abs(b1); m > 1e100 {
			const f = 1e-100
			a0, a1, b0, b1 = (o+a0)*f, (o+a1)*f, b0*f, b1*f
			da0, da1, db0, db1 = da0*f, da1*f, db0*f, db1*f
			o = 0
			logScale += 2 * 100 * math.Ln10
		}
	}
	re := o + a1
	m2 := re*re + b1*b1
	dg = 2 * (re*da1 + b1*db1) / m2
	if o == 0 {
		return logScale + math.Log(m2), dg
	}
	return math.Log1p(2*a1 + a1*a1 + b1*b1), dg
}

// besselOmega returns the frequency at which the unit-delay Bessel filter
// of order n has a loss of lossDB, by Newton's method on
// G(t) = ln g(e^t) − ln T with a bisection safeguard inside a bracket.
// g(ω) is increasing; the bracket comes from g(ω) ≥ 2n·ln ω − 2·ln((2n−1)!!)
// (the leading term of |θ_n(jω)|²) and from the small-ω form ω²/(2n−1).
func besselOmega(n int, lossDB float64) float64 {
	target := lossDB * (math.Ln10 / 10)
	lnT := math.Log(target)
	lnDF := 0.0 // ln((2n−1)!!)
	for k := 1; k <= n; k++ {
		lnDF += math.Log(float64(2*k - 1))
	}
	hi := (target + 2*lnDF) / (2 * float64(n)) // ln ω with g ≥ target
	// lo: start from the small-ω estimate and halve until g < target.
	lo := 0.5 * math.Log(target*float64(2*n-1))
	if lo > hi {
		lo = hi
	}
	for range 200 {
		if g, _ := besselLog(n, math.Exp(lo)); g < target {
			break
		}
		lo -= math.Ln2
	}
	t := lo
	for range 100 {
		w := math.Exp(t)
		g, dg := besselLog(n, w)
		f := math.Log(g) - lnT
		if f < 0 {
			lo = t
		} else {
			hi = t
		}
		step := f / (dg * w / g)
		next := t - step
		if !(next > lo && next < hi) || math.IsNaN(next) {
			next = (lo + hi) / 2
		}
		if math.Abs(next-t) <= 1e-15*math.Max(1, math.Abs(t)) || hi-lo <= 1e-15*math.Max(1, math.Abs(t)) {
			t = next
			break
		}
		t = next
	}
	return math.Exp(t)
}

// besselLossAt returns the loss in dB at ratio of the order-n Bessel
// prototype normalised to rippleDB at 1 rad/s.
func besselLossAt(n int, rippleDB, ratio float64) float64 {
	g, _ := besselLog(n, ratio*besselOmega(n, rippleDB))
	return g * (10 / math.Ln10)
}

// bessel returns the Bessel prototype normalised to rippleDB at 1 rad/s.
func bessel(n int, rippleDB float64) zpk.ZPK {
	w0 := besselOmega(n, rippleDB)
	poles := besselRoots(n)
	lg := 0.0
	for i, p := range poles {
		poles[i] = p / complex(w0, 0)
		lg += math.Log(cmplx.Abs(poles[i]))
	}
	return zpk.ZPK{Poles: poles, Gain: math.Exp(lg)}
}

// besselEdge returns the normalised frequency where the order-n Bessel
// prototype's loss reaches attenDB.
func besselEdge(n int, rippleDB, attenDB float64) float64 {
	return besselOmega(n, attenDB) / besselOmega(n, rippleDB)
}

// besselMinOrder searches n = 1, 2, … for the first order whose loss at
// ratio reaches attenDB. At a fixed ratio the loss rises with n to a single
// maximum and then falls back toward the Gaussian limit rippleDB·ratio²
// (checked numerically in the tests), so once it falls (by more than
// rounding) without having reached attenDB no order can.
func besselMinOrder(rippleDB, attenDB, ratio float64) (int, error) {
	peak := math.Inf(-1)
	for n := 1; n <= BesselSearchCap; n++ {
		l := besselLossAt(n, rippleDB, ratio)
		if l >= attenDB {
			if n <= MaxOrder {
				return n, nil
			}
			return 0, &OrderError{Needed: n, Max: MaxOrder}
		}
		if l < peak*(1-1e-12) {
			return 0, &OrderError{Max: MaxOrder, Unreachable: true, limitDB: peak}
		}
		peak = math.Max(peak, l)
	}
	return 0, &OrderError{Needed: BesselSearchCap + 1, Max: MaxOrder, atLeast: true}
}
