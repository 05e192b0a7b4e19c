package synth

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/equalize"
	"github.com/polewright/polewright/synth/proto"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/xform"
	"github.com/polewright/polewright/synth/zpk"
)

// ResponsePoints is about the number of points of the response grid: log-
// spaced base points plus the points that [response.Grid] clusters round
// every pole pair and jω-axis zero and puts at the band edges. The base
// never drops below MinBasePoints, so a high-order design has somewhat
// more points in all.
const (
	ResponsePoints = 500
	MinBasePoints  = 200
)

// basePoints returns the number of base points that brings the grid of h
// to about ResponsePoints.
func basePoints(h zpk.ZPK, extra int) int {
	pairs, axis := 0, 0
	for _, p := range h.Poles {
		if imag(p) > 0 {
			pairs++
		}
	}
	for _, z := range h.Zeros {
		if imag(z) > 0 {
			axis++
		}
	}
	return max(MinBasePoints, ResponsePoints-response.GridPointsPerPole*pairs-response.GridPointsPerZero*axis-extra)
}

// dbFloor is the lowest magnitude written to the design JSON: a zero that
// falls exactly on a grid point would otherwise give −Inf.
const dbFloor = -400

// Design is the synthesised filter: its poles and zeros, its sections in
// signal order, its response and how it sits against the mask. Field names
// and JSON tags follow the project's INTERFACE.md.
type Design struct {
	// Spec is the validated spec, defaults filled in.
	Spec Spec `json:"spec"`
	// Order is the prototype order; a bandpass or bandstop has twice as many
	// poles.
	Order int `json:"order"`
	// Poles are every pole in rad/s as [re, im], conjugates included, in
	// section order.
	Poles [][2]float64 `json:"poles_rad_s"`
	// Zeros are every finite zero in rad/s, those at s = 0 included.
	Zeros [][2]float64 `json:"zeros_rad_s"`
	// Gain is the linear passband gain: the maximum of |H| in the passband.
	Gain float64 `json:"gain"`
	// Sections are the stages in signal order, input first.
	Sections []Section `json:"sections"`
	// Response is the response on a log grid.
	Response Curves `json:"response"`
	// MeetsMask reports whether the ideal response meets the mask over both
	// bands (passband only, when the spec gives no stopband).
	MeetsMask bool `json:"meets_mask"`
	// Mask says how the ideal response sits against the mask.
	Mask MaskReport `json:"mask"`
	// MonteCarlo is the tolerance Monte Carlo; nil when the spec asks for
	// no trials.
	MonteCarlo *MonteCarloReport `json:"montecarlo,omitempty"`
	// Noise is the output noise of the chain as built.
	Noise *NoiseReport `json:"noise,omitempty"`
	// Step is the step response, ideal and as built.
	Step *StepReport `json:"step,omitempty"`
	// Built is the board as built against the mask (the acceptance rule);
	// nil at the Ideal level.
	Built *BuiltReport `json:"built,omitempty"`
	// Checks is the one list of verdicts on the design, the same for the
	// page, the API and the CLI.
	Checks []Check `json:"checks"`
	// MarginSearch says which design margin a spec with target_yield
	// chose and why; nil without target_yield.
	MarginSearch *MarginSearch `json:"margin_search,omitempty"`
	// DelayEqualizer is what the delay equaliser did (nil without one).
	DelayEqualizer *DelayEqualizerReport `json:"delay_equalizer,omitempty"`
	// DC is the output's DC error from the op-amps' offsets and bias
	// currents (nil before verification).
	DC *DCReport `json:"dc,omitempty"`
	// Driver is the R–C between the last stage and a SAR converter's
	// input (nil without a sar converter); it is part of the chain as
	// built and so of every figure computed from it.
	Driver *Driver `json:"driver,omitempty"`

	tf       zpk.ZPK
	eqNote   string // what the delay equaliser did, said in its sections' reasons
	eqFig    *DelayEqualizerReport
	nodeDC   map[string]float64 // DC error of each swing node, by deck node name
	chain    *circuit.Chain
	chainTFs circuit.Cascade // the chain's stages' rational forms
	// stepLoadResidual estimates how far the unit step may be from the
	// board's where the step takes the loading to first order only
	// (circuit.Loading.FirstOrderShift; 0 otherwise).
	stepLoadResidual float64
	// chainLoad is the chain's inter-stage loading, which the response as
	// built carries beside chainTFs' product.
	chainLoad circuit.Loading
}

// TransferFunction returns the design's whole transfer function, in rad/s.
func (d *Design) TransferFunction() zpk.ZPK { return d.tf.Clone() }

// Cascade returns the design's sections, in signal order and with their
// distributed gains, as [section.Section] values (copies).
func (d *Design) Cascade() []section.Section {
	out := make([]section.Section, len(d.Sections))
	for i, s := range d.Sections {
		out[i] = section.Section{
			Poles: slices.Clone(s.sec.Poles),
			Zeros: slices.Clone(s.sec.Zeros),
			Gain:  s.sec.Gain,
		}
	}
	return out
}

// Section is one first- or second-order stage of a [Design].
type Section struct {
	// Order is 1 or 2.
	Order int `json:"order"`
	// Kind is the response shape: lowpass, highpass, bandpass,
	// lowpass-notch, highpass-notch, notch, or allpass (a delay
	// equaliser's section, last in the chain).
	Kind section.Kind `json:"kind"`
	// F0Hz is the natural frequency of the section's poles.
	F0Hz float64 `json:"f0_hz"`
	// Q is the pole quality factor; nil for a first-order section.
	Q *float64 `json:"q"`
	// ZeroHz is the frequency of the section's jω-axis zero pair, if any.
	ZeroHz *float64 `json:"zero_hz"`
	// Topology is the circuit that realises the section.
	Topology string `json:"topology"`
	// GainDB is the section's own gain at its reference frequency (DC for
	// lowpass kinds, infinity for highpass kinds, f0 for bandpass).
	GainDB float64 `json:"gain_db"`
	// PeakGainDB is the peak over frequency of the chain's response at this
	// stage's output, relative to the chain's passband gain.
	PeakGainDB float64 `json:"peak_gain_db"`
	// Poles and Zeros of this section in rad/s, as [re, im].
	Poles [][2]float64 `json:"poles_rad_s"`
	Zeros [][2]float64 `json:"zeros_rad_s"`
	// TopologyReason says why the topology and form were chosen.
	TopologyReason string `json:"topology_reason"`
	// Inverting is true when the stage's own gain is negative.
	Inverting bool `json:"inverting"`
	// Components are the resistors and capacitors of the stage.
	Components []Component `json:"components"`
	// OpAmps are the designators of the stage's op-amps.
	OpAmps []string `json:"opamps"`
	// Realized is the section as built.
	Realized *Realized `json:"realized"`
	// OpAmpNeeds is what the stage asks of its op-amps.
	OpAmpNeeds *OpAmpNeeds `json:"opamp_needs"`
	// Warnings flag what an engineer should look at (an op-amp too slow for
	// the stage, say).
	Warnings []string `json:"warnings"`
	// Sensitivities are the parts' normalised sensitivities of the stage's
	// f0 and Q as built (with the spec's op-amp), largest
	// first.
	Sensitivities []Sensitivity `json:"sensitivities"`
	// RequiredTolerance is the tolerance each part needs for the stage's
	// f0 within 1 % and Q within 2 % on 99 % of boards (first order): a
	// budget for the stage's own figures, not for the mask, which
	// Component.FailAtPct answers.
	RequiredTolerance []PartTolerance `json:"required_tolerance"`
	// Swing is the signal's extremes at the stage's op-amps, against the
	// rails when the spec gives a supply (nil before verification).
	Swing *Swing `json:"swing,omitempty"`

	sec section.Section
}

// Component is one resistor or capacitor of a stage.
type Component struct {
	// Ref is the chain-wide designator, as in the SPICE deck and the BOM.
	Ref string `json:"ref"`
	// Kind is "resistor" or "capacitor".
	Kind string `json:"kind"`
	// Value is the value as built, in Ohm or Farad.
	Value float64 `json:"value"`
	// Exact is the unrounded design value, in Ohm or Farad.
	Exact float64 `json:"exact"`
	// Series is the IEC 60063 series of Value, or "exact".
	Series string `json:"series"`
	// TolerancePct is the part's tolerance in percent.
	TolerancePct float64 `json:"tolerance_pct"`
	// FailAtPct is [down, up]: the smallest change of this part alone, in
	// %, every other part nominal, at which the board as built stops
	// passing the acceptance rule; each nil beyond 100 % (down: 99 %).
	// Both are 0 when the nominal board fails already.
	FailAtPct [2]*float64 `json:"fail_at_pct"`
}

// Realized is a section's f0 and Q as built: the dominant poles of its
// stage with the part values exported and the spec's op-amp model.
type Realized struct {
	F0Hz float64 `json:"f0_hz"`
	// Q is nil for a first-order stage.
	Q *float64 `json:"q"`
	// F0ErrorPct and QErrorPct are the errors against the section's f0
	// and Q: part rounding and op-amp together.
	F0ErrorPct float64  `json:"f0_error_pct"`
	QErrorPct  *float64 `json:"q_error_pct"`
	// OpAmpF0ErrorPct and OpAmpQErrorPct are the errors the op-amp alone
	// causes: the stage with the spec's op-amp against the same stage with
	// ideal ones.
	OpAmpF0ErrorPct float64  `json:"opamp_f0_error_pct"`
	OpAmpQErrorPct  *float64 `json:"opamp_q_error_pct"`
}

// Curves is a response on a frequency grid.
type Curves struct {
	FreqHz []float64 `json:"freq_hz"`
	// IdealDB is the magnitude of the ideal transfer function, floored at
	// −400 dB where a zero falls on a grid point.
	IdealDB []float64 `json:"ideal_db"`
	// RealizedDB is the magnitude of the circuit as built; empty until a
	// circuit is mapped.
	RealizedDB []float64 `json:"realized_db"`
	// PhaseDeg is the unwrapped phase of the ideal transfer function.
	PhaseDeg []float64 `json:"phase_deg"`
	// GroupDelayS is the group delay of the ideal transfer function.
	GroupDelayS []float64 `json:"group_delay_s"`
}

// MaskReport says how the ideal response meets the mask.
type MaskReport struct {
	// PassbandMarginDB is Amax minus the largest loss found in the
	// passband; negative when the passband fails.
	PassbandMarginDB float64 `json:"passband_margin_db"`
	// PassbandMet and StopbandMet say whether each band meets the mask,
	// with MaskToleranceDB of slack for rounding (StopbandMet is true
	// without a stopband).
	PassbandMet bool `json:"passband_met"`
	StopbandMet bool `json:"stopband_met"`
	// StopbandMarginDB is the least loss found in the stopband minus Amin;
	// nil when the spec gives no stopband.
	StopbandMarginDB *float64 `json:"stopband_margin_db"`
	// MinOrder is the lowest order that meets the mask; nil without a
	// stopband.
	MinOrder *int `json:"min_order"`
	// DesignPassbandHz are the passband edges the design is normalised to:
	// the spec's, except for a bandstop whose order was lowered by moving
	// an edge (see the package comment).
	DesignPassbandHz []float64 `json:"design_passband_hz"`
	// StopbandFrom says where the stopband came from: "spec", "converter"
	// (fs − passband edge, for a lowpass spec that left it out) or "none".
	StopbandFrom string `json:"stopband_from"`
	// NormalizedStopband is the stopband edge of the lowpass prototype,
	// ωs/ωp after the band transformation; nil without a stopband.
	NormalizedStopband *float64 `json:"normalized_stopband"`
}

// MaskToleranceDB is the slack allowed when checking the mask, so that a
// design that meets an edge exactly is not failed by rounding.
const MaskToleranceDB = 1e-6

// Level says how far [SynthesizeTo] goes.
type Level int

// The levels, each including the ones before it.
const (
	// Ideal: order, poles and zeros, sections in headroom order with their
	// gains, the ideal response and the mask check.
	Ideal Level = iota
	// Circuits: every section mapped onto a stage with part values, the
	// as-built analysis (realised f0 and Q, op-amp needs) and the as-built
	// response.
	Circuits
	// Compared: what a comparison of designs reads (explore's figures):
	// slew needs, noise, step response and settling, and the Monte Carlo
	// the spec asks for, computed exactly as at [Verified]; not the
	// per-part figures (sensitivities, required tolerances, fail_at_pct)
	// nor the board report (swing, DC error) and the checks on them.
	Compared
	// Verified: everything: Compared plus sensitivities and part
	// tolerances, every part's fail_at_pct, and the board report.
	Verified
)

// Synthesize designs the filter that s asks for, everything included: it
// is [SynthesizeTo] at [Verified]. A spec with target_yield is designed
// at each margin of [MarginLadder] until one's yield reaches it (see
// [MarginSearch]). It returns a [*FieldError] for a spec
// that cannot be built (for example a mask that needs more than
// [MaxOrder], or a section no topology fits within the part windows), and
// ctx.Err() if ctx is done first.
func Synthesize(ctx context.Context, s Spec) (*Design, error) {
	return SynthesizeTo(ctx, s, Verified)
}

// SynthesizeIdeal is [SynthesizeTo] at [Ideal]: its Design has no
// components, no realized figures and an empty realized_db, and
// [Design.Chain] reports [ErrNoCircuit].
func SynthesizeIdeal(ctx context.Context, s Spec) (*Design, error) {
	return SynthesizeTo(ctx, s, Ideal)
}

// SynthesizeTo designs the filter that s asks for up to the given level.
// Errors are as for [Synthesize].
func SynthesizeTo(ctx context.Context, s Spec, level Level) (*Design, error) {
	if s.TargetYield != nil && level >= Compared {
		if err := s.Validate(); err != nil {
			return nil, err
		}
		return synthesizeForYield(ctx, s, level)
	}
	d, ordered, err := synthesize(ctx, s)
	if err != nil {
		return nil, err
	}
	defer d.fillChecks()
	if level == Ideal {
		return d, nil
	}
	if err := d.realize(ordered); err != nil {
		return nil, err
	}
	tfs, err := d.chain.TransferFunctions()
	if err != nil {
		return nil, fmt.Errorf("synth: as-built response: %w", err)
	}
	load, err := d.chain.Loading()
	if err != nil {
		return nil, fmt.Errorf("synth: as-built response: %w", err)
	}
	realized := tfs.MagnitudeDB(nil, d.Response.FreqHz)
	load.ApplyDB(realized, d.Response.FreqHz)
	d.Response.RealizedDB = floorDB(realized)
	d.judgeBuilt(tfs, load)
	if level == Circuits {
		return d, nil
	}
	if err := d.verifyDesign(ctx, level); err != nil {
		return nil, err
	}
	return d, nil
}

func synthesize(ctx context.Context, s Spec) (*Design, []section.Section, error) {
	if err := s.Validate(); err != nil {
		return nil, nil, err
	}
	approx := proto.Approximation(s.Approximation)
	popt := proto.PhaseErrorDeg(s.phaseError())
	// The design margin tightens the losses the filter is designed to;
	// the mask check below judges against the mask as given.
	amax, amin := s.DesignRippleDB(), s.DesignAttenDB()

	designEdges := slices.Clone(s.PassbandHz)
	var ratio float64
	var minOrder int
	mask := MaskReport{}
	if s.HasStopband() {
		ratio = normalizedStopband(s.Response, s.PassbandHz, s.StopbandHz)
		n, err := proto.MinOrder(approx, amax, amin, ratio, popt)
		if s.Response == Bandstop {
			// The lowest order over every arrangement of the passband edges.
			if edges, r := optimalBandstopEdges(s.PassbandHz, s.StopbandHz); r > ratio {
				if nOpt, errOpt := proto.MinOrder(approx, amax, amin, r, popt); needed(nOpt, errOpt) < needed(n, err) {
					n, err = nOpt, errOpt
					if s.Order == 0 && errOpt == nil {
						designEdges, ratio = edges, r
					}
				}
			}
		}
		var oe *proto.OrderError
		switch {
		case err == nil:
			minOrder = n
			mask.MinOrder = &minOrder
		case errors.As(err, &oe) && s.Order == 0:
			return nil, nil, fieldErr("stopband_hz", "the mask %s for %s; widen the transition band, relax stopband_atten_db or passband_ripple_db, or choose another approximation", oe.Error(), s.Approximation)
		case errors.As(err, &oe):
			// The given order is designed; the mask is only checked.
		case s.Order == 0:
			return nil, nil, fieldErr("stopband_hz", "the lowest order cannot be computed for this mask (%v); widen the transition band", err)
		}
		r := ratio
		mask.NormalizedStopband = &r
	}
	order := s.Order
	if order == 0 {
		order = minOrder
	}
	mask.DesignPassbandHz = designEdges
	switch {
	case s.StopbandFromConverter():
		mask.StopbandFrom = "converter"
	case s.HasStopband():
		mask.StopbandFrom = "spec"
	default:
		mask.StopbandFrom = "none"
	}

	proto1, err := proto.Lowpass(approx, order, amax, amin, popt)
	if err != nil {
		field := "passband_ripple_db"
		switch {
		case s.Order == 0:
			field = "stopband_hz" // the order came from the mask: the transition band is the cause
		case approx == proto.Chebyshev2 || approx == proto.Elliptic:
			field = "stopband_atten_db"
		}
		if errors.Is(err, proto.ErrBadArgument) {
			return nil, nil, fieldErr(field, "the %s prototype of order %d cannot be designed: %s; change the order or the losses", s.Approximation, order, strings.TrimPrefix(err.Error(), proto.ErrBadArgument.Error()+": "))
		}
		return nil, nil, fieldErr(field, "the %s prototype of order %d with passband_ripple_db %g and stopband_atten_db %g cannot be computed in double precision (%v); change the order or the losses", s.Approximation, order, amax, amin, err)
	}
	h := transform(proto1, s.Response, designEdges)
	gain := math.Pow(10, s.GainDB/20)
	h.Gain *= gain

	secs, err := section.Factor(h)
	if err != nil {
		return nil, nil, fmt.Errorf("synth: %w", err)
	}
	loHz, hiHz := gridRange(s, secs)
	orderGrid := orderingGrid(secs, loHz, hiHz)
	ordered, nodePeaks, err := section.OrderPeaks(ctx, secs, orderGrid)
	if err != nil {
		return nil, nil, err
	}
	peaks, err := section.DistributePeaks(ordered, h.Gain, gain, nodePeaks)
	if err != nil {
		return nil, nil, fmt.Errorf("synth: %w", err)
	}

	eqNote := ""
	var eqFig *DelayEqualizerReport
	if s.DelayEqualizer != nil {
		eq, note, fig, err := equalizeDelay(ctx, s, section.Cascade(ordered))
		if err != nil {
			return nil, nil, err
		}
		eqNote, eqFig = note, fig
		last := 0.0 // an all-pass stage passes its input's peak on unchanged
		if len(peaks) > 0 {
			last = peaks[len(peaks)-1]
		}
		for _, ap := range eq {
			ordered = append(ordered, ap)
			peaks = append(peaks, last)
		}
	}

	d := &Design{Spec: s, Order: order, Gain: gain, Mask: mask, eqNote: eqNote, DelayEqualizer: eqFig}
	d.tf = section.Cascade(ordered)
	for i, sec := range ordered {
		d.Sections = append(d.Sections, newSection(sec, peaks[i]))
		d.Poles = append(d.Poles, pairs(sec.Poles)...)
		d.Zeros = append(d.Zeros, pairs(sec.Zeros)...)
	}
	if d.Zeros == nil {
		d.Zeros = [][2]float64{}
	}
	edges := append(slices.Clone(s.PassbandHz), s.StopbandHz...)
	d.Response = curves(d.tf, response.Grid(d.tf, loHz, hiHz, basePoints(d.tf, len(edges)), edges...))
	d.checkMask()
	return d, ordered, nil
}

// equalizeDelay returns the all-pass sections that bring the spread of
// h's group delay over the passband within the spec's delay_equalizer
// (see package equalize), with a sentence that says what they do, or a
// field error when none of up to equalize.MaxSections sections can.
func equalizeDelay(ctx context.Context, s Spec, h zpk.ZPK) ([]section.Section, string, *DelayEqualizerReport, error) {
	lo, hi := 0.0, s.PassbandHz[0]
	if s.Response == Bandpass {
		lo, hi = s.PassbandHz[0], s.PassbandHz[1]
	}
	res, err := equalize.Equalize(ctx, h, lo, hi, s.DelayEqualizer.MaxSpreadPct)
	var le *equalize.LimitError
	switch {
	case errors.As(err, &le):
		return nil, "", nil, fieldErr("delay_equalizer.max_spread_pct", "%v; ask for a spread of %.4g %% or more, or a filter with a flatter delay (bessel)", err, math.Ceil(le.BestPct*100)/100)
	case err != nil && ctx.Err() != nil:
		return nil, "", nil, err
	case err != nil:
		return nil, "", nil, fieldErr("delay_equalizer", "%v", err)
	}
	note := fmt.Sprintf("delay equaliser: %d all-pass section(s) bring the passband's group-delay spread from %.3g %% to %.3g %% of its mean (asked: at most %g %%)",
		len(res.Sections), res.FilterSpreadPct, res.SpreadPct, s.DelayEqualizer.MaxSpreadPct)
	fig := &DelayEqualizerReport{Sections: len(res.Sections), FilterSpreadPct: res.FilterSpreadPct,
		SpreadPct: res.SpreadPct, TargetPct: s.DelayEqualizer.MaxSpreadPct, BandHz: [2]float64{lo, hi}}
	return res.Sections, note, fig, nil
}

// DelayEqualizerReport is what the delay equaliser did: the passband's
// group-delay spread, (max − min)/mean in %, of the filter alone and with
// its all-pass sections (of the designed sections), against the target.
type DelayEqualizerReport struct {
	Sections        int        `json:"sections"`
	FilterSpreadPct float64    `json:"filter_spread_pct"`
	SpreadPct       float64    `json:"spread_pct"`
	TargetPct       float64    `json:"target_pct"`
	BandHz          [2]float64 `json:"band_hz"`
}

// needed returns the order MinOrder found or, for an *proto.OrderError,
// the order it would need (MaxInt when no order can meet the mask).
func needed(n int, err error) int {
	var oe *proto.OrderError
	switch {
	case err == nil:
		return n
	case errors.As(err, &oe) && !oe.Unreachable:
		return oe.Needed
	}
	return math.MaxInt
}

func pairs(roots []complex128) [][2]float64 {
	out := make([][2]float64, len(roots))
	for i, r := range roots {
		out[i] = [2]float64{real(r), imag(r)}
	}
	return out
}

func newSection(sec section.Section, peakDB float64) Section {
	out := Section{
		Order:      sec.Order(),
		Kind:       sec.Kind(),
		F0Hz:       sec.OmegaRadPerSec() / (2 * math.Pi),
		GainDB:     20 * math.Log10(sec.ReferenceGain()),
		PeakGainDB: peakDB,
		Poles:      pairs(sec.Poles),
		Zeros:      pairs(sec.Zeros),
		Components: []Component{},
		OpAmps:     []string{},
		Warnings:   []string{},
		sec:        sec,
	}
	if sec.Order() == 2 {
		q := sec.Q()
		out.Q = &q
	}
	if wz, ok := sec.ZeroOmegaRadPerSec(); ok {
		z := wz / (2 * math.Pi)
		out.ZeroHz = &z
	}
	return out
}

// transform maps the 1 rad/s prototype onto the response and edges (Hz).
func transform(p zpk.ZPK, r Response, edgesHz []float64) zpk.ZPK {
	w := func(f float64) float64 { return response.RadPerSec(f) }
	switch r {
	case Highpass:
		return xform.LowpassToHighpass(p, w(edgesHz[0]))
	case Bandpass:
		return xform.LowpassToBandpass(p, w(math.Sqrt(edgesHz[0]*edgesHz[1])), w(edgesHz[1]-edgesHz[0]))
	case Bandstop:
		return xform.LowpassToBandstop(p, w(math.Sqrt(edgesHz[0]*edgesHz[1])), w(edgesHz[1]-edgesHz[0]))
	}
	return xform.LowpassToLowpass(p, w(edgesHz[0]))
}

// normalizedStopband returns the prototype frequency (passband edge = 1) to
// which the stopband edges map: the smaller image for band responses.
func normalizedStopband(r Response, p, st []float64) float64 {
	switch r {
	case Highpass:
		return p[0] / st[0]
	case Bandpass:
		w0sq, b := p[0]*p[1], p[1]-p[0]
		img := func(f float64) float64 { return math.Abs(f*f-w0sq) / (b * f) }
		return math.Min(img(st[0]), img(st[1]))
	case Bandstop:
		return bandstopImage(p, st)
	}
	return st[0] / p[0]
}

func bandstopImage(p, st []float64) float64 {
	w0sq, b := p[0]*p[1], p[1]-p[0]
	img := func(f float64) float64 { return b * f / math.Abs(w0sq-f*f) }
	return math.Min(img(st[0]), img(st[1]))
}

// optimalBandstopEdges moves one passband edge of a bandstop towards the
// stopband until ω0² = s1·s2, which maximises the smaller stopband image
// (see the package comment), and returns the edges and that image.
func optimalBandstopEdges(p, st []float64) ([]float64, float64) {
	s1s2 := st[0] * st[1]
	edges := slices.Clone(p)
	if p[0]*p[1] < s1s2 {
		edges[0] = s1s2 / p[1] // raise the lower edge
	} else {
		edges[1] = s1s2 / p[0] // lower the upper edge
	}
	return edges, bandstopImage(edges, st)
}

// gridRange returns the frequency range of the response grid: a decade
// beyond every band edge and section frequency.
func gridRange(s Spec, secs []section.Section) (float64, float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, f := range append(slices.Clone(s.PassbandHz), s.StopbandHz...) {
		lo, hi = math.Min(lo, f), math.Max(hi, f)
	}
	for _, sec := range secs {
		f := sec.OmegaRadPerSec() / (2 * math.Pi)
		lo, hi = math.Min(lo, f), math.Max(hi, f)
		if wz, ok := sec.ZeroOmegaRadPerSec(); ok {
			lo, hi = math.Min(lo, wz/(2*math.Pi)), math.Max(hi, wz/(2*math.Pi))
		}
	}
	return lo / 10, hi * 10
}

func curves(h zpk.ZPK, grid []float64) Curves {
	c := Curves{FreqHz: grid, RealizedDB: []float64{}}
	c.IdealDB, c.PhaseDeg, c.GroupDelayS = response.MagnitudePhaseDelay(nil, nil, nil, h, grid)
	floorDB(c.IdealDB)
	for i, v := range c.GroupDelayS {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			c.GroupDelayS[i] = 0 // only exactly on a jω-axis zero, where the delay is a Dirac term
		}
	}
	return c
}

// orderingGrid returns the grid on which sections are ordered and node
// peaks found: 64 log-spaced points over [loHz, hiHz] and 11 more round
// every resonant pole pair, spread over f0·e^(±2/Q), where its peak and the
// peaks of products with it lie. Node peaks are refined between these
// points, so the grid only has to bracket them.
func orderingGrid(secs []section.Section, loHz, hiHz float64) []float64 {
	grid := response.LogSpaceHz(make([]float64, 0, 64+11*len(secs)), loHz, hiHz, 64)
	for _, sec := range secs {
		q := sec.Q()
		if q <= 0.5 {
			continue
		}
		f0 := sec.OmegaRadPerSec() / (2 * math.Pi)
		span := math.Min(2/q, 1)
		for k := -5; k <= 5; k++ {
			if f := f0 * math.Exp(span*float64(k)/5); f > loHz && f < hiHz {
				grid = append(grid, f)
			}
		}
	}
	slices.Sort(grid)
	return slices.Compact(grid)
}

// floorDB raises every value below dbFloor (−Inf at a zero on the grid,
// NaN) to dbFloor, in place, and returns v.
func floorDB(v []float64) []float64 {
	for i, x := range v {
		if !(x >= dbFloor) {
			v[i] = dbFloor
		}
	}
	return v
}

// permute returns secs in the order of the indices in perm.
func permute(secs []section.Section, perm []int) []section.Section {
	out := make([]section.Section, len(perm))
	for i, k := range perm {
		out[i] = secs[k]
	}
	return out
}
