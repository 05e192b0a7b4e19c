package topology

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// Topology names accepted by [Realize]. [Auto] picks one by the rule in the
// package comment; the others ask for that circuit.
const (
	Auto             = "auto"
	SallenKey        = "sallen-key"
	MultipleFeedback = "multiple-feedback"
	StateVariable    = "state-variable"
	RCBuffer         = "rc-buffer"
	InvertingRC      = "inverting-rc"
	OneAmpNotch      = "one-amp-notch"
	// FullyDifferential builds the section around one fully differential
	// op-amp: a multiple-feedback lowpass, highpass (without the
	// positive-feedback divider) or bandpass, or a first-order inverting
	// RC stage, as two matched halves (see [circuit.Stage.ToFullyDifferential]),
	// differentially driven. Sections with jω-axis zeros (the notch kinds)
	// have no fully differential form here and are refused (ErrNoForm),
	// as are all-pass sections; package synth then builds the whole chain
	// single-ended and converts it after the last section.
	FullyDifferential = "fully-differential"
	// TwoIntegratorNotch is the three-op-amp notch stage (a two-integrator
	// loop with feedforward); [Auto] reaches it, and so does the name.
	TwoIntegratorNotch = "two-integrator-notch"
)

// Names returns the topology names [Realize] accepts, [Auto] first. The
// slice is a new copy on every call.
func Names() []string {
	return []string{Auto, SallenKey, MultipleFeedback, StateVariable, RCBuffer, InvertingRC, OneAmpNotch, TwoIntegratorNotch, FullyDifferential}
}

// Limits of the design rules (see the package comment).
const (
	// AutoMaxQ is the Q above which [Auto] turns to the state-variable
	// circuit (common practice: single-amplifier biquads get touchy above
	// Q ≈ 10).
	AutoMaxQ = 10
	// MaxGainSensitivity bounds |S^Q_R|, the relative change of Q per
	// relative change of one gain-setting resistor, that a Sallen-Key stage
	// with K > 1 may have: with 1 % resistors Q then moves by at most about
	// 6 %. Equal-component Sallen-Key has 2Q − 1, so this admits it up to
	// Q = 2 (our choice, in line with the usual advice to keep
	// equal-component Sallen-Key to low Q). The same bound holds for the
	// positive-feedback divider that trims a multiple-feedback highpass's
	// gain. It applies to the design before rounding and to the parts as
	// rounded.
	MaxGainSensitivity = 3
	// MaxBandpassCapRatio bounds Ca/Cb in the multiple-feedback bandpass,
	// and with it the gain at f0 to Q²·(1 + MaxBandpassCapRatio).
	MaxBandpassCapRatio = 10
)

// Options are the part-value rules. A zero field takes its default (see
// [DefaultOptions]); negative, NaN or infinite values are errors.
type Options struct {
	// ResistorSeries and CapacitorSeries are the series values are taken
	// from. Capacitors always come from CapacitorSeries; resistors from
	// ResistorSeries unless Exact.
	ResistorSeries, CapacitorSeries eseries.Series
	// Exact keeps the exact (unrounded) resistor values; capacitors are
	// still series values.
	Exact bool
	// MinOhm and MaxOhm bound every resistor (default 1 kΩ .. 220 kΩ).
	MinOhm, MaxOhm float64
	// MinFarad and MaxFarad bound every capacitor (default 100 pF .. 1 µF).
	MinFarad, MaxFarad float64
	// CapacitorTolerancePct is the tolerance given to capacitors, in
	// percent (default 5). Resistors get their series' customary
	// tolerance ([eseries.Series.TolerancePct]).
	CapacitorTolerancePct float64
	// TwoIntegratorGainShift restricts the gain of a [TwoIntegratorNotch]
	// stage, a capacitor ratio (see [MaxTwoIntegratorGainShift]): 0 lets
	// it lie either side of the section's, +1 only at or above it, −1 only
	// at or below it; other values are errors.
	TwoIntegratorGainShift int
}

// Default option values.
const (
	DefaultMinOhm                = 1e3
	DefaultMaxOhm                = 220e3
	DefaultMinFarad              = 100e-12
	DefaultMaxFarad              = 1e-6
	DefaultCapacitorTolerancePct = 5
)

// DefaultOptions returns E96 resistors, E12 capacitors, 1 kΩ .. 220 kΩ,
// 100 pF .. 1 µF and 5 % capacitors.
func DefaultOptions() Options {
	rs, _ := eseries.Lookup("E96")
	cs, _ := eseries.Lookup("E12")
	return Options{
		ResistorSeries:        rs,
		CapacitorSeries:       cs,
		MinOhm:                DefaultMinOhm,
		MaxOhm:                DefaultMaxOhm,
		MinFarad:              DefaultMinFarad,
		MaxFarad:              DefaultMaxFarad,
		CapacitorTolerancePct: DefaultCapacitorTolerancePct,
	}
}

// Result is one section realised as a stage.
type Result struct {
	// Stage is the circuit with its part values.
	Stage circuit.Stage
	// Reason says, in a practitioner's words, why this topology and form
	// were used.
	Reason string
	// Inverting is true when the stage's gain is negative at its
	// reference frequency. The stage realises the section's transfer
	// function, taken with a positive reference gain, times −1 when
	// Inverting and times +1 otherwise.
	Inverting bool
	// F0ErrPct and QErrPct are the relative errors, in percent, of the
	// stage's pole f0 and Q as built (ideal op-amps) against the section's.
	F0ErrPct, QErrPct float64
	// GainErrPct is the relative error, in percent, of the stage's gain at
	// its reference frequency against the section's reference gain (for a
	// bandpass, the gain at the stage's own f0).
	GainErrPct float64
	// ZeroErrPct is the relative error, in percent, of the frequency of
	// the stage's jω-axis zeros against the section's (notch kinds; 0
	// otherwise).
	ZeroErrPct float64
	// ZeroDamping is ζz of the stage's zeros as built (ideal op-amps):
	// they lie at ωz·(−ζz ± j·√(1 − ζz²)). It is 0 for the state-variable
	// stage, whose sum has no bandpass term, and for every exact design;
	// the one-amplifier notch cancels its numerator's s term by a resistor
	// ratio, so rounding leaves a small ζz of either sign.
	ZeroDamping float64
}

// Sentinel errors wrapped by [Error].
var (
	// ErrUnknownTopology: the topology name is not one of [Names].
	ErrUnknownTopology = errors.New("unknown topology")
	// ErrNoForm: the topology has no form for the section's kind or order.
	ErrNoForm = errors.New("no form for this section")
	// ErrSection: the section is not one this package can realise (bad
	// poles, zeros or gain).
	ErrSection = errors.New("section not realisable")
	// ErrOptions: the options are invalid.
	ErrOptions = errors.New("invalid options")
	// ErrLimits: no part values satisfy the windows and the topology's
	// constraints.
	ErrLimits = errors.New("no part values within the limits")
)

// Error is the error [Realize] returns: which topology failed and why.
type Error struct {
	// Topology is the topology that failed ("auto" when every choice did).
	Topology string
	// Reason says which limit or rule failed, with the numbers.
	Reason string
	// Err is one of the sentinel errors (ErrUnknownTopology, ErrNoForm,
	// ErrSection, ErrOptions, ErrLimits).
	Err error
}

// Error returns "topology: reason".
func (e *Error) Error() string { return e.Topology + ": " + e.Reason }

// Unwrap returns the sentinel error.
func (e *Error) Unwrap() error { return e.Err }

func fail(top string, err error, format string, args ...any) *Error {
	return &Error{Topology: top, Reason: fmt.Sprintf(format, args...), Err: err}
}

// Realize maps one first- or second-order section onto the named topology
// (one of [Names]) with part values from opt. The stage realises the
// section's transfer function with its reference gain, bigger or smaller
// than one, exactly up to part rounding (a two-integrator-notch stage's
// gain is a capacitor ratio: [Result.GainErrPct]); the sign of sec.Gain is not
// realised (the reference gain is taken positive, and [Result.Inverting]
// gives the stage's own sign). Every failure is an [*Error] naming the
// topology and the limit; the caller adds the section's index. Realize
// never panics on data-dependent input.
func Realize(sec section.Section, topology string, opt Options) (Result, error) {
	o, err := newOptions(opt)
	if err != nil {
		return Result{}, fail(topology, ErrOptions, "%v", err)
	}
	tg, err := newTarget(sec)
	if err != nil {
		return Result{}, fail(topology, ErrSection, "%v", err)
	}
	if tg.kind == section.Allpass {
		switch topology {
		case Auto, Allpass, AllpassInverted:
		case FullyDifferential:
			return Result{}, fail(topology, ErrNoForm, "an all-pass section has no fully differential form here")
		default:
			return Result{}, fail(topology, ErrNoForm, "an all-pass section is built as %s or %s", Allpass, AllpassInverted)
		}
		d, e := realizeAllpass(tg, topology == AllpassInverted, o)
		if e != nil {
			return Result{}, e
		}
		return d.result(tg), nil
	}
	switch topology {
	case Auto:
		return realizeAuto(tg, o)
	case FullyDifferential:
		r, e := realizeFullyDifferential(tg, o)
		if e != nil {
			return Result{}, e
		}
		return r, nil
	case SallenKey, MultipleFeedback, StateVariable, RCBuffer, InvertingRC, OneAmpNotch, TwoIntegratorNotch:
		r, e := realizeOne(tg, topology, o)
		if e != nil {
			return Result{}, e
		}
		r.Reason = topology + " as asked: " + r.Reason
		return r, nil
	}
	if topology == Allpass || topology == AllpassInverted {
		return Result{}, fail(topology, ErrNoForm, "the %s stage builds all-pass sections only, not a %s section", topology, tg.kind)
	}
	return Result{}, fail(topology, ErrUnknownTopology, "unknown topology %q (valid: %s)", topology, strings.Join(Names(), ", "))
}

// realizeOne dispatches to the named topology.
func realizeOne(tg target, top string, o *options) (Result, *Error) {
	var d design
	var e *Error
	switch top {
	case RCBuffer:
		d, e = rcBuffer(tg, o)
	case InvertingRC:
		d, e = invertingRC(tg, o)
	case SallenKey:
		d, e = sallenKey(tg, o)
	case MultipleFeedback:
		d, e = multipleFeedback(tg, o)
	case StateVariable:
		d, e = stateVariable(tg, o)
	case OneAmpNotch:
		d, e = oneAmpNotch(tg, o)
	case TwoIntegratorNotch:
		d, e = twoIntegratorNotch(tg, o)
	}
	if e != nil {
		return Result{}, e
	}
	return d.result(tg), nil
}

// realizeAuto applies the rule in the package comment: a list of
// topologies to try in order, each with the reason it is tried.
func realizeAuto(tg target, o *options) (Result, error) {
	type try struct{ top, why string }
	var tries []try
	switch {
	case tg.order == 1:
		tries = []try{
			{RCBuffer, "first order: RC and a non-inverting buffer, the simplest stage that keeps the sign"},
			{InvertingRC, "first order: inverting RC stage"},
		}
	case hasAxisZeros(tg.kind) && tg.q > AutoMaxQ:
		tries = []try{
			{StateVariable, fmt.Sprintf("jω-axis zeros at %s (%s) with Q %.3g > %d: state-variable (four op-amps), whose f0 the op-amps' lag moves least (the two-integrator loop's three op-amps in one loop shift f0 and Q more at high Q)", fmtHz(tg.wz), tg.kind, tg.q, AutoMaxQ)},
			{TwoIntegratorNotch, fmt.Sprintf("jω-axis zeros at %s (%s) with Q %.3g > %d: the two-integrator loop (three op-amps)", fmtHz(tg.wz), tg.kind, tg.q, AutoMaxQ)},
		}
	case hasAxisZeros(tg.kind) && tg.q > OneAmpNotchMaxQ:
		tries = []try{
			{TwoIntegratorNotch, fmt.Sprintf("jω-axis zeros at %s (%s) with Q %.3g > %d, beyond the one-op-amp notch's spread 4Q² and loop-gain need 2Q²: the two-integrator loop (three op-amps, the fewest left) places them with no s term to cancel", fmtHz(tg.wz), tg.kind, tg.q, OneAmpNotchMaxQ)},
			{StateVariable, fmt.Sprintf("jω-axis zeros at %s (%s) with Q %.3g > %d: state-variable (four op-amps) sums its highpass and lowpass outputs to place them", fmtHz(tg.wz), tg.kind, tg.q, OneAmpNotchMaxQ)},
		}
	case hasAxisZeros(tg.kind):
		tries = []try{
			{OneAmpNotch, fmt.Sprintf("jω-axis zeros at %s (%s), Q %.3g ≤ %d: one op-amp, the fewest that place them within the part windows and the notch-residual limit", fmtHz(tg.wz), tg.kind, tg.q, OneAmpNotchMaxQ)},
			{TwoIntegratorNotch, fmt.Sprintf("jω-axis zeros at %s (%s): the two-integrator loop (three op-amps) places them with no s term to cancel", fmtHz(tg.wz), tg.kind)},
			{StateVariable, fmt.Sprintf("jω-axis zeros at %s (%s): state-variable (four op-amps) sums its highpass and lowpass outputs to place them", fmtHz(tg.wz), tg.kind)},
		}
	case tg.q > AutoMaxQ:
		why := fmt.Sprintf("Q %.3g > %d: state-variable keeps Q insensitive to part spread", tg.q, AutoMaxQ)
		tries = []try{{StateVariable, why}, {MultipleFeedback, "Q above 10, single-amplifier fallback: multiple-feedback"}, {SallenKey, "Q above 10, single-amplifier fallback: Sallen-Key"}}
	case tg.kind == section.Bandpass:
		tries = []try{
			{MultipleFeedback, fmt.Sprintf("bandpass, gain %.3g at f0 within the multiple-feedback limit Q²·(1 + Ca/Cb) (2Q² = %.3g at equal capacitors): one op-amp", tg.g, 2*tg.q*tg.q)},
			{StateVariable, "bandpass: state-variable sets gain and Q independently"},
		}
	default: // lowpass or highpass, Q ≤ 10
		why := fmt.Sprintf("%s with Q %.3g ≤ %d: Sallen-Key, one non-inverting op-amp", tg.kind, tg.q, AutoMaxQ)
		tries = []try{
			{SallenKey, why},
			{MultipleFeedback, fmt.Sprintf("%s with Q %.3g: multiple-feedback, one inverting op-amp", tg.kind, tg.q)},
			{StateVariable, fmt.Sprintf("%s: state-variable", tg.kind)},
		}
	}
	var failed []string
	// In auto the one-amplifier notch also keeps the residual that part
	// tolerances leave at its zeros within MaxNotchResidualDB.
	ao := *o
	ao.maxFloor = math.Pow(10, MaxNotchResidualDB/20.0)
	for _, t := range tries {
		r, e := realizeOne(tg, t.top, &ao)
		if e != nil {
			failed = append(failed, e.Error())
			continue
		}
		why := t.why
		if len(failed) > 0 {
			why = strings.Join(failed, "; ") + "; so " + why
		}
		r.Reason = why + "; " + r.Reason
		return r, nil
	}
	return Result{}, fail(Auto, ErrLimits, "no topology fits the %s section: %s", tg.describe(), strings.Join(failed, "; "))
}

// design is a realised stage with its closed-form performance.
type design struct {
	stage     circuit.Stage
	form      string // e.g. "unity gain with an input divider"
	inverting bool
	w0, q, g  float64 // realised pole ω0, Q and reference gain magnitude
	wz        float64 // realised jω-axis zero frequency, notch kinds
	zdamp     float64 // realised ζz of the zeros (one-amplifier notch)
}

func (d design) result(tg target) Result {
	r := Result{
		Stage:      d.stage,
		Reason:     d.form,
		Inverting:  d.inverting,
		F0ErrPct:   100 * (d.w0/tg.w0 - 1),
		GainErrPct: 100 * (d.g/tg.g - 1),
	}
	if tg.order == 2 {
		r.QErrPct = 100 * (d.q/tg.q - 1)
	}
	if hasAxisZeros(tg.kind) {
		r.ZeroErrPct = 100 * (d.wz/tg.wz - 1)
		r.ZeroDamping = d.zdamp
	}
	return r
}

// fmtHz formats an angular frequency in rad/s as a frequency.
func fmtHz(w float64) string { return eng(w/(2*math.Pi), "Hz") }

// eng formats v with an SI prefix and three significant figures.
func eng(v float64, unit string) string {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Sprintf("%g %s", v, unit)
	}
	prefixes := []struct {
		p string
		f float64
	}{{"T", 1e12}, {"G", 1e9}, {"M", 1e6}, {"k", 1e3}, {"", 1}, {"m", 1e-3}, {"µ", 1e-6}, {"n", 1e-9}, {"p", 1e-12}, {"f", 1e-15}}
	a := math.Abs(v)
	for _, p := range prefixes {
		if a >= p.f*(1-1e-9) {
			return fmt.Sprintf("%.3g %s%s", v/p.f, p.p, unit)
		}
	}
	return fmt.Sprintf("%.3g %s", v, unit)
}

// realizeFullyDifferential builds the section's single-ended inverting
// stage (multiple-feedback, or inverting RC for first order) and mirrors
// it into two matched halves around one fully differential op-amp, driven
// differentially. The part design is the single-ended one: each half has
// the single-ended stage's transfer function.
func realizeFullyDifferential(tg target, o *options) (Result, *Error) {
	if hasAxisZeros(tg.kind) {
		return Result{}, fail(FullyDifferential, ErrNoForm,
			"a %s section (jω-axis zeros) has no fully differential form here: the fully differential stages are the multiple-feedback lowpass, highpass and bandpass and the first-order inverting RC", tg.kind)
	}
	fo := *o
	fo.noDivider = true
	top := MultipleFeedback
	if tg.order == 1 {
		top = InvertingRC
	}
	r, e := realizeOne(tg, top, &fo)
	if e != nil {
		e.Topology = FullyDifferential
		return Result{}, e
	}
	st, err := r.Stage.ToFullyDifferential(true)
	if err != nil {
		return Result{}, fail(FullyDifferential, ErrNoForm, "%s stage has no fully differential form: %v", top, err)
	}
	st.Topology = FullyDifferential + " " + top
	r.Stage = st
	r.Reason = fmt.Sprintf("fully differential: two matched %s halves around one fully differential op-amp, each half the single-ended design (%s)", top, r.Reason)
	return r, nil
}
