package topology

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/section"
)

// target is what a stage must realise, read off a section:
//
//	lowpass         g·ω0²/D(s)            first order: g·ω0/(s + ω0)
//	highpass        g·s²/D(s)             first order: g·s/(s + ω0)
//	bandpass        g·(ω0/Q)·s/D(s)
//	notch kinds     k·(s² + ωz²)/D(s),    k = g·ω0²/ωz² (lowpass-notch, notch), g (highpass-notch)
//	allpass         g·(s² − s·ω0/Q + ω0²)/D(s)   first order: g·(ω0 − s)/(s + ω0)
//
// with D(s) = s² + s·ω0/Q + ω0² and g the reference gain (positive).
type target struct {
	order int
	kind  section.Kind
	w0, q float64 // pole ω0 in rad/s; Q (0 for first order)
	wz    float64 // jω-axis zero ω in rad/s (notch kinds)
	g     float64 // reference gain magnitude
}

// hasAxisZeros reports whether the kind has jω-axis zeros.
func hasAxisZeros(k section.Kind) bool {
	return k == section.LowpassNotch || k == section.HighpassNotch || k == section.Notch
}

// finite reports whether v is neither NaN nor ±Inf.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func finiteC(z complex128) bool { return finite(real(z)) && finite(imag(z)) }

// newTarget checks a section and reads its target. The ω0 and Q of a pole
// pair come from the coefficients of (s − p1)(s − p2), so a pair of real
// poles (Q < 0.5) is accepted as well as a conjugate pair.
func newTarget(sec section.Section) (target, error) {
	n := len(sec.Poles)
	if n != 1 && n != 2 {
		return target{}, fmt.Errorf("%d poles: a section has 1 or 2", n)
	}
	if !finite(sec.Gain) || sec.Gain == 0 {
		return target{}, fmt.Errorf("section gain %v is not finite and non-zero", sec.Gain)
	}
	for _, p := range sec.Poles {
		if !finiteC(p) {
			return target{}, fmt.Errorf("pole %v is not finite", p)
		}
		if !(real(p) < 0) {
			return target{}, fmt.Errorf("pole %v is not in the left half plane", p)
		}
	}
	tg := target{order: n}
	if n == 1 {
		p := sec.Poles[0]
		if math.Abs(imag(p)) > 1e-9*math.Abs(real(p)) {
			return target{}, fmt.Errorf("the pole %v of a first-order section is not real", p)
		}
		tg.w0 = -real(p)
	} else {
		p1, p2 := sec.Poles[0], sec.Poles[1]
		sum, prod := p1+p2, p1*p2
		scale := cmplx.Abs(p1) + cmplx.Abs(p2)
		if math.Abs(imag(sum)) > 1e-9*scale || math.Abs(imag(prod)) > 1e-9*scale*scale {
			return target{}, fmt.Errorf("poles %v and %v are neither a conjugate pair nor both real", p1, p2)
		}
		tg.w0 = math.Sqrt(real(prod))
		tg.q = tg.w0 / -real(sum)
		if !finite(tg.w0) || !finite(tg.q) || !(tg.w0 > 0) || !(tg.q > 0) {
			return target{}, fmt.Errorf("poles %v, %v give no finite ω0 and Q", p1, p2)
		}
	}
	if !(tg.w0 > 0) || !finite(tg.w0) {
		return target{}, fmt.Errorf("pole frequency %v rad/s is not finite and > 0", tg.w0)
	}

	if sec.IsAllpass() {
		// All-pass: the zeros mirror the poles; the reference gain is
		// |H(0)| = |K|, the gain at every frequency.
		tg.kind = section.Allpass
		tg.g = math.Abs(sec.Gain)
		return tg, nil
	}
	// Zeros: at the origin, or one conjugate jω-axis pair.
	if len(sec.Zeros) > n {
		return target{}, fmt.Errorf("%d zeros for %d poles", len(sec.Zeros), n)
	}
	origin := 0
	var axis []complex128
	for _, z := range sec.Zeros {
		switch {
		case !finiteC(z):
			return target{}, fmt.Errorf("zero %v is not finite", z)
		case z == 0:
			origin++
		case math.Abs(real(z)) <= 1e-9*cmplx.Abs(z):
			axis = append(axis, z)
		default:
			return target{}, fmt.Errorf("zero %v is neither at s = 0 nor on the jω axis", z)
		}
	}
	switch {
	case len(axis) == 0:
		switch origin {
		case 0:
			tg.kind = section.Lowpass
		case n:
			tg.kind = section.Highpass
		default:
			tg.kind = section.Bandpass
		}
	case len(axis) == 2 && origin == 0:
		z1, z2 := axis[0], axis[1]
		if math.Abs(imag(z1)+imag(z2)) > 1e-9*cmplx.Abs(z1) {
			return target{}, fmt.Errorf("zeros %v and %v are not a conjugate pair", z1, z2)
		}
		tg.wz = math.Abs(imag(z1))
		tg.kind = sec.Kind()
	default:
		return target{}, fmt.Errorf("zeros %v: expected zeros at s = 0 or one conjugate jω-axis pair", sec.Zeros)
	}

	// Reference gain, evaluated from the section itself.
	h := sec.ZPK()
	var ref complex128
	switch tg.kind {
	case section.Highpass, section.HighpassNotch:
		ref = complex(sec.Gain, 0)
	case section.Bandpass:
		ref = h.AtOmega(tg.w0)
	default:
		ref = h.At(0)
	}
	tg.g = cmplx.Abs(ref)
	if !(tg.g > 0) || !finite(tg.g) {
		return target{}, fmt.Errorf("reference gain %v is not finite and > 0", tg.g)
	}
	return tg, nil
}

// zeroScale returns k of the notch kinds' numerator k·(s² + ωz²).
func (tg target) zeroScale() float64 {
	if tg.kind == section.HighpassNotch {
		return tg.g
	}
	return tg.g * tg.w0 * tg.w0 / (tg.wz * tg.wz)
}

// describe returns "lowpass f0 1 kHz Q 0.707" for messages.
func (tg target) describe() string {
	if tg.order == 1 {
		return fmt.Sprintf("first-order %s, f0 %s", tg.kind, fmtHz(tg.w0))
	}
	return fmt.Sprintf("%s, f0 %s, Q %.3g", tg.kind, fmtHz(tg.w0), tg.q)
}
