package proto

import "math"

// Jacobi elliptic functions and complete elliptic integrals by descending
// Landen transformations, in the normalised form used by Orfanidis (see the
// package References): arguments are given in units of the quarter period
// K, so sn(u·K, k) comes from sin(uπ/2) and the moduli sequence
// k = k₀ > k₁ > … → 0, and K = π/2·∏(1+k_i).
//
// Every routine takes a modulus together with its complement k′ = √(1−k²),
// the smaller of the two computed by the caller from quantities that do
// not cancel, so that moduli within rounding of 0 or 1 keep full relative
// accuracy. Complex arguments are handled by the addition theorem with
// real sn, cn, dn (see elliptic), which keeps small real parts accurate
// where a complex Landen recursion would only be accurate relative to the
// modulus of the result.

// landenMax bounds the Landen sequence. Convergence is quadratic once k′ is
// not tiny; from k′ = 1e-300 it takes about 20 steps.
const landenMax = 40

// landenTiny ends the sequence: a modulus below it changes nothing for
// arguments |w| < 1e20.
const landenTiny = 1e-60

// landen is the descending Landen sequence of a modulus.
type landen struct {
	k   [landenMax]float64 // k₁, k₂, …, k_m with k_{i+1} = (k_i/(1+k_i′))²
	kc  [landenMax]float64 // their complements k_i′
	m   int
	k0  float64 // the modulus itself
	kp0 float64 // its complement
	cap float64 // complete integral K(k₀) = π/2·∏(1+k_i)
}

// newLanden returns the Landen sequence of modulus k with complement kp
// (both in [0, 1]; the smaller of the two is taken as exact). For kp = 0
// (k = 1) K is +Inf. The complement recursion
// k′_{i+1} = 2√k′_i/(1+k′_i) is exact and avoids forming 1−k².
func newLanden(k, kp float64) landen {
	// Make the pair consistent to rounding (k² + k′² = 1) by recomputing
	// the larger from the smaller: an inconsistency of a few ulps in a
	// modulus near 1 would otherwise grow through the sequence (K(k) near
	// k = 1 depends on k through 1/k′²).
	if k <= kp {
		kp = math.Sqrt((1 - k) * (1 + k))
	} else {
		k = math.Sqrt((1 - kp) * (1 + kp))
	}
	l := landen{k0: k, kp0: kp}
	if !(kp > 0) {
		// k = 1: K is infinite and nothing built on it is representable.
		l.cap = math.Inf(1)
		return l
	}
	prod := 1.0
	for l.m < landenMax && k > landenTiny {
		k /= 1 + kp
		k *= k
		kp = 2 * math.Sqrt(kp) / (1 + kp)
		l.k[l.m], l.kc[l.m] = k, kp
		l.m++
		prod *= 1 + k
	}
	l.cap = math.Pi / 2 * prod
	return l
}

// scd returns sn, cn and dn of u·K for u in [0, 1] (units of K), each with
// full relative accuracy even where it is small:
//
//   - for u ≤ 1/2, sn by the ascending recursion w ← (1+k_i)·w/(1+k_i·w²)
//     from w = sin(uπ/2), carrying e = 1−w alongside by
//     e ← e·(1−k_i·w)/(1+k_i·w²), where 1−k_i·w = (1−k_i) + k_i·e with
//     1−k_i = k_i′²/(1+k_i) if it would cancel, so that cn = √(e·(1+sn))
//     is accurate even when sn is within rounding of 1 (k′ tiny), and
//     dn = √(k′² + k²·cn²) (a sum, not 1 − k²·sn²);
//   - for u > 1/2, from t = 1−u by the quarter-period shift
//     sn(K−t) = cn(t)/dn(t), cn(K−t) = k′·sn(t)/dn(t), dn(K−t) = k′/dn(t),
//     with 1 − sn(K−t) = k′²·sn²(t)/((dn(t)+cn(t))·dn(t)) when sn is
//     near 1.
func (l *landen) scd(u float64) (sn, cn, dn float64) {
	kp := l.kp0
	t := u
	if u > 0.5 {
		t = 1 - u
	}
	w := math.Sin(t * math.Pi / 2)
	e := math.Sin((1 - t) * math.Pi / 4)
	e *= 2 * e // 1 − sin(tπ/2)
	for i := l.m - 1; i >= 0; i-- {
		ki, kci := l.k[i], l.kc[i]
		den := 1 + ki*w*w
		f := 1 - ki*w // 1 − k_i·w, rewritten where it cancels
		if f < 0.5 {
			f = kci*kci/(1+ki) + ki*e
		}
		e *= f / den
		w *= (1 + ki) / den
	}
	if e < 0.5 {
		w = 1 - e // as accurate as e, and consistent with it
	}
	c := math.Sqrt(e * (1 + w))
	d := math.Hypot(kp, l.k0*c)
	if u > 0.5 {
		// 1 − cn/dn = k′²·sn²/((dn+cn)·dn), from dn² − cn² = k′²·sn².
		s := c / d
		if om := kp * kp * w * w / ((d + c) * d); om < 0.5 {
			s = 1 - om
		}
		return s, kp * w / d, kp / d
	}
	return w, c, d
}

// asnImag returns the real v ≥ 0 with sn(j·v·K, k) = j·x for x ≥ 0, i.e.
// v·K = F(atan x, k′), by the descending (inverse) Landen recursion
// w_i = 2w_{i−1}/((1+k_i)(1+√(1−k_{i−1}²w_{i−1}²))) with w = j·y kept
// imaginary, then v = (2/π)·asinh(y_m).
func (l *landen) asnImag(x float64) float64 {
	y, kprev := x, l.k0
	for i := 0; i < l.m; i++ {
		ki := l.k[i]
		y = 2 * y / ((1 + ki) * (1 + math.Hypot(1, kprev*y)))
		kprev = ki
	}
	return 2 / math.Pi * math.Asinh(y)
}

// ellipK returns K(k) and K′(k) = K(k′) for modulus k with complement kp.
func ellipK(k, kp float64) (float64, float64) {
	a, b := newLanden(k, kp), newLanden(kp, k)
	return a.cap, b.cap
}

// kFromNome returns the modulus whose nome is q (0 ≤ q ≤ e^(−π)):
// k = θ₂²(q)/θ₃²(q) = 4√q·(Σ_{m≥0} q^(m(m+1)))² / (1 + 2Σ_{m≥1} q^(m²))².
// For q ≤ e^(−π) the terms fall below 1e-17 by m = 4.
func kFromNome(q float64) float64 {
	num, den := 1.0, 1.0
	for m := 1; m <= 6; m++ {
		num += math.Pow(q, float64(m*(m+1)))
		den += 2 * math.Pow(q, float64(m*m))
	}
	r := num / den
	return 4 * math.Sqrt(q) * r * r
}

// ellipdeg solves the degree equation N·K′(k)/K(k) = K′(k₁)/K(k₁) for the
// selectivity modulus k (k₁ = the discrimination modulus, k₁′ its
// complement) and returns k and k′. The nome q = exp(−π·K′/K) gives k from
// a theta-function series when K′/K ≥ 1, otherwise the complementary nome
// exp(−π·K/K′) gives k′ the same way, so both stay accurate.
func ellipdeg(n int, k1, k1p float64) (float64, float64) {
	c1, c1p := ellipK(k1, k1p)
	tau := c1p / (float64(n) * c1) // K′/K of the selectivity modulus
	if tau >= 1 {
		k := kFromNome(math.Exp(-math.Pi * tau))
		return k, math.Sqrt((1 - k) * (1 + k))
	}
	kp := kFromNome(math.Exp(-math.Pi / tau))
	return math.Sqrt((1 - kp) * (1 + kp)), kp
}
