package xform

import (
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/zpk"
)

// LowpassToLowpass scales a 1 rad/s prototype to the edge omegaRadPerSec
// by the substitution s → s/ω: every zero and pole is multiplied by ω and
// the gain by ω^(poles−zeros), so the high-frequency asymptote keeps its
// level. It panics if omegaRadPerSec is not positive and finite.
func LowpassToLowpass(h zpk.ZPK, omegaRadPerSec float64) zpk.ZPK {
	checkFreq("LowpassToLowpass", "omega", omegaRadPerSec)
	out := zpk.ZPK{
		Zeros: make([]complex128, len(h.Zeros)),
		Poles: make([]complex128, len(h.Poles)),
		Gain:  h.Gain * intPow(omegaRadPerSec, len(h.Poles)-len(h.Zeros)),
	}
	for i, z := range h.Zeros {
		out.Zeros[i] = scaleC(z, omegaRadPerSec)
	}
	for i, p := range h.Poles {
		out.Poles[i] = scaleC(p, omegaRadPerSec)
	}
	return out
}

// LowpassToHighpass maps a lowpass prototype to a highpass with edge
// omegaRadPerSec by the substitution s → ω/s. Each finite root r becomes
// ω/r; the prototype's zeros at infinity become zeros at s = 0, stored
// explicitly (one per missing zero). The gain is
// K·∏(−zᵢ)/∏(−pⱼ), so the response at s → ∞ equals the prototype's at
// s = 0, as in SciPy's lp2hp_zpk.
//
// It panics if omegaRadPerSec is not positive and finite, if the prototype
// has more zeros than poles, or if it has a zero or pole at s = 0 (which
// would move to infinity).
func LowpassToHighpass(h zpk.ZPK, omegaRadPerSec float64) zpk.ZPK {
	const fn = "LowpassToHighpass"
	checkFreq(fn, "omega", omegaRadPerSec)
	degree := relativeDegree(fn, h)
	checkNoOrigin(fn, h)
	out := zpk.ZPK{
		Zeros: make([]complex128, 0, len(h.Zeros)+degree),
		Poles: make([]complex128, len(h.Poles)),
		Gain:  h.Gain * reflectionGain(h),
	}
	for _, z := range h.Zeros {
		out.Zeros = append(out.Zeros, scaleC(inv(z), omegaRadPerSec))
	}
	for range degree {
		out.Zeros = append(out.Zeros, 0)
	}
	for i, p := range h.Poles {
		out.Poles[i] = scaleC(inv(p), omegaRadPerSec)
	}
	return out
}

// LowpassToBandpass maps a lowpass prototype to a bandpass centred on
// ω0 = centerRadPerSec with bandwidth B = bandwidthRadPerSec by the
// substitution s → (s² + ω0²)/(B·s). Every finite root r gives the two
// roots of s² − r·B·s + ω0² = 0, so the order doubles; each zero at
// infinity of the prototype gives one zero at s = 0 (its partner stays at
// infinity). The gain is K·B^(poles−zeros), as in SciPy's lp2bp_zpk.
//
// For each prototype root the two new roots are stored next to each other.
// It panics if either frequency is not positive and finite or if the
// prototype has more zeros than poles.
func LowpassToBandpass(h zpk.ZPK, centerRadPerSec, bandwidthRadPerSec float64) zpk.ZPK {
	const fn = "LowpassToBandpass"
	checkFreq(fn, "center", centerRadPerSec)
	checkFreq(fn, "bandwidth", bandwidthRadPerSec)
	degree := relativeDegree(fn, h)
	half := 0.5 * bandwidthRadPerSec
	out := zpk.ZPK{
		Zeros: make([]complex128, 0, 2*len(h.Zeros)+degree),
		Poles: make([]complex128, 0, 2*len(h.Poles)),
		Gain:  h.Gain * intPow(bandwidthRadPerSec, degree),
	}
	for _, z := range h.Zeros {
		r1, r2 := quadRoots(scaleC(z, half), centerRadPerSec)
		out.Zeros = append(out.Zeros, r1, r2)
	}
	for range degree {
		out.Zeros = append(out.Zeros, 0)
	}
	for _, p := range h.Poles {
		r1, r2 := quadRoots(scaleC(p, half), centerRadPerSec)
		out.Poles = append(out.Poles, r1, r2)
	}
	return out
}

// LowpassToBandstop maps a lowpass prototype to a bandstop centred on
// ω0 = centerRadPerSec with stopband width B = bandwidthRadPerSec by the
// substitution s → B·s/(s² + ω0²). Every finite root r gives the two roots
// of s² − (B/r)·s + ω0² = 0; each zero at infinity of the prototype gives
// the pair of zeros ±jω0. The gain is K·∏(−zᵢ)/∏(−pⱼ), so the response at
// DC and at s → ∞ equals the prototype's at s = 0, as in SciPy's
// lp2bs_zpk.
//
// For each prototype root the two new roots are stored next to each other.
// It panics if either frequency is not positive and finite, if the
// prototype has more zeros than poles, or if it has a zero or pole at
// s = 0.
func LowpassToBandstop(h zpk.ZPK, centerRadPerSec, bandwidthRadPerSec float64) zpk.ZPK {
	const fn = "LowpassToBandstop"
	checkFreq(fn, "center", centerRadPerSec)
	checkFreq(fn, "bandwidth", bandwidthRadPerSec)
	degree := relativeDegree(fn, h)
	checkNoOrigin(fn, h)
	half := 0.5 * bandwidthRadPerSec
	out := zpk.ZPK{
		Zeros: make([]complex128, 0, 2*len(h.Zeros)+2*degree),
		Poles: make([]complex128, 0, 2*len(h.Poles)),
		Gain:  h.Gain * reflectionGain(h),
	}
	for _, z := range h.Zeros {
		r1, r2 := quadRoots(scaleC(inv(z), half), centerRadPerSec)
		out.Zeros = append(out.Zeros, r1, r2)
	}
	for range degree {
		out.Zeros = append(out.Zeros, complex(0, centerRadPerSec), complex(0, -centerRadPerSec))
	}
	for _, p := range h.Poles {
		r1, r2 := quadRoots(scaleC(inv(p), half), centerRadPerSec)
		out.Poles = append(out.Poles, r1, r2)
	}
	return out
}

// quadRoots returns the two roots of s² − 2a·s + w0² = 0, that is
// a ± sqrt(a² − w0²), without cancellation: the root of larger magnitude
// is formed by adding the square root with the sign that points the same
// way as a, and the other root is w0²/that root (their product is w0²).
//
// The cases that must keep an exact structure are done in real arithmetic:
// a real a gives two real roots or an exactly conjugate pair, and a purely
// imaginary a gives two purely imaginary roots. A general complex a is
// solved for the member of {a, conj(a)} with positive imaginary part and
// conjugated afterwards if needed, so that a and conj(a) give exactly
// conjugate results.
func quadRoots(a complex128, w0 float64) (r1, r2 complex128) {
	w02 := w0 * w0
	ar, ai := real(a), imag(a)
	switch {
	case ai == 0:
		// disc = a² − w0², formed as a product to avoid cancellation near a = ±w0.
		disc := (ar - w0) * (ar + w0)
		if disc >= 0 {
			big := ar + math.Copysign(math.Sqrt(disc), ar)
			return complex(big, 0), complex(w02/big, 0)
		}
		d := math.Sqrt(-disc)
		return complex(ar, d), complex(ar, -d)
	case ar == 0:
		// s = j·t with t² − 2·ai·t − w0² = 0: t = ai ± hypot(ai, w0).
		big := ai + math.Copysign(math.Hypot(ai, w0), ai)
		return complex(0, big), complex(0, -w02/big)
	}
	flip := ai < 0
	if flip {
		a = cmplx.Conj(a)
	}
	w := complex(w0, 0)
	d := cmplx.Sqrt((a - w) * (a + w))
	if real(a)*real(d)+imag(a)*imag(d) < 0 {
		d = -d
	}
	r1 = a + d
	r2 = scaleC(inv(r1), w02)
	if flip {
		r1, r2 = cmplx.Conj(r1), cmplx.Conj(r2)
	}
	return r1, r2
}

// reflectionGain returns real(∏(−zᵢ)/∏(−pⱼ)), the factor by which the
// s → ω/s family of mappings changes the gain. Zeros and poles are taken
// in alternation so that the running value stays near unit size.
func reflectionGain(h zpk.ZPK) float64 {
	g := complex(1, 0)
	for i := range max(len(h.Zeros), len(h.Poles)) {
		if i < len(h.Zeros) {
			g *= -h.Zeros[i]
		}
		if i < len(h.Poles) {
			g /= -h.Poles[i]
		}
	}
	return real(g)
}

// inv returns 1/r with Smith's scaling, so that neither overflow nor
// underflow occurs in the intermediate |r|², and so that inv(conj(r)) is
// exactly conj(inv(r)), a real r gives a real result and a purely
// imaginary r a purely imaginary one.
func inv(r complex128) complex128 {
	x, y := real(r), imag(r)
	switch {
	case y == 0:
		return complex(1/x, 0)
	case x == 0:
		return complex(0, -1/y)
	case math.Abs(x) >= math.Abs(y):
		q := y / x
		d := x + y*q
		return complex(1/d, -q/d)
	default:
		q := x / y
		d := x*q + y
		return complex(q/d, -1/d)
	}
}

// scaleC multiplies r by the real factor f component by component (a
// complex product would add 0·f terms whose rounding and sign are not
// needed).
func scaleC(r complex128, f float64) complex128 {
	return complex(real(r)*f, imag(r)*f)
}

// intPow returns x^n for an integer n by repeated multiplication.
func intPow(x float64, n int) float64 {
	if n < 0 {
		return 1 / intPow(x, -n)
	}
	v := 1.0
	for range n {
		v *= x
	}
	return v
}

func checkFreq(fn, what string, v float64) {
	if !(v > 0) || math.IsInf(v, 1) {
		panic("xform: " + fn + ": " + what + " frequency must be positive and finite")
	}
}

func relativeDegree(fn string, h zpk.ZPK) int {
	d := len(h.Poles) - len(h.Zeros)
	if d < 0 {
		panic("xform: " + fn + ": improper prototype (more zeros than poles)")
	}
	return d
}

func checkNoOrigin(fn string, h zpk.ZPK) {
	for _, z := range h.Zeros {
		if z == 0 {
			panic("xform: " + fn + ": prototype has a zero at s = 0")
		}
	}
	for _, p := range h.Poles {
		if p == 0 {
			panic("xform: " + fn + ": prototype has a pole at s = 0")
		}
	}
}
