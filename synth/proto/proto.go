package proto

import (
	"errors"
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/zpk"
)

// Approximation names a family of lowpass prototypes. The string values are
// the ones used in specs and JSON.
type Approximation string

// The supported approximations.
const (
	// Butterworth is the maximally flat magnitude approximation: all-pole,
	// monotonic loss.
	Butterworth Approximation = "butterworth"
	// Chebyshev1 is the Chebyshev type I approximation: equiripple passband,
	// all-pole, monotonic stopband.
	Chebyshev1 Approximation = "chebyshev1"
	// Chebyshev2 is the inverse Chebyshev (type II) approximation: monotonic
	// passband, equiripple stopband with zeros on the jω axis.
	Chebyshev2 Approximation = "chebyshev2"
	// Bessel is the Bessel–Thomson approximation: maximally flat group
	// delay, all-pole, monotonic loss.
	Bessel Approximation = "bessel"
	// Elliptic is the elliptic (Cauer) approximation: equiripple passband
	// and stopband.
	Elliptic Approximation = "elliptic"
	// Legendre is the optimum-L (Legendre–Papoulis) approximation: the
	// steepest cutoff of any all-pole monotonic passband.
	Legendre Approximation = "legendre"
	// Gaussian is the Gaussian magnitude approximation (truncated series
	// of e^(a·ω²)): all-pole, monotonic loss, step with almost no overshoot.
	Gaussian Approximation = "gaussian"
	// LinearPhase is the linear-phase approximation with equiripple phase
	// error: all-pole, its phase follows a pure delay to within ±δ
	// ([PhaseErrorDeg], default [DefaultPhaseErrorDeg]) over a band 1.5
	// to 1.7 times as wide as that of a Bessel filter of the same order
	// and −3 dB frequency (measured at 0.05° and 0.5°, orders 3–12).
	LinearPhase Approximation = "linear-phase"
)

// Option adjusts a prototype beyond its order and losses.
type Option func(*options)

type options struct {
	phaseErrorDeg float64
}

// PhaseErrorDeg sets the phase ripple δ of the [LinearPhase] prototype, in
// degrees, from [MinPhaseErrorDeg] to [MaxPhaseErrorDeg]. Other
// approximations ignore it.
func PhaseErrorDeg(deg float64) Option { return func(o *options) { o.phaseErrorDeg = deg } }

func collect(a Approximation, opts []Option) (options, error) {
	o := options{phaseErrorDeg: DefaultPhaseErrorDeg}
	for _, f := range opts {
		f(&o)
	}
	if a == LinearPhase && !(o.phaseErrorDeg >= MinPhaseErrorDeg && o.phaseErrorDeg <= MaxPhaseErrorDeg) {
		return o, badArg("phase error %g° not in [%g, %g]", o.phaseErrorDeg, float64(MinPhaseErrorDeg), float64(MaxPhaseErrorDeg))
	}
	return o, nil
}

// Approximations returns every supported approximation, in a fixed order.
func Approximations() []Approximation {
	return []Approximation{Butterworth, Chebyshev1, Chebyshev2, Bessel, Elliptic, Legendre, Gaussian, LinearPhase}
}

// Valid reports whether a is one of the supported approximations.
func (a Approximation) Valid() bool {
	switch a {
	case Butterworth, Chebyshev1, Chebyshev2, Bessel, Elliptic, Legendre, Gaussian, LinearPhase:
		return true
	}
	return false
}

// MaxOrder is the highest prototype order that [Lowpass] designs and that
// [MinOrder] returns without an [*OrderError].
const MaxOrder = 20

// MaxLossDB is the largest rippleDB or attenDB accepted, in dB. It keeps
// 10^(dB/10) and the quantities derived from it well inside float64 range.
const MaxLossDB = 1000

// BesselSearchCap is the highest Bessel order that [MinOrder] evaluates when
// looking for the order a mask would need beyond [MaxOrder].
const BesselSearchCap = 400

// ErrBadArgument is wrapped by every error about an invalid argument: an
// unknown approximation, an order outside 1..[MaxOrder], a non-finite
// value, rippleDB not in (0, [MaxLossDB]], attenDB not in (rippleDB,
// [MaxLossDB]] where it is used, a frequency ratio not above 1, a phase
// ripple outside [[MinPhaseErrorDeg], [MaxPhaseErrorDeg]] for
// [LinearPhase], or a linear-phase rippleDB not above the prototype's own
// rise above its DC gain.
var ErrBadArgument = errors.New("proto: bad argument")

// ErrNotRepresentable is wrapped when valid but extreme arguments give a
// prototype whose poles, zeros or gain do not fit in float64.
var ErrNotRepresentable = errors.New("proto: prototype not representable in float64")

// OrderError is returned by [MinOrder] when the mask needs more than
// [MaxOrder].
type OrderError struct {
	// Needed is the order the mask needs. It is 0 when Unreachable is set.
	// For Bessel, when no order up to [BesselSearchCap] meets the mask
	// (but the mask is below the limit that no order can pass), Needed is
	// BesselSearchCap+1, a lower bound; likewise for Gaussian, and for
	// optimum-L beyond [LegendreSearchCap] and linear-phase beyond
	// [LinearPhaseMaxOrder] (Needed is then the cap plus one). For the closed-form
	// approximations a need above math.MaxInt32 is reported as
	// math.MaxInt32, also a lower bound.
	Needed int
	// Max is the highest order allowed, [MaxOrder].
	Max int
	// Unreachable reports that no order at all meets the mask. Only
	// Bessel, linear-phase and Gaussian masks can be unreachable: at a
	// fixed normalised frequency ratio their loss rises with the order to
	// a maximum (Gaussian: toward its limit rippleDB·ratio²; Bessel and
	// linear-phase: then falling back toward it), so an attenDB above the
	// most loss any order gives is met by no order.
	Unreachable bool

	atLeast bool    // Needed is a lower bound
	limitDB float64 // the most loss any order gives, when Unreachable
}

// Error describes the need, e.g. "needs order 27, more than the limit of 20".
func (e *OrderError) Error() string {
	switch {
	case e.Unreachable:
		return fmt.Sprintf("cannot be met by any order: at this frequency no order gives more than %.4g dB (the limit is %d)", e.limitDB, e.Max)
	case e.atLeast:
		return fmt.Sprintf("needs an order above %d, more than the limit of %d", e.Needed-1, e.Max)
	}
	return fmt.Sprintf("needs order %d, more than the limit of %d", e.Needed, e.Max)
}

func badArg(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrBadArgument}, args...)...)
}

func checkApprox(a Approximation) error {
	if !a.Valid() {
		return badArg("unknown approximation %q", string(a))
	}
	return nil
}

func checkOrder(n int) error {
	if n < 1 || n > MaxOrder {
		return badArg("order %d outside 1..%d", n, MaxOrder)
	}
	return nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func checkRipple(rippleDB float64) error {
	if !finite(rippleDB) || rippleDB <= 0 || rippleDB > MaxLossDB {
		return badArg("rippleDB %g not in (0, %d]", rippleDB, MaxLossDB)
	}
	return nil
}

func checkAtten(rippleDB, attenDB float64) error {
	if !finite(attenDB) || attenDB <= rippleDB || attenDB > MaxLossDB {
		return badArg("attenDB %g not in (rippleDB = %g, %d]", attenDB, rippleDB, MaxLossDB)
	}
	return nil
}

func checkRatio(ratio float64) error {
	if !finite(ratio) || ratio <= 1 {
		return badArg("frequency ratio %g not finite and above 1", ratio)
	}
	return nil
}

// usesAtten reports whether the prototype's shape depends on attenDB.
func usesAtten(a Approximation) bool { return a == Chebyshev2 || a == Elliptic }

// Lowpass returns the normalised lowpass prototype of approximation a and
// order n (1..[MaxOrder]).
//
// Normalisation, the same for every approximation: the loss at ω = 1 rad/s
// is exactly rippleDB (Amax), so 1 rad/s is the passband edge, and the
// largest |H(jω)| over the passband is 1. An even-order Chebyshev I or
// elliptic prototype therefore has |H(0)| = 10^(−rippleDB/20); the others
// have |H(0)| = 1. attenDB (Amin) is used by Chebyshev2 and Elliptic, whose
// stopband loss is exactly attenDB at its minima, and is ignored (not even
// validated) by the others. Bessel is the reverse Bessel polynomial
// prototype scaled in frequency so that its loss at 1 rad/s is rippleDB;
// with rippleDB = 10·log10(2) it is scipy's besselap(n, norm='mag').
// LinearPhase is scaled the same way from its unit-delay form and takes
// its phase ripple from opts ([PhaseErrorDeg]); where its magnitude rises
// above the DC gain before it falls, the peak is 1 and the loss at 1 rad/s
// counts from the peak. Legendre and Gaussian are defined by their
// squared magnitude (package comment) with the loss rippleDB at 1 rad/s.
//
// Poles come as adjacent conjugate pairs, the upper-half-plane member
// first, in order of increasing imaginary part, followed by the real pole
// when n is odd. Zeros (Chebyshev2 and Elliptic only, all on the jω axis)
// come the same way. Every pole has a negative real part and the gain is
// positive.
//
// Accuracy (see the package comment): the loss at 1 rad/s is rippleDB to
// 1e-9 dB, except for elliptic designs so selective that the stopband
// edge ωs is within about 2e-6 of 1 rad/s: their poles and zeros crowd
// against ω = 1 and float64 positions alone limit the loss near the band
// edge to about 2e-15/(ωs − 1) dB.
//
// Errors wrap [ErrBadArgument] for invalid arguments and
// [ErrNotRepresentable] when extreme arguments overflow float64 or, for
// Elliptic, when ωs − 1 < 1e-9.
func Lowpass(a Approximation, n int, rippleDB, attenDB float64, opts ...Option) (zpk.ZPK, error) {
	if err := checkApprox(a); err != nil {
		return zpk.ZPK{}, err
	}
	o, err := collect(a, opts)
	if err != nil {
		return zpk.ZPK{}, err
	}
	if err := checkOrder(n); err != nil {
		return zpk.ZPK{}, err
	}
	if err := checkRipple(rippleDB); err != nil {
		return zpk.ZPK{}, err
	}
	if usesAtten(a) {
		if err := checkAtten(rippleDB, attenDB); err != nil {
			return zpk.ZPK{}, err
		}
	}
	var h zpk.ZPK
	switch a {
	case Butterworth:
		h = butterworth(n, rippleDB)
	case Chebyshev1:
		h = chebyshev1(n, rippleDB)
	case Chebyshev2:
		h = chebyshev2(n, rippleDB, attenDB)
	case Bessel:
		h = bessel(n, rippleDB)
	case Elliptic:
		h = elliptic(n, rippleDB, attenDB)
	case Legendre:
		h = legendre(n, rippleDB)
	case Gaussian:
		h = gaussian(n, rippleDB)
	case LinearPhase:
		var dip float64
		h, _, dip = linearPhase(n, rippleDB, o.phaseErrorDeg)
		if !(rippleDB+dip > 0) {
			return zpk.ZPK{}, badArg("rippleDB %g is not above the %.3g dB by which the linear-phase prototype of order %d with phase error %g° rises above its DC gain", rippleDB, -dip, n, o.phaseErrorDeg)
		}
	}
	if !representable(h) || (computedRoots(a) && !edgeLossHolds(h, rippleDB)) {
		return zpk.ZPK{}, fmt.Errorf("%w: %s order %d, rippleDB %g, attenDB %g", ErrNotRepresentable, a, n, rippleDB, attenDB)
	}
	return h, nil
}

// computedRoots reports whether a's poles come from an iterative root
// finder on a defining function that loses accuracy at extreme losses, so
// that Lowpass checks the normalisation of the result.
func computedRoots(a Approximation) bool { return a == Legendre || a == Gaussian || a == LinearPhase }

// edgeLossHolds reports whether the loss of h at 1 rad/s is rippleDB to
// 1e-9 dB (relative above 1 dB), the accuracy Lowpass promises.
func edgeLossHolds(h zpk.ZPK, rippleDB float64) bool {
	l := -20 * math.Log10(h.MagnitudeAt(1))
	return math.Abs(l-rippleDB) <= 1e-9*math.Max(1, rippleDB)
}

// representable reports whether every pole is finite and in the open left
// half plane, every zero finite and the gain finite and positive.
func representable(h zpk.ZPK) bool {
	if !finite(h.Gain) || !(h.Gain > 0) {
		return false
	}
	for _, p := range h.Poles {
		if !finite(real(p)) || !finite(imag(p)) || !(real(p) < 0) {
			return false
		}
	}
	for _, z := range h.Zeros {
		if !finite(real(z)) || !finite(imag(z)) {
			return false
		}
	}
	return true
}

// StopbandEdge returns the normalised frequency (> 1, passband edge = 1)
// at which the order-n prototype's loss first reaches attenDB: for
// Chebyshev2 and Elliptic the edge of the equiripple stopband, beyond which
// the loss never falls below attenDB; for the monotonic approximations the
// frequency where the loss equals attenDB. Arguments are validated as for
// [Lowpass], with attenDB required for every approximation.
func StopbandEdge(a Approximation, n int, rippleDB, attenDB float64, opts ...Option) (float64, error) {
	if err := checkApprox(a); err != nil {
		return 0, err
	}
	o, err := collect(a, opts)
	if err != nil {
		return 0, err
	}
	if err := checkOrder(n); err != nil {
		return 0, err
	}
	if err := checkRipple(rippleDB); err != nil {
		return 0, err
	}
	if err := checkAtten(rippleDB, attenDB); err != nil {
		return 0, err
	}
	var w float64
	switch a {
	case Butterworth:
		w = math.Exp(lnD(rippleDB, attenDB) / (2 * float64(n)))
	case Chebyshev1, Chebyshev2:
		w = chebyshevEdge(n, rippleDB, attenDB)
	case Bessel:
		w = besselEdge(n, rippleDB, attenDB)
	case Elliptic:
		k1, k1p := discrimination(rippleDB, attenDB)
		k, _ := ellipdeg(n, k1, k1p)
		w = 1 / k
	case Legendre:
		w = legendreEdge(n, rippleDB, attenDB)
	case Gaussian:
		w = gaussianEdge(n, rippleDB, attenDB)
	case LinearPhase:
		w = linearPhaseEdge(n, rippleDB, attenDB, o.phaseErrorDeg)
	}
	if !finite(w) || !(w > 1) {
		return 0, fmt.Errorf("%w: stopband edge of %s order %d, rippleDB %g, attenDB %g", ErrNotRepresentable, a, n, rippleDB, attenDB)
	}
	return w, nil
}

// MinOrder returns the lowest order n such that the order-n prototype of
// approximation a, normalised as in [Lowpass], has a loss of at least
// attenDB at every frequency from ratio = ωs/ωp (> 1) up. For the
// monotonic approximations that is the loss at ratio itself; for
// Chebyshev2 and Elliptic it means [StopbandEdge] ≤ ratio.
//
// Butterworth, Chebyshev I and II and Elliptic use the closed forms
//
//	Butterworth:  n ≥ log(D)/(2·log(ratio))
//	Chebyshev:    n ≥ acosh(√D)/acosh(ratio)
//	Elliptic:     n ≥ K(1/ratio)·K′(k₁)/(K′(1/ratio)·K(k₁))
//
// with D = (10^(attenDB/10)−1)/(10^(rippleDB/10)−1), k₁ = 1/√D and K, K′
// the complete elliptic integrals of the first kind of a modulus and its
// complement; the result equals scipy's buttord, cheb1ord, cheb2ord and
// ellipord (analog=True, lowpass) except where the bound is within
// rounding of an integer. Bessel, Legendre, Gaussian and LinearPhase
// evaluate the prototype's loss at ratio for n = 1, 2, … (Legendre from
// its polynomial, Gaussian from its series, the others from the poles).
//
// When the mask needs more than [MaxOrder] the error is an [*OrderError]
// with the order it would need. Bessel keeps evaluating up to
// [BesselSearchCap]. At a fixed ratio the Bessel loss rises with n to a
// single maximum and then falls back toward the Gaussian limit
// rippleDB·ratio² (a property checked numerically over a grid of rippleDB
// 0.01…30 dB and ratio 1.01…10, up to order 400 or 2000 dB; not proved),
// so once the loss starts falling short of attenDB no order can meet the
// mask: the error is then Unreachable and quotes the maximum. Other errors
// wrap [ErrBadArgument] (or [ErrNotRepresentable] for a bound that is not
// a number).
func MinOrder(a Approximation, rippleDB, attenDB, ratio float64, opts ...Option) (int, error) {
	if err := checkApprox(a); err != nil {
		return 0, err
	}
	o, err := collect(a, opts)
	if err != nil {
		return 0, err
	}
	if err := checkRipple(rippleDB); err != nil {
		return 0, err
	}
	if err := checkAtten(rippleDB, attenDB); err != nil {
		return 0, err
	}
	if err := checkRatio(ratio); err != nil {
		return 0, err
	}
	switch a {
	case Bessel:
		return besselMinOrder(rippleDB, attenDB, ratio)
	case Legendre:
		return legendreMinOrder(rippleDB, attenDB, ratio)
	case Gaussian:
		return gaussianMinOrder(rippleDB, attenDB, ratio)
	case LinearPhase:
		return linearPhaseMinOrder(rippleDB, attenDB, ratio, o.phaseErrorDeg)
	}
	var x float64
	switch a {
	case Butterworth:
		x = lnD(rippleDB, attenDB) / (2 * math.Log(ratio))
	case Chebyshev1, Chebyshev2:
		x = acoshSqrtD(rippleDB, attenDB) / math.Acosh(ratio)
	case Elliptic:
		x = ellipticOrderBound(rippleDB, attenDB, ratio)
	}
	return orderFromBound(x)
}

// orderFromBound turns the fractional order bound x into the lowest
// integer order, or an *OrderError beyond MaxOrder.
func orderFromBound(x float64) (int, error) {
	if math.IsNaN(x) {
		return 0, fmt.Errorf("%w: order bound %g", ErrNotRepresentable, x)
	}
	// attenDB > rippleDB and ratio > 1 make x > 0; a bound that rounds to
	// 0 or below (attenDB within rounding of rippleDB) needs order 1.
	c := math.Max(1, math.Ceil(x))
	if c <= MaxOrder {
		return int(c), nil
	}
	if c > math.MaxInt32 {
		return 0, &OrderError{Needed: math.MaxInt32, Max: MaxOrder, atLeast: true}
	}
	return 0, &OrderError{Needed: int(c), Max: MaxOrder}
}

// lnPow10m1 returns ln(10^(dB/10) − 1) for dB > 0 without overflow or
// cancellation.
func lnPow10m1(dB float64) float64 {
	x := dB * (math.Ln10 / 10)
	if x > 30 {
		return x + math.Log1p(-math.Exp(-x))
	}
	return math.Log(math.Expm1(x))
}

// lnD returns ln D, D = (10^(attenDB/10)−1)/(10^(rippleDB/10)−1).
func lnD(rippleDB, attenDB float64) float64 {
	return lnPow10m1(attenDB) - lnPow10m1(rippleDB)
}

// acoshSqrtD returns acosh(√D) without forming D when it is huge.
func acoshSqrtD(rippleDB, attenDB float64) float64 {
	l := lnD(rippleDB, attenDB) / 2 // ln √D > 0
	if l > 20 {
		// acosh(y) = ln(2y) − 1/(4y²) − …; the correction is below 1e-17 y⁰.
		return l + math.Ln2 - math.Exp(-2*l)/4
	}
	return math.Acosh(math.Exp(l))
}

// chebyshevEdge returns cosh(acosh(√D)/n): where an order-n Chebyshev I
// prototype's loss reaches attenDB, and the stopband edge of the Chebyshev
// II prototype normalised to rippleDB at 1 rad/s.
func chebyshevEdge(n int, rippleDB, attenDB float64) float64 {
	return math.Cosh(acoshSqrtD(rippleDB, attenDB) / float64(n))
}
