package synth

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"strings"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/standards/si"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// OpAmpErrorFlagPct is the f0 or Q error, caused by the op-amp alone, above
// which a stage is flagged.
const OpAmpErrorFlagPct = 2

// opAmpNeedPct is the f0 and Q error, caused by the op-amp alone, that the
// reported gain-bandwidth need keeps each stage within.
const opAmpNeedPct = 1

// inverterOhm is the value of the two resistors of the polarity inverter
// (a series value in every series from E3 up).
const inverterOhm = 10e3

// OpAmpNeeds is what a stage asks of its op-amps.
type OpAmpNeeds struct {
	// GBWHz is the least gain-bandwidth product (single-pole model, the
	// spec's DC gain) that keeps the op-amp's own effect on the stage's
	// f0, Q and gain at f0 within 1 %, found to within 10 %: the errors
	// at it lie between 0.9 % and 1 %, and at 90 % of it they exceed 1 %
	// (the search holds a failing point less than 10 % below it; the
	// errors fall with the GBW there). f0 and Q are those of the section's
	// poles (the real pole of a first-order stage); the gain is |H| at the
	// ideal f0. For a notch section, whose zeros sit at f0 so that its gain
	// there is zero in theory, the frequency of its zeros takes the gain's
	// place. A first-order stage whose op-amp only buffers (rc-buffer)
	// keeps its f0 whatever the op-amp, which adds a pole of its own and
	// moves no other: its figure rests on the gain at f0 alone, which a
	// follower of noise gain G keeps within 1 % down to GBW ≈ 7·G·f0
	// (|1/(1 + j·G·f0/GBW)| = 0.99; the error falls as the square of
	// G·f0/GBW), below the rule of thumb's 50·f0 for G < 7; the phase at
	// f0, which is not judged, then lags by about G·f0/GBW rad (8° at
	// 7·f0). nil when no gain-bandwidth up to 1 THz does (the spec's DC
	// gain alone can cost a high-Q stage more than 1 %).
	GBWHz *float64 `json:"gbw_hz"`
	// RuleOfThumbGBWHz is the common-practice estimate 100·Q·f0 (50·f0 for
	// a first-order stage), shown beside GBWHz for comparison.
	RuleOfThumbGBWHz float64 `json:"rule_of_thumb_gbw_hz"`
	// SlewVPerS is the slew rate a full-scale sine at the passband edge
	// needs at this stage's output, 2π·f·Vpeak (common practice), with
	// the stage's output level from its node peak and the full scale from
	// the converter (2 Vpp when the spec names none).
	SlewVPerS float64 `json:"slew_v_per_s"`
}

// realize maps the ordered sections onto stages, fills each Section's
// circuit fields and returns the chain.
func (d *Design) realize(ordered []section.Section) error {
	s := d.Spec
	rs, err := eseries.Lookup(s.ResistorSeries)
	if err != nil {
		return fieldErr("resistor_series", "%v", err)
	}
	cs, err := eseries.Lookup(s.CapacitorSeries)
	if err != nil {
		return fieldErr("capacitor_series", "%v", err)
	}
	opt := topology.DefaultOptions()
	opt.ResistorSeries, opt.CapacitorSeries = rs, cs
	opt.Exact = s.Values == "exact"
	opt.MinOhm, opt.MaxOhm = s.ResistorRangeOhm[0], s.ResistorRangeOhm[1]
	opt.MinFarad, opt.MaxFarad = s.CapacitorRangeFarad[0], s.CapacitorRangeFarad[1]

	diff := s.Differential()
	// conv: a differential design with a section that has no fully
	// differential form (a notch kind, an all-pass) is built single-ended,
	// as auto builds it, and converted to differential after its last
	// stage. noForm lists those sections.
	conv := false
	var noForm []int
	var results []topology.Result
	var inverting, firstOrder, allpassFirst int
	for {
		results = make([]topology.Result, len(ordered))
		inverting, firstOrder = 0, -1
		allpassFirst = -1 // a first-order all-pass section, which can invert instead
		var firstErr error
		for i, sec := range ordered {
			top := s.Topology
			if conv && top == topology.FullyDifferential {
				top = topology.Auto
			}
			switch k := sec.Kind(); {
			case diff && !conv:
				top = topology.FullyDifferential
			case sec.IsAllpass():
				top = topology.Allpass
				if sec.Order() == 1 && allpassFirst < 0 {
					allpassFirst = i
				}
			case sec.Order() == 1:
				top, firstOrder = topology.RCBuffer, i
			case top == topology.OneAmpNotch && k != section.LowpassNotch && k != section.HighpassNotch && k != section.Notch:
				// one-amp-notch asks for the notch sections; the others
				// take auto's choice.
				top = topology.Auto
			}
			r, err := topology.Realize(sec, top, opt)
			if err != nil {
				switch {
				case diff && !conv && errors.Is(err, topology.ErrNoForm):
					noForm = append(noForm, i)
					continue
				case diff && !conv:
					// Another refusal counts only when every section
					// has a fully differential form.
					if firstErr == nil {
						firstErr = d.differentialError(i, err)
					}
					continue
				case conv:
					return realizeError(i, d.Sections[i], topology.Auto, err)
				}
				return realizeError(i, d.Sections[i], s.Topology, err)
			}
			if top != s.Topology {
				// The form was chosen here, not asked for by the spec.
				if rest, ok := strings.CutPrefix(r.Reason, top+" as asked: "); ok {
					r.Reason = "first-order section, built as " + top + ": " + rest
				}
			}
			results[i] = r
			if r.Inverting {
				inverting++
			}
		}
		if diff && !conv && len(noForm) > 0 {
			conv = true
			continue
		}
		if firstErr != nil {
			return firstErr
		}
		break
	}
	if (s.Topology == topology.Auto || conv) && (!diff || conv) {
		d.keepNotchesInMask(ordered, results, opt)
	}
	notes := d.takeUpGains(ordered, results, opt)
	inverting = 0
	for _, r := range results {
		if r.Inverting {
			inverting++
		}
	}
	// Keep the chain's polarity: an odd number of inverting stages is put
	// right by the first-order stage's inverting form, or else by a
	// unity-gain inverter after the last stage.
	polarity := ""
	last := len(results) - 1
	if conv {
		// The conversion inverts (half A is an inverting amplifier on the
		// last stage's output); its outputs are taken crossed when the
		// chain would otherwise invert.
		rOhm := conversionOhm(s.ResistorRangeOhm, rs, opt.Exact)
		series := rs.Name()
		if opt.Exact {
			series = "" // as the sections' resistors
		}
		st, err := results[last].Stage.WithConversion(circuit.Part{Value: rOhm, Exact: rOhm, Series: series, TolerancePct: rs.TolerancePct()})
		if err != nil {
			return fmt.Errorf("synth: conversion after stage %d: %w", last+1, err)
		}
		crossed := inverting%2 == 0
		if crossed {
			st = st.CrossOutputs()
		} else {
			results[last].Inverting = !results[last].Inverting
			inverting++
		}
		results[last].Stage = st
		polarity = conversionNote(st, rOhm, crossed)
	}
	if diff && !conv && inverting%2 == 1 {
		// A differential signal's sign is free: cross the last outputs.
		results[last].Stage = results[last].Stage.CrossOutputs()
		results[last].Inverting = !results[last].Inverting
		inverting++
		polarity = "its outputs are taken crossed (a differential signal's sign costs no part), so that the chain as a whole does not invert"
	}
	if inverting%2 == 1 && firstOrder >= 0 {
		r, err := topology.Realize(ordered[firstOrder], topology.InvertingRC, opt)
		if err == nil && r.Inverting {
			results[firstOrder] = r
			results[firstOrder].Reason = "inverting first-order form, so that the chain as a whole does not invert; " + strings.TrimPrefix(r.Reason, topology.InvertingRC+" as asked: ")
			inverting++
		}
	}
	if inverting%2 == 1 && allpassFirst >= 0 {
		r, err := topology.Realize(ordered[allpassFirst], topology.AllpassInverted, opt)
		if err == nil && r.Inverting {
			results[allpassFirst] = r
			results[allpassFirst].Reason = "inverting form, so that the chain as a whole does not invert; " + r.Reason
			inverting++
		}
	}
	for j, note := range notes {
		results[j].Reason += note
	}
	if inverting%2 == 1 {
		results[last].Stage = withInverter(results[last].Stage, rs)
		polarity = "a unity-gain inverter follows, so that the chain as a whole does not invert"
	}

	if diff && !conv {
		// The source is single-ended: the first stage converts it, its
		// half B input on the reference.
		results[0].Stage = results[0].Stage.SingleEndedInput()
		results[0].Reason += "; " + ConversionNote
	}
	if conv {
		results[0].Reason += "; " + d.singleEndedNote(noForm)
	}
	model := circuitModel(s.OpAmp)
	// One memo of transfer functions serves every analysis of the design.
	chain := circuit.Chain{Model: model, Memo: circuit.NewMemo()}
	for _, r := range results {
		// Every part carries the spec's tolerance (0: exact), so that the
		// BOM, the Monte Carlo and the tolerance figures read one value.
		for j := range r.Stage.Parts {
			p := &r.Stage.Parts[j]
			switch p.Kind {
			case circuit.Resistor:
				p.TolerancePct = s.Tolerance.ResistorPct
			case circuit.Capacitor:
				p.TolerancePct = s.Tolerance.CapacitorPct
			}
		}
		chain.Stages = append(chain.Stages, r.Stage)
	}
	if err := chain.Validate(); err != nil {
		return fmt.Errorf("synth: the mapped circuit is invalid: %w", err)
	}
	for i, r := range results {
		sec := &d.Sections[i]
		sec.Topology = r.Stage.Topology
		sec.TopologyReason = r.Reason
		if sec.Kind == section.Allpass && d.eqNote != "" {
			sec.TopologyReason = d.eqNote + "; " + r.Reason
		}
		if polarity != "" && i == len(results)-1 {
			sec.TopologyReason += "; " + polarity
		}
		sec.TopologyReason = chainWideRefs(sec.TopologyReason, chain, i+1)
		sec.Inverting = r.Inverting
		for _, p := range r.Stage.Parts {
			series := p.Series
			if series == "" {
				series = "exact"
			}
			sec.Components = append(sec.Components, Component{
				Ref: chain.Ref(i+1, p.Ref), Kind: string(p.Kind), Value: p.Value, Exact: p.Exact,
				Series: series, TolerancePct: p.TolerancePct,
			})
		}
		for _, u := range r.Stage.OpAmps {
			sec.OpAmps = append(sec.OpAmps, chain.Ref(i+1, u.Ref))
		}
		if err := d.analyseStage(i, r.Stage, model, chain.Memo); err != nil {
			return err
		}
	}
	if err := d.designDriver(&chain, rs, cs); err != nil {
		return err
	}
	d.chain = &chain
	return nil
}

// ConversionNote is the sentence a differential design's first stage
// carries: it converts the single-ended source to a differential signal.
const ConversionNote = "this first stage converts the single-ended source to differential: half A takes the source, half B's input is on the reference, and the matched halves give the section's transfer to the differential output"

// Differential reports whether the design is built of fully
// differential stages: topology fully-differential, or auto with a
// differential converter input.
func (s Spec) Differential() bool {
	return s.Topology == topology.FullyDifferential ||
		s.Topology == topology.Auto && s.Converter != nil && s.Converter.Input == InputDifferential
}

// differentialError words a section of a fully differential design
// that has no part values: the field is topology when the spec asked for
// fully-differential, converter.input when auto chose it for a
// differential converter. (A section with no fully differential form at
// all, a notch kind or an all-pass, is not refused: the design is then
// built single-ended and converted after its last stage.)
func (d *Design) differentialError(i int, err error) error {
	sec := d.Sections[i]
	field, why := "topology", "topology fully-differential"
	if d.Spec.Topology == topology.Auto {
		field, why = "converter.input", "a differential converter input (auto builds every section fully differential)"
	}
	desc := fmt.Sprintf("%s section %d (f0 %.4g Hz", sec.Kind, i+1, sec.F0Hz)
	if sec.Q != nil {
		desc += fmt.Sprintf(", Q %.3g", *sec.Q)
	}
	desc += ")"
	reason := err.Error()
	var te *topology.Error
	if errors.As(err, &te) {
		reason = te.Reason
	}
	hint := ""
	if errors.Is(err, topology.ErrLimits) {
		hint = "; widen resistor_range_ohm or capacitor_range_farad"
	}
	return fieldErr(field, "%s cannot be built for %s: %s%s", desc, why, reason, hint)
}

// singleEndedNote is the sentence the first section of a differential
// design built single-ended carries: which sections have no fully
// differential form, and where the conversion is.
func (d *Design) singleEndedNote(noForm []int) string {
	var b strings.Builder
	for j, i := range noForm {
		if j > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%d (%s)", i+1, d.Sections[i].Kind)
	}
	which := "section " + b.String() + " has"
	if len(noForm) > 1 {
		which = "sections " + b.String() + " have"
	}
	return fmt.Sprintf("built single-ended, as auto builds it, for a differential output: %s no fully differential form here, so every section is single-ended, in the usual headroom order, and a fully differential amplifier after the last section converts the signal to differential", which)
}

// conversionNote is the sentence the last section of a differential
// design built single-ended carries: the conversion stage appended to it
// (st, built by [circuit.Stage.WithConversion]) and whether its outputs
// are taken crossed.
func conversionNote(st circuit.Stage, rOhm float64, crossed bool) string {
	fda := st.OpAmps[len(st.OpAmps)-1].Ref
	sign := "its inversion puts right the stages' own, so that the chain as a whole does not invert"
	if crossed {
		sign = "its outputs are taken crossed (a differential signal's sign costs no part), so that the chain as a whole does not invert"
	}
	return fmt.Sprintf("the single-ended to differential conversion follows: fully differential op-amp %s with an input and a feedback resistor of %s in each half (unity differential gain), half A's input on this stage's output and half B's on the reference; %s",
		fda, si.Format(rOhm, "Ω", 3), sign)
}

// conversionOhm is the value of the conversion's four resistors: 10 kΩ
// (inverterOhm), or, when the resistor window excludes it, the series
// value nearest the window's geometric mean (the mean itself for exact
// values, or when the nearest series value falls outside the window).
func conversionOhm(window [2]float64, rs eseries.Series, exact bool) float64 {
	lo, hi := window[0], window[1]
	if inverterOhm >= lo && inverterOhm <= hi {
		return inverterOhm
	}
	mid := math.Sqrt(lo * hi)
	if exact {
		return mid
	}
	if v := rs.Nearest(mid); v >= lo && v <= hi {
		return v
	}
	return mid
}

// realizeError words a failed mapping as a spec error: the field is
// topology, the message names the section and the limit.
func realizeError(i int, sec Section, top string, err error) error {
	desc := fmt.Sprintf("%s section %d (f0 %.4g Hz", sec.Kind, i+1, sec.F0Hz)
	if sec.Q != nil {
		desc += fmt.Sprintf(", Q %.3g", *sec.Q)
	}
	desc += ")"
	var te *topology.Error
	if errors.As(err, &te) {
		hint := ""
		switch {
		case errors.Is(err, topology.ErrNoForm):
			hint = "; choose auto or state-variable"
		case errors.Is(err, topology.ErrLimits):
			hint = "; widen resistor_range_ohm or capacitor_range_farad"
		}
		return fieldErr("topology", "%s cannot be built as %s: %s%s", desc, top, te.Reason, hint)
	}
	return fieldErr("topology", "%s cannot be built as %s: %v", desc, top, err)
}

// withInverter appends a unity-gain inverting amplifier to st: the old
// output drives Rx through the inverting input of a new op-amp whose output
// is the stage's new output.
func withInverter(st circuit.Stage, rs eseries.Series) circuit.Stage {
	nextR, nextU := 1, 1
	for _, p := range st.Parts {
		if n, err := strconv.Atoi(p.Ref[1:]); err == nil && p.Ref[0] == 'R' && n >= nextR {
			nextR = n + 1
		}
	}
	for _, u := range st.OpAmps {
		if n, err := strconv.Atoi(u.Ref[1:]); err == nil && n >= nextU {
			nextU = n + 1
		}
	}
	in, sum, out := st.Out, "inv_sum", "inv_out"
	tol := rs.TolerancePct()
	st.Parts = append(st.Parts,
		circuit.Part{Ref: "R" + strconv.Itoa(nextR), Kind: circuit.Resistor, A: in, B: sum, Value: inverterOhm, Exact: inverterOhm, Series: rs.Name(), TolerancePct: tol},
		circuit.Part{Ref: "R" + strconv.Itoa(nextR+1), Kind: circuit.Resistor, A: sum, B: out, Value: inverterOhm, Exact: inverterOhm, Series: rs.Name(), TolerancePct: tol},
	)
	st.OpAmps = append(st.OpAmps, circuit.OpAmp{Ref: "U" + strconv.Itoa(nextU), Plus: circuit.Ground, Minus: sum, Out: out})
	st.Out = out
	return st
}

// analyseStage fills the as-built figures of section i from its stage,
// its transfer functions through the design's memo.
func (d *Design) analyseStage(i int, st circuit.Stage, model circuit.Model, memo *circuit.Memo) error {
	sec := &d.Sections[i]
	built, err := memo.TransferFunction(st, model)
	if err != nil {
		return fmt.Errorf("synth: stage %d: %w", i+1, err)
	}
	ideal, err := memo.TransferFunction(st, circuit.Model{Ideal: true})
	if err != nil {
		return fmt.Errorf("synth: stage %d: %w", i+1, err)
	}
	// The section's order is known; the rational form's own count can come
	// out short when a far op-amp coefficient is taken for rounding noise.
	built.SectionOrder, ideal.SectionOrder = sec.Order, sec.Order
	f0, q, ok := built.DominantPair()
	if !ok {
		return fmt.Errorf("synth: stage %d has no dominant pole", i+1)
	}
	f0i, qi, _ := ideal.DominantPair()
	r := &Realized{F0Hz: f0, F0ErrorPct: pct(f0, sec.F0Hz), OpAmpF0ErrorPct: pct(f0, f0i)}
	if sec.Order == 2 {
		r.Q = &q
		qe, qo := pct(q, *sec.Q), pct(q, qi)
		r.QErrorPct, r.OpAmpQErrorPct = &qe, &qo
	}
	sec.Realized = r
	worst := math.Abs(r.OpAmpF0ErrorPct)
	if r.OpAmpQErrorPct != nil {
		worst = math.Max(worst, math.Abs(*r.OpAmpQErrorPct))
	}
	start := 0.0 // where the search for the op-amp need starts
	gbwWorst := worst
	if !model.Ideal && model.HasParasitics() {
		// The search's errors are the gain-bandwidth's alone (its models
		// have no parasitics), and so is its starting estimate: the input
		// capacitance's share of worst does not fall with GBW, and
		// starting from it cost the search a few more steps.
		gbwWorst = 0
		plain := model
		plain.InputCapacitanceFarad, plain.OutputResistanceOhm = 0, 0
		if tf, err := memo.TransferFunction(st, plain); err == nil {
			tf.SectionOrder = sec.Order
			if fp, qp, ok := tf.DominantPair(); ok {
				gbwWorst = math.Abs(pct(fp, f0i))
				if sec.Order == 2 {
					gbwWorst = math.Max(gbwWorst, math.Abs(pct(qp, qi)))
				}
			}
		}
	}
	if !model.Ideal && gbwWorst > 0 {
		start = model.GBWHz * gbwWorst / opAmpNeedPct // errors fall as 1/GBW
	}
	sec.OpAmpNeeds = opAmpNeeds(st, model, f0i, qi, sec.Order, start, sec.Kind == section.Notch, memo)
	if !model.Ideal && worst > OpAmpErrorFlagPct {
		need := "no gain-bandwidth up to 1 THz keeps it within 1 %"
		if g := sec.OpAmpNeeds.GBWHz; g != nil {
			need = fmt.Sprintf("it needs about %.3g Hz to stay within %d %%", *g, opAmpNeedPct)
		}
		sec.Warnings = append(sec.Warnings, fmt.Sprintf(
			"the op-amp's %.3g Hz gain-bandwidth moves this stage's f0 by %.2f %% and Q by %s; %s",
			model.GBWHz, r.OpAmpF0ErrorPct, pctText(r.OpAmpQErrorPct), need))
	}
	return nil
}

func pct(got, want float64) float64 { return 100 * (got - want) / want }

func pctText(p *float64) string {
	if p == nil {
		return "nothing (first order)"
	}
	return fmt.Sprintf("%.2f %%", *p)
}

// The op-amp need search (opAmpNeeds).
const (
	// needBracket: the least gain-bandwidth lies within this factor below
	// the reported one (10 %): the search ends on a bracket lo < need ≤
	// lo·needBracket with the errors above the limit at lo and within it
	// at the need.
	needBracket = 1.1
	// needLowFrac: the errors at the reported need are at least this share
	// of the limit (for an error law steeper than 1/GBW the bracket alone
	// would not ensure it).
	needLowFrac = 0.9
	// needAim is the share of the limit that the power-law steps aim at.
	needAim = 0.95
	// needMaxEvals bounds the analyses of one search (3 or 4 in practice).
	needMaxEvals = 40
	// maxNeedGBWHz is the largest gain-bandwidth tried.
	maxNeedGBWHz = 1e12
)

// opAmpNeeds finds the least gain-bandwidth that keeps the op-amp's own
// effect on the stage within opAmpNeedPct, with the spec's DC gain (100 dB
// for an ideal spec). f0 and q are the stage's with ideal op-amps, order
// its section's order, notch whether its jω-axis zeros sit at f0 by design
// (a notch section), start an estimate of the need (0: none).
//
// The effect is the largest of the relative changes of f0 and (second
// order) Q of the section's poles, as [circuit.Rational.DominantPair]
// reads them, and of the gain |H| at the ideal f0; for a notch section,
// whose gain at f0 is zero in theory and whose relative change there is no
// measure, the change of the frequency of its zeros takes the gain's
// place. The errors fall as 1/GBW for most stages and as 1/GBW² for a
// follower (see OpAmpNeeds.GBWHz), so the search steps on a power law
// whose exponent it measures from its last two analyses, aiming at
// needAim of the limit, until it holds a bracket lo < need ≤
// lo·needBracket with the errors above the limit at lo and between
// needLowFrac of it and the limit at the need. Only a failing point above
// the best passing one moves the bracket's top, so that where the errors
// are not monotone the need is the crossing nearest the fast op-amps. The
// need is never below f0; nil when the errors exceed the limit at 1 THz.
func opAmpNeeds(st circuit.Stage, model circuit.Model, f0, q float64, order int, start float64, notch bool, memo *circuit.Memo) *OpAmpNeeds {
	dc := model.DCGainDB
	if model.Ideal {
		dc = 100
	}
	rule := 50 * f0
	if order == 2 {
		rule = 100 * q * f0
	}
	idealTF, err := memo.TransferFunction(st, circuit.Model{Ideal: true})
	if err != nil {
		return &OpAmpNeeds{RuleOfThumbGBWHz: rule}
	}
	refGain := cmplx.Abs(idealTF.AtHz(f0))
	var zero complex128 // the notch's zero (rad/s), upper half plane
	if notch {
		zero = axisZeroNear(idealTF.Zeros(), 2*math.Pi*f0)
	}
	// worst returns the op-amp's largest error, in percent.
	worst := func(gbw float64) float64 {
		tf, err := st.TransferFunction(circuit.Model{GBWHz: gbw, DCGainDB: dc})
		if err != nil {
			return math.Inf(1)
		}
		tf.SectionOrder = order
		f, qq, ok := tf.DominantPair()
		if !ok {
			return math.Inf(1)
		}
		e := math.Abs(pct(f, f0))
		if order == 2 {
			e = math.Max(e, math.Abs(pct(qq, q)))
		}
		if zero == 0 {
			e = math.Max(e, math.Abs(pct(cmplx.Abs(tf.AtHz(f0)), refGain)))
		} else {
			z := nearestRoot(tf.Zeros(), zero)
			e = math.Max(e, math.Abs(pct(cmplx.Abs(z), cmplx.Abs(zero))))
		}
		if math.IsNaN(e) {
			return math.Inf(1)
		}
		return e
	}
	const limit = opAmpNeedPct
	g := rule
	if start > f0 && start < maxNeedGBWHz {
		g = start
	}
	var lo, hi, eHi float64 // the bracket: errors above the limit at lo, within it at hi (0: none yet)
	var gPrev, ePrev float64
	for range needMaxEvals {
		e := worst(g)
		switch {
		case e > limit:
			if g > lo {
				lo = g
				if hi <= lo {
					hi = 0 // a failing point above the passing one: the crossing is higher
				}
			}
		case g > lo && (hi == 0 || g < hi):
			hi, eHi = g, e
		}
		switch {
		case hi > 0 && lo > 0 && hi <= lo*needBracket && eHi >= needLowFrac*limit,
			hi > 0 && hi <= f0:
			need := hi
			return &OpAmpNeeds{GBWHz: &need, RuleOfThumbGBWHz: rule}
		case lo >= maxNeedGBWHz:
			return &OpAmpNeeds{RuleOfThumbGBWHz: rule}
		}
		// A power-law step e ∝ GBW^−n towards needAim·limit, n from the
		// last two analyses (1 at first), bounded to [0.5, 3].
		n := 1.0
		if gPrev > 0 && ePrev > 0 && e > 0 && !math.IsInf(ePrev, 0) && !math.IsInf(e, 0) && g != gPrev {
			if m := math.Log(ePrev/e) / math.Log(g/gPrev); m > 0 {
				n = math.Min(math.Max(m, 0.5), 3) // else not falling: keep 1
			}
		}
		next := g * 16
		switch {
		case math.IsInf(e, 1):
		case e == 0:
			next = g / 16
		default:
			next = g * math.Pow(e/(needAim*limit), 1/n)
		}
		switch {
		case hi > 0 && lo > 0:
			// Inside the bracket; once narrow enough, halve it (in log) until
			// the errors at its top reach needLowFrac of the limit.
			switch {
			case hi <= lo*needBracket || next <= lo || next >= hi:
				next = math.Sqrt(lo * hi)
			case next > hi/needBracket:
				next = hi / needBracket // try to close the bracket at once
			}
		case hi > 0:
			next = math.Max(math.Max(math.Min(next, hi/needBracket), hi/16), f0)
		default:
			next = math.Min(math.Max(next, lo*needBracket), math.Min(lo*16, maxNeedGBWHz))
		}
		gPrev, ePrev, g = g, e, next
	}
	if hi > 0 {
		need := hi
		return &OpAmpNeeds{GBWHz: &need, RuleOfThumbGBWHz: rule}
	}
	return &OpAmpNeeds{RuleOfThumbGBWHz: rule}
}

// axisZeroNear returns the zero of zeros in the upper half plane on or
// next to the jω axis (|Re z| ≤ 0.01·|z|: the one-amplifier notch's part
// rounding leaves its zeros a damping ζz of up to about 0.01) nearest to
// j·w, or 0 when there is none.
func axisZeroNear(zeros []complex128, w float64) complex128 {
	var best complex128
	dist := math.Inf(1)
	for _, z := range zeros {
		if imag(z) <= 0 || math.Abs(real(z)) > 0.01*cmplx.Abs(z) {
			continue
		}
		if d := math.Abs(cmplx.Abs(z) - w); d < dist {
			best, dist = z, d
		}
	}
	return best
}

// nearestRoot returns the root of roots nearest to z (NaN when there is
// none).
func nearestRoot(roots []complex128, z complex128) complex128 {
	best := cmplx.NaN()
	dist := math.Inf(1)
	for _, r := range roots {
		if d := cmplx.Abs(r - z); d < dist {
			best, dist = r, d
		}
	}
	return best
}

// circuitModel is the circuit package's op-amp model of the spec's op-amp:
// the small-signal model with its parasitics, and its DC errors.
func circuitModel(o OpAmp) circuit.Model {
	return circuit.Model{GBWHz: o.GBWHz, DCGainDB: o.DCGainDB, Ideal: o.Ideal,
		InputCapacitanceFarad: o.InputCapacitanceFarad, OutputResistanceOhm: o.OutputResistanceOhm,
		OffsetV: o.OffsetV, BiasA: o.BiasA}
}
