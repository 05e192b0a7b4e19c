package section

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"

	"github.com/polewright/polewright/synth/zpk"
)

// Kind names the shape of a section's response.
type Kind string

// The section kinds.
const (
	Lowpass       Kind = "lowpass"
	Highpass      Kind = "highpass"
	Bandpass      Kind = "bandpass"
	LowpassNotch  Kind = "lowpass-notch"  // jω-axis zeros above the poles' f0
	HighpassNotch Kind = "highpass-notch" // jω-axis zeros below the poles' f0
	Notch         Kind = "notch"          // jω-axis zeros at the poles' f0
	Allpass       Kind = "allpass"        // zeros the mirror images of the poles: |H| constant
)

// Section is a first- or second-order factor of a transfer function.
type Section struct {
	// Poles holds one real pole, or a conjugate pair with the upper one
	// first, in rad/s.
	Poles []complex128
	// Zeros holds up to as many zeros as there are poles, in rad/s: zeros
	// at s = 0 and conjugate jω-axis pairs (upper first).
	Zeros []complex128
	// Gain is the factored gain K of this section, set by normalisation to
	// unit reference gain and then by [Distribute].
	Gain float64
}

// ZPK returns the section as a transfer function.
func (s Section) ZPK() zpk.ZPK { return zpk.ZPK{Zeros: s.Zeros, Poles: s.Poles, Gain: s.Gain} }

// Order returns the number of poles, 1 or 2.
func (s Section) Order() int { return len(s.Poles) }

// OmegaRadPerSec returns the natural frequency of the section's poles:
// |p| for one pole, √(p₁·p₂) for two (|p| for a conjugate pair).
func (s Section) OmegaRadPerSec() float64 {
	if len(s.Poles) == 2 {
		return math.Sqrt(real(s.Poles[0] * s.Poles[1]))
	}
	return cmplx.Abs(s.Poles[0])
}

// Q returns the quality factor ω0/(−(p₁+p₂)) of a second-order section
// (|p|/(−2·Re p) for a conjugate pair; below 0.5 for two real poles), or 0
// for a first-order section.
func (s Section) Q() float64 {
	if len(s.Poles) != 2 {
		return 0
	}
	return s.OmegaRadPerSec() / -real(s.Poles[0]+s.Poles[1])
}

// ZeroOmegaRadPerSec returns the frequency of the section's jω-axis zero pair,
// and false when it has none.
func (s Section) ZeroOmegaRadPerSec() (float64, bool) {
	if s.IsAllpass() {
		return 0, false
	}
	for _, z := range s.Zeros {
		if z != 0 {
			return math.Abs(imag(z)), true
		}
	}
	return 0, false
}

// Kind returns the section's response shape.
func (s Section) Kind() Kind {
	if s.IsAllpass() {
		return Allpass
	}
	origin := 0
	for _, z := range s.Zeros {
		if z == 0 {
			origin++
		}
	}
	if wz, ok := s.ZeroOmegaRadPerSec(); ok {
		w0 := s.OmegaRadPerSec()
		switch {
		case math.Abs(wz-w0) <= 1e-9*w0:
			return Notch
		case wz > w0:
			return LowpassNotch
		default:
			return HighpassNotch
		}
	}
	switch {
	case origin == 0:
		return Lowpass
	case origin == len(s.Poles):
		return Highpass
	default:
		return Bandpass
	}
}

// ReferenceGain returns the gain of the section at its reference frequency
// (see the package comment): |H(0)|, |H(∞)| or |H(jω0)|.
func (s Section) ReferenceGain() float64 {
	h := s.ZPK()
	switch s.Kind() {
	case Highpass, HighpassNotch:
		return math.Abs(s.Gain) // equal numbers of zeros and poles: H(∞) = K
	case Bandpass:
		return cmplx.Abs(h.AtOmega(s.OmegaRadPerSec()))
	default:
		return cmplx.Abs(h.At(0))
	}
}

// IsAllpass reports whether the section is an all-pass: as many zeros as
// poles, each zero the mirror image −p̄ of a pole p in the jω axis, so
// that |H(jω)| = |K| at every frequency.
func (s Section) IsAllpass() bool {
	if len(s.Zeros) != len(s.Poles) || len(s.Poles) == 0 {
		return false
	}
	scale := 0.0
	for _, p := range s.Poles {
		scale = math.Max(scale, cmplx.Abs(p))
	}
	used := make([]bool, len(s.Zeros))
	for _, p := range s.Poles {
		found := false
		for k, z := range s.Zeros {
			if !used[k] && cmplx.Abs(z+cmplx.Conj(p)) <= 1e-9*scale {
				used[k], found = true, true
				break
			}
		}
		if !found || real(p) >= 0 {
			return false
		}
	}
	return true
}

// FirstOrderAllpass returns the first-order all-pass section
// (a − s)/(a + s) with a = omegaRadPerSec: unit gain at every frequency,
// +1 at DC, group delay 2a/(a² + ω²).
func FirstOrderAllpass(omegaRadPerSec float64) Section {
	a := omegaRadPerSec
	return Section{Poles: []complex128{complex(-a, 0)}, Zeros: []complex128{complex(a, 0)}, Gain: -1}
}

// SecondOrderAllpass returns the second-order all-pass section
// (s² − s·ω0/Q + ω0²)/(s² + s·ω0/Q + ω0²): unit gain at every frequency,
// +1 at DC. q must be at least 0.5 (a conjugate pole pair; q = 0.5 gives
// a double real pole).
func SecondOrderAllpass(omegaRadPerSec, q float64) Section {
	w := omegaRadPerSec
	re := -w / (2 * q)
	im := w * math.Sqrt(math.Max(0, 1-1/(4*q*q)))
	p := complex(re, im)
	return Section{Poles: []complex128{p, cmplx.Conj(p)}, Zeros: []complex128{-cmplx.Conj(p), -p}, Gain: 1}
}

// ErrFactor reports a transfer function that does not split into sections
// by the rules of this package.
var ErrFactor = errors.New("section: cannot factor")

// Factor splits h into sections with unit reference gain, in no particular
// order (see [Order]). It returns an error wrapping [ErrFactor] if h has
// zeros off the jω axis, unpaired complex roots, a pole on or right of the
// jω axis, or more zeros than its sections can hold.
func Factor(h zpk.ZPK) ([]Section, error) {
	scale := 0.0
	for _, p := range h.Poles {
		scale = math.Max(scale, cmplx.Abs(p))
	}
	if scale == 0 {
		return nil, fmt.Errorf("%w: no poles", ErrFactor)
	}
	tol := 1e-9 * scale

	var pairs, reals []Section
	upper, err := splitConjugates(h.Poles, tol)
	if err != nil {
		return nil, fmt.Errorf("%w: poles: %v", ErrFactor, err)
	}
	for _, p := range upper {
		if real(p) >= 0 {
			return nil, fmt.Errorf("%w: pole %v is not in the left half plane", ErrFactor, p)
		}
		if imag(p) == 0 {
			reals = append(reals, Section{Poles: []complex128{p}})
		} else {
			pairs = append(pairs, Section{Poles: []complex128{p, cmplx.Conj(p)}})
		}
	}

	var axis []float64 // jω-axis zero frequencies, one per conjugate pair
	origin := 0
	zu, err := splitConjugates(h.Zeros, tol)
	if err != nil {
		return nil, fmt.Errorf("%w: zeros: %v", ErrFactor, err)
	}
	for _, z := range zu {
		switch {
		case cmplx.Abs(z) <= tol:
			origin++
		case math.Abs(real(z)) <= tol && imag(z) > 0:
			axis = append(axis, imag(z))
		default:
			return nil, fmt.Errorf("%w: zero %v is neither at s = 0 nor on the jω axis", ErrFactor, z)
		}
	}
	// More jω-axis zero pairs than pole pairs (a wide bandstop, whose real
	// prototype pole splits into two real poles): pair up real poles,
	// nearest in frequency, into second-order sections with Q < 0.5.
	slices.SortFunc(reals, func(a, b Section) int { return cmp.Compare(real(b.Poles[0]), real(a.Poles[0])) })
	for len(axis) > len(pairs) && len(reals) >= 2 {
		pairs = append(pairs, Section{Poles: []complex128{reals[0].Poles[0], reals[1].Poles[0]}})
		reals = reals[2:]
	}
	if len(axis) > len(pairs) {
		return nil, fmt.Errorf("%w: %d jω-axis zero pairs for %d pole pairs", ErrFactor, len(axis), len(pairs))
	}

	// jω-axis zero pairs to pole pairs: descending Q, nearest in log frequency.
	slices.SortStableFunc(pairs, func(a, b Section) int { return cmp.Compare(b.Q(), a.Q()) })
	for i := range pairs {
		if len(axis) == 0 {
			break
		}
		w0 := pairs[i].OmegaRadPerSec()
		best := 0
		for k := range axis {
			if math.Abs(math.Log(axis[k]/w0)) < math.Abs(math.Log(axis[best]/w0)) {
				best = k
			}
		}
		wz := axis[best]
		axis = slices.Delete(axis, best, best+1)
		pairs[i].Zeros = []complex128{complex(0, wz), complex(0, -wz)}
	}

	// Zeros at the origin, dealt round.
	deal := func(secs []Section, max int) {
		for i := range secs {
			if origin == 0 {
				return
			}
			if len(secs[i].Zeros) < max && !hasAxisZero(secs[i]) {
				secs[i].Zeros = append(secs[i].Zeros, 0)
				origin--
			}
		}
	}
	deal(pairs, 1)
	deal(reals, 1)
	deal(pairs, 2)
	if origin > 0 {
		return nil, fmt.Errorf("%w: %d zeros at s = 0 left over", ErrFactor, origin)
	}

	secs := append(pairs, reals...)
	for i := range secs {
		secs[i].Gain = 1
		secs[i].Gain = 1 / secs[i].ReferenceGain()
	}
	return secs, nil
}

func hasAxisZero(s Section) bool {
	_, ok := s.ZeroOmegaRadPerSec()
	return ok
}

// splitConjugates returns the real roots and the upper member of each
// conjugate pair, with pairs made exactly conjugate and near-real roots made
// real.
func splitConjugates(roots []complex128, tol float64) ([]complex128, error) {
	var out []complex128
	var lower []complex128
	for _, r := range roots {
		switch {
		case math.Abs(imag(r)) <= tol:
			out = append(out, complex(real(r), 0))
		case imag(r) > 0:
			out = append(out, r)
		default:
			lower = append(lower, r)
		}
	}
	n := 0
	for _, r := range out {
		if imag(r) > 0 {
			n++
		}
	}
	if n != len(lower) {
		return nil, fmt.Errorf("%d upper and %d lower complex roots", n, len(lower))
	}
	used := make([]bool, len(lower))
	for _, r := range out {
		if imag(r) <= 0 {
			continue
		}
		// The nearest unused lower root, by squared distance (no square
		// roots in the search; only the check below takes one).
		best, bestD := -1, math.Inf(1)
		for k, l := range lower {
			if used[k] {
				continue
			}
			d := l - cmplx.Conj(r)
			if d2 := real(d)*real(d) + imag(d)*imag(d); best < 0 || d2 < bestD {
				best, bestD = k, d2
			}
		}
		if cmplx.Abs(lower[best]-cmplx.Conj(r)) > 1e3*tol+1e-9*cmplx.Abs(r) {
			return nil, fmt.Errorf("root %v has no conjugate", r)
		}
		used[best] = true
	}
	return out, nil
}
