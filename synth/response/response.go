package response

import (
	"math"

	"github.com/polewright/polewright/synth/zpk"
)

// radPerHz is 2π, the number of rad/s in one Hz.
const radPerHz = 2 * math.Pi

// RadPerSec converts a frequency in Hz to angular frequency in rad/s.
func RadPerSec(fHz float64) float64 { return radPerHz * fHz }

// hzFromRadPerSec converts an angular frequency in rad/s to Hz; it is the
// inverse of RadPerSec.
func hzFromRadPerSec(omega float64) float64 { return omega / radPerHz }

// axisRelTol is the relative size of real part below which a root counts as
// lying on the jω axis (see the package documentation).
const axisRelTol = 1e-12

// onAxis reports whether the root σ+jw is treated as lying on the jω axis.
func onAxis(sigma, w float64) bool {
	return sigma == 0 || math.Abs(sigma) <= axisRelTol*math.Abs(w)
}

// LogSpaceHz returns n frequencies from loHz to hiHz inclusive, equally
// spaced on a logarithmic axis, in dst (see the package documentation for
// dst). The end points are exactly loHz and hiHz. It panics unless n ≥ 2
// and 0 < loHz ≤ hiHz < +Inf.
func LogSpaceHz(dst []float64, loHz, hiHz float64, n int) []float64 {
	if n < 2 {
		panic("response: LogSpaceHz needs n >= 2")
	}
	if !(loHz > 0) || !(hiHz >= loHz) || math.IsInf(hiHz, 1) {
		panic("response: LogSpaceHz needs 0 < loHz <= hiHz < Inf")
	}
	dst = resize(dst, n)
	l0 := math.Log(loHz)
	step := (math.Log(hiHz) - l0) / float64(n-1)
	for i := range dst {
		dst[i] = math.Exp(l0 + float64(i)*step)
	}
	dst[0], dst[n-1] = loHz, hiHz
	return dst
}

// MagnitudeDB returns 20·log10|H(j2πf)| for each f in freqHz, in dst (see
// the package documentation for dst).
//
// The sum of the log-distances log|j2πf − r| is formed without a logarithm
// per factor: the squared distances σ² + (ω − w)² are multiplied together
// with the binary exponent moved out (math.Frexp) whenever the running
// product leaves [2^-250, 2^250], and one logarithm is taken per frequency.
// This neither overflows nor underflows at any order, for distances up to
// 1e100 rad/s. A zero of H exactly at a grid frequency gives −Inf, a pole
// +Inf; plotting code is expected to clamp.
func MagnitudeDB(dst []float64, h zpk.ZPK, freqHz []float64) []float64 {
	dst = resize(dst, len(freqHz))
	g := gainDB(h.Gain)
	i := 0
	// Four frequencies at a time: four independent chains of products.
	for ; i+4 <= len(freqHz); i += 4 {
		w0, w1, w2, w3 := RadPerSec(freqHz[i]), RadPerSec(freqHz[i+1]), RadPerSec(freqHz[i+2]), RadPerSec(freqHz[i+3])
		z0, z1, z2, z3 := distProduct4(h.Zeros, w0, w1, w2, w3)
		p0, p1, p2, p3 := distProduct4(h.Poles, w0, w1, w2, w3)
		dst[i] = g + ratioDB(z0, p0)
		dst[i+1] = g + ratioDB(z1, p1)
		dst[i+2] = g + ratioDB(z2, p2)
		dst[i+3] = g + ratioDB(z3, p3)
	}
	for ; i < len(freqHz); i++ {
		dst[i] = g + rootsDB(h, RadPerSec(freqHz[i]))
	}
	return dst
}

// gainDB returns 20·log10|k|.
func gainDB(k float64) float64 { return 20 * math.Log10(math.Abs(k)) }

// magnitudeDBAt returns 20·log10|H(jω)| for ω in rad/s.
func magnitudeDBAt(h zpk.ZPK, omega float64) float64 {
	return gainDB(h.Gain) + rootsDB(h, omega)
}

// scaled is the number m·2^e.
type scaled struct {
	m float64
	e int
}

// mul multiplies by d > 0 and renormalises when m leaves [2^-250, 2^250].
func (s *scaled) mul(d float64) {
	s.m *= d
	if s.m > 0x1p250 || s.m < 0x1p-250 {
		s.renorm()
	}
}

// renorm moves the binary exponent of m into e (out of line so that mul
// inlines).
func (s *scaled) renorm() {
	b := math.Float64bits(s.m)
	if e := int(b >> 52 & 0x7ff); e != 0 && e != 0x7ff {
		// A normal number: exactly math.Frexp, by moving the exponent
		// bits (Frexp also handles zero, subnormals, Inf and NaN).
		s.m = math.Float64frombits(b&^(0x7ff<<52) | 1022<<52)
		s.e += e - 1022
		return
	}
	var k int
	s.m, k = math.Frexp(s.m)
	s.e += k
}

// ratioDB returns 20·log10 sqrt(z/p) = 10·log10(z/p).
func ratioDB(z, p scaled) float64 {
	// z.m/p.m lies within 2^±500, so the quotient is safe.
	return 10 * (math.Log10(z.m/p.m) + float64(z.e-p.e)*(math.Log10E*math.Ln2))
}

// rootsDB returns 20·log10 of ∏|jω−zᵢ| / ∏|jω−pⱼ|.
func rootsDB(h zpk.ZPK, omega float64) float64 {
	return ratioDB(distProduct(h.Zeros, omega), distProduct(h.Poles, omega))
}

// distProduct returns ∏|jω − r|².
func distProduct(roots []complex128, omega float64) scaled {
	s := scaled{m: 1}
	for _, r := range roots {
		x, y := real(r), omega-imag(r)
		s.mul(x*x + y*y)
	}
	return s
}

// distProduct4 is distProduct at four frequencies at once.
func distProduct4(roots []complex128, w0, w1, w2, w3 float64) (s0, s1, s2, s3 scaled) {
	s0.m, s1.m, s2.m, s3.m = 1, 1, 1, 1
	for _, r := range roots {
		x, w := real(r), imag(r)
		x2 := x * x
		y0, y1, y2, y3 := w0-w, w1-w, w2-w, w3-w
		s0.mul(x2 + y0*y0)
		s1.mul(x2 + y1*y1)
		s2.mul(x2 + y2*y2)
		s3.mul(x2 + y3*y3)
	}
	return s0, s1, s2, s3
}

// PhaseDeg returns the phase of H(j2πf) in degrees for each f in freqHz, in
// dst (see the package documentation for dst). Frequencies must be
// positive and are expected in ascending order; each value is computed on
// its own, so the result does not depend on the spacing.
//
// The phase is unwrapped analytically: it is the sum over zeros minus the
// sum over poles of each factor's continuous argument arg(jω − r). For a
// root r = σ + jw in the left half plane that is atan2(ω − w, −σ). In the
// right half plane it is the continuation over ω ≥ 0 of the principal value
// at ω = 0: atan2(ω − w, −σ) for ω < w and atan2(ω − w, −σ) − 360° for
// ω ≥ w (so a right-half-plane pair contributes 0 at DC and −360° at high
// frequency, as in an allpass). A root on the jω axis contributes −90°
// below its frequency and +90° above (so a conjugate pair of zeros adds a
// genuine +180° step, and a zero at s = 0 adds +90°); a negative gain adds
// 180°. The phase of a lowpass at DC is therefore 0.
//
// Rather than one arctangent per factor, the factors are multiplied
// together, counting each time the running product crosses the negative
// real axis, and one arctangent is taken at the end for the zeros and one
// for the poles (none for a product that is 1, as when every zero is on
// the axis). This is the same sum, exactly, not an unwrapping heuristic.
func PhaseDeg(dst []float64, h zpk.ZPK, freqHz []float64) []float64 {
	dst = resize(dst, len(freqHz))
	const deg = 180 / math.Pi
	neg := 0.0
	if h.Gain < 0 {
		neg = math.Pi
	}
	i := 0
	// Four frequencies at a time: four independent chains of products.
	for ; i+4 <= len(freqHz); i += 4 {
		w0, w1, w2, w3 := RadPerSec(freqHz[i]), RadPerSec(freqHz[i+1]), RadPerSec(freqHz[i+2]), RadPerSec(freqHz[i+3])
		z0, z1, z2, z3 := argProduct4(h.Zeros, w0, w1, w2, w3)
		p0, p1, p2, p3 := argProduct4(h.Poles, w0, w1, w2, w3)
		dst[i] = (z0.angle() - p0.angle() + neg) * deg
		dst[i+1] = (z1.angle() - p1.angle() + neg) * deg
		dst[i+2] = (z2.angle() - p2.angle() + neg) * deg
		dst[i+3] = (z3.angle() - p3.angle() + neg) * deg
	}
	for ; i < len(freqHz); i++ {
		dst[i] = phaseRad(h, RadPerSec(freqHz[i])) * deg
	}
	return dst
}

// phaseRad returns the analytic phase of H(jω) in radians.
func phaseRad(h zpk.ZPK, omega float64) float64 {
	z := argProduct(h.Zeros, omega)
	p := argProduct(h.Poles, omega)
	ph := z.angle() - p.angle()
	if h.Gain < 0 {
		ph += math.Pi
	}
	return ph
}

// winding is a product of complex factors together with the whole turns
// its argument has made: the sum of the factors' arguments is
// atan2(im, re) + 2π·turns + (π/2)·halfPis. A zero imaginary part counts
// as +0 throughout, so the principal argument of a negative real product
// is π.
type winding struct {
	re, im  float64
	turns   int
	halfPis int
}

// mul multiplies the product by fr + j·fi and counts a turn when the sum of
// the arguments passes ±π. With θ = arg(product) ∈ (−π, π] and
// φ = arg(factor) ∈ (−π, π]: for φ ≥ 0 the sum θ+φ has passed π exactly
// when the imaginary part goes from ≥ 0 to < 0, or when θ = φ = π (the
// product lands on the positive real axis from the negative one); for
// φ < 0 it has passed −π exactly when the imaginary part goes from < 0 to
// ≥ 0. Powers of two keep the product in range.
func (w *winding) mul(fr, fi float64) {
	re := w.re*fr - w.im*fi
	im := w.re*fi + w.im*fr
	if fi >= 0 {
		if w.im >= 0 && (im < 0 || (im == 0 && re > 0 && w.re < 0)) {
			w.turns++
		}
	} else if w.im < 0 && im >= 0 {
		w.turns--
	}
	w.re, w.im = re, im
	if a := math.Abs(re) + math.Abs(im); a > 0x1p500 || a < 0x1p-500 {
		w.renorm()
	}
}

// renorm scales the product by a power of two (exact, and it keeps the
// signs) back to unit size; out of line so that mul inlines.
func (w *winding) renorm() {
	_, k := math.Frexp(math.Abs(w.re) + math.Abs(w.im))
	w.re, w.im = math.Ldexp(w.re, -k), math.Ldexp(w.im, -k)
}

// factor multiplies in jω − r for the root r = sigma + j·wr; axis tells
// whether r counts as lying on the jω axis.
func (w *winding) factor(sigma, wr, omega float64, axis bool) {
	if axis {
		if omega > wr {
			w.halfPis++
		} else if omega < wr {
			w.halfPis--
		}
		return
	}
	// Factor jω − r = −σ + j(ω − w), principal argument in (−π, π].
	fi := omega - wr
	if sigma > 0 && wr > 0 && fi >= 0 {
		// Right half plane, above the root's frequency: the argument has
		// run continuously down through −π and is the principal value − 2π.
		w.turns--
	}
	w.mul(-sigma, fi)
}

// angle returns the total argument.
func (w *winding) angle() float64 {
	im := w.im
	if im == 0 {
		im = 0 // a −0 would turn a principal value of π into −π
	}
	a := float64(w.turns)*(2*math.Pi) + float64(w.halfPis)*(math.Pi/2)
	if im == 0 && w.re > 0 {
		return a // product 1 (or positive real): skip the arctangent
	}
	return a + math.Atan2(im, w.re)
}

// argProduct multiplies the factors jω − r over roots.
func argProduct(roots []complex128, omega float64) winding {
	w := winding{re: 1}
	for _, r := range roots {
		sigma, wr := real(r), imag(r)
		w.factor(sigma, wr, omega, onAxis(sigma, wr))
	}
	return w
}

// argProduct4 is argProduct at four frequencies at once, written out with
// the arithmetic of winding.factor and winding.mul in the loop (they do not
// inline) so that the four chains of products overlap.
func argProduct4(roots []complex128, w0, w1, w2, w3 float64) (a0, a1, a2, a3 winding) {
	omega := [4]float64{w0, w1, w2, w3}
	re := [4]float64{1, 1, 1, 1}
	var im [4]float64
	var turns, halfPis [4]int
	for _, r := range roots {
		sigma, wr := real(r), imag(r)
		if onAxis(sigma, wr) {
			for k, w := range omega {
				if w > wr {
					halfPis[k]++
				} else if w < wr {
					halfPis[k]--
				}
			}
			continue
		}
		rhp := sigma > 0 && wr > 0
		fr := -sigma
		for k, w := range omega {
			fi := w - wr
			if rhp && fi >= 0 {
				turns[k]--
			}
			xr, xi := re[k], im[k]
			nr := xr*fr - xi*fi
			ni := xr*fi + xi*fr
			if fi >= 0 {
				if xi >= 0 && (ni < 0 || (ni == 0 && nr > 0 && xr < 0)) {
					turns[k]++
				}
			} else if xi < 0 && ni >= 0 {
				turns[k]--
			}
			re[k], im[k] = nr, ni
			if a := math.Abs(nr) + math.Abs(ni); a > 0x1p500 || a < 0x1p-500 {
				_, e := math.Frexp(a)
				re[k], im[k] = math.Ldexp(nr, -e), math.Ldexp(ni, -e)
			}
		}
	}
	a0 = winding{re: re[0], im: im[0], turns: turns[0], halfPis: halfPis[0]}
	a1 = winding{re: re[1], im: im[1], turns: turns[1], halfPis: halfPis[1]}
	a2 = winding{re: re[2], im: im[2], turns: turns[2], halfPis: halfPis[2]}
	a3 = winding{re: re[3], im: im[3], turns: turns[3], halfPis: halfPis[3]}
	return a0, a1, a2, a3
}

// GroupDelayS returns the group delay τ(ω) = −dφ/dω in seconds at each f
// in freqHz, in dst (see the package documentation for dst). It is the
// closed-form derivative of the analytic phase of PhaseDeg:
//
//	τ(ω) = Σ_poles −σ/((ω−w)² + σ²) − Σ_zeros −σ/((ω−w)² + σ²)
//
// for roots σ + jw. Roots on the jω axis contribute 0 (the impulse of
// their phase step exactly at their frequency is omitted). No finite
// differences are involved.
func GroupDelayS(dst []float64, h zpk.ZPK, freqHz []float64) []float64 {
	dst = resize(dst, len(freqHz))
	for i, f := range freqHz {
		omega := RadPerSec(f)
		dst[i] = delaySum(h.Poles, omega) - delaySum(h.Zeros, omega)
	}
	return dst
}

// delaySum returns Σ d/dω arg(jω − r) = Σ −σ/((ω−w)² + σ²) over the
// off-axis roots.
func delaySum(roots []complex128, omega float64) float64 {
	var s float64
	for _, r := range roots {
		sigma, w := real(r), imag(r)
		if onAxis(sigma, w) {
			continue
		}
		d := omega - w
		s -= sigma / (d*d + sigma*sigma)
	}
	return s
}

// resize returns dst[:n] if dst is long enough and a new slice otherwise.
func resize(dst []float64, n int) []float64 {
	if len(dst) < n {
		return make([]float64, n)
	}
	return dst[:n]
}
