package proto

import (
	"math"

	"github.com/polewright/polewright/synth/zpk"
)

// minTransition is the narrowest elliptic transition band ωs/ωp − 1 that
// Lowpass designs. The poles and zeros nearest the band edge lie within
// about ωs − 1 of ω = 1, so their float64 positions (±1.1e-16) alone put
// the loss there in error by about 2e-15/(ωs − 1) dB: 1e-9 dB at
// ωs − 1 = 2e-6, 2e-6 dB at this limit.
const minTransition = 1e-9

// discrimination returns the discrimination modulus k₁ = εp/εs and its
// complement, εp² = 10^(Ap/10)−1, εs² = 10^(As/10)−1. The complement uses
// εs²−εp² = 10^(Ap/10)·(10^((As−Ap)/10)−1), which does not cancel.
func discrimination(ap, as float64) (k1, k1p float64) {
	lnEp2, lnEs2 := lnPow10m1(ap), lnPow10m1(as)
	k1 = math.Exp((lnEp2 - lnEs2) / 2)
	k1p = math.Exp((ap*(math.Ln10/10) + lnPow10m1(as-ap) - lnEs2) / 2)
	return k1, k1p
}

// elliptic designs the elliptic prototype with
// |H|² = 1/(1+εp²·R_N²(ω)), R_N(cd(uK, k)) = cd(N·u·K₁, k₁):
//
//   - the selectivity k = 1/ωs solves the degree equation (ellipdeg);
//   - the passband peaks and stopband zeros sit at ζ_i = cd(u_i·K, k) and
//     1/(k·ζ_i), u_i = (2i−1)/N, i = 1…⌊N/2⌋;
//   - the poles are j·cd((u_i − j·v₀)·K, k) with v₀ = v/N, where
//     sn(j·v·K₁, k₁) = j/εp, and for odd N the real pole j·sn(j·v₀·K, k).
//
// The poles are evaluated as j·sn(x + j·y, k), x = (1−u_i)·K, y = v₀·K, by
// the addition theorem
//
//	sn(x+jy, k) = (s·d₁ + j·c·d·s₁·c₁)/(c₁² + k²·s²·s₁²)
//
// with s, c, d = sn, cn, dn(x, k) and s₁, c₁, d₁ = sn, cn, dn(y, k′), so
// that p = (−c·d·s₁·c₁ + j·s·d₁)/(c₁² + k²·s²·s₁²): a product of positive
// factors for the real part, which is tiny for the poles next to the band
// edge of a very selective design, and accurate relative to itself. The
// real pole is −s₁/c₁ (x = 0).
func elliptic(n int, ap, as float64) zpk.ZPK {
	lnEp := lnPow10m1(ap) / 2
	if n == 1 {
		// R_1(ω) = ω: the first-order pole −1/εp for every approximation.
		p := -math.Exp(-lnEp)
		return zpk.ZPK{Poles: []complex128{complex(p, 0)}, Gain: -p}
	}
	k1, k1p := discrimination(ap, as)
	k, kp := ellipdeg(n, k1, k1p)
	if !(k > 0 && kp > 0) || kp*kp/((1+k)*k) < minTransition {
		// ωs − 1 = (1−k)/k = k′²/((1+k)·k) is too small for float64
		// poles and zeros (see minTransition), or the modulus underflows.
		return zpk.ZPK{Gain: math.NaN()}
	}
	lk, lc := newLanden(k, kp), newLanden(kp, k)
	l1 := newLanden(k1, k1p)
	v0 := l1.asnImag(math.Exp(-lnEp)) / float64(n) // units of K
	// y = v₀·K in units of K′ for the complementary functions.
	s1, c1, d1 := lc.scd(v0 * lk.cap / lc.cap)

	half := n / 2
	upperZ := make([]complex128, 0, half)
	upperP := make([]complex128, 0, half)
	for i := 1; i <= half; i++ {
		u := float64(2*i-1) / float64(n)
		s, c, d := lk.scd(1 - u) // at x = (1−u)·K; s = cd(u·K) = ζ_i
		upperZ = append(upperZ, complex(0, 1/(k*s)))
		den := c1*c1 + k*k*s*s*s1*s1
		upperP = append(upperP, complex(-c*d*s1*c1/den, s*d1/den))
	}
	var reals []float64
	h0 := 1.0
	if n%2 == 1 {
		reals = []float64{-s1 / c1}
	} else {
		h0 = math.Exp(-ap * (math.Ln10 / 20))
	}
	h := zpk.ZPK{Gain: dcGain(h0, upperP, reals, upperZ)}
	h.Poles = assemble(upperP, reals...)
	h.Zeros = assemble(upperZ)
	return h
}

// ellipticOrderBound returns the fractional elliptic order
// K(k)·K′(k₁)/(K′(k)·K(k₁)), k = 1/ratio.
func ellipticOrderBound(ap, as, ratio float64) float64 {
	k1, k1p := discrimination(ap, as)
	k := 1 / ratio
	kp := math.Sqrt((ratio-1)/ratio) * math.Sqrt((ratio+1)/ratio) // √((1−k)(1+k))
	c, cp := ellipK(k, kp)
	c1, c1p := ellipK(k1, k1p)
	return c * c1p / (cp * c1)
}
