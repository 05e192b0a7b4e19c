package synth

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/standards/si"
)

// Severity says what a failed check means.
type Severity string

// The severities. A check that passes is Info.
const (
	// SeverityError: the board fails its job.
	SeverityError Severity = "error"
	// SeverityWarning: the board may do its job, but something needs an
	// engineer's look (a low yield, a slow op-amp).
	SeverityWarning Severity = "warning"
	// SeverityInfo: the check passes.
	SeverityInfo Severity = "info"
)

// The check ids of INTERFACE.md.
const (
	CheckIdealMask = "ideal-mask"
	CheckBuiltMask = "built-mask"
	CheckYield     = "yield"
	CheckAlias     = "alias"
	CheckNoise     = "noise"
	CheckSettling  = "settling"
	CheckSlew      = "slew"
	CheckOpAmpGBW  = "opamp-gbw"
	CheckSwing     = "swing"
	CheckInput     = "input-range"
	CheckDCError   = "dc-error"
	CheckDelay     = "delay-spread"
	// CheckDriverSettling and CheckDriverStability judge a SAR
	// converter's driver ([Driver]).
	CheckDriverSettling  = "driver-settling"
	CheckDriverStability = "driver-stability"
	// CheckCommonMode judges a differential design's common-mode
	// rejection under part mismatch ([CommonModeReport]).
	CheckCommonMode = "common-mode"
	// CheckOutputCommonMode compares a differential design's output
	// common mode (the reference, where the FDAs hold it) with the
	// common mode the converter's input wants.
	CheckOutputCommonMode = "output-common-mode"
	// CheckStepModel: present when the step takes the stages' loading of
	// each other to first order only and what that leaves out may move
	// the step by more than StepModelLimitPct of it.
	CheckStepModel = "step-model"
)

// OutputCommonModeLimitV is how far the FDAs' output common mode may sit
// from converter.input_common_mode_v before the output-common-mode check
// warns: 0.1 V (common practice: a differential converter's input common
// mode is commonly allowed about ±0.1 V around its nominal).
const OutputCommonModeLimitV = 0.1

// Check is one verdict on a design: what was judged, the figure it came
// to and the limit it was held to, and one sentence that says it.
type Check struct {
	// ID names the check (CheckIdealMask, …).
	ID string `json:"id"`
	// OK is true when the check passes.
	OK bool `json:"ok"`
	// Severity is SeverityInfo when OK; otherwise what the failure means.
	Severity Severity `json:"severity"`
	// Figure is the number judged, in Unit; Limit the bound it is held to.
	Figure float64 `json:"figure"`
	Limit  float64 `json:"limit"`
	Unit   string  `json:"unit"`
	// Stage is the 1-based stage the check points at, or nil.
	Stage *int `json:"stage"`
	// Text says the verdict in one sentence.
	Text string `json:"text"`
}

// Check thresholds.
const (
	// YieldTarget is the yield the yield check asks for: 99 % of boards.
	YieldTarget = 0.99
	// NoiseLossBits is the most resolution the noise check lets the
	// filter's noise cost the converter: half a bit, where the sampled
	// noise equals the quantisation noise LSB/√12.
	NoiseLossBits = 0.5
	// SettlingSlack is how much longer than the ideal filter the board as
	// built may take to settle before the settling check fails (our own
	// figure: a board that settles 25 % slower than its design has an
	// op-amp or part problem worth a look).
	SettlingSlack = 1.25
)

func newCheck(id string, ok bool, failSeverity Severity, figure, limit float64, unit string, stage int, text string) Check {
	c := Check{ID: id, OK: ok, Severity: SeverityInfo, Figure: finiteOr(figure, limit), Limit: finiteOr(limit, 0), Unit: unit, Text: text}
	if !ok {
		c.Severity = failSeverity
	}
	if stage > 0 {
		c.Stage = &stage
	}
	return c
}

// finiteOr returns v, or alt when v is NaN or infinite (the JSON carries
// no NaN or Inf); ±Inf becomes ±1e300 when alt is not wanted.
func finiteOr(v, alt float64) float64 {
	switch {
	case math.IsNaN(v):
		return alt
	case math.IsInf(v, 1):
		return 1e300
	case math.IsInf(v, -1):
		return -1e300
	}
	return v
}

// fillChecks computes every check whose inputs the design carries, in a
// fixed order: ideal-mask, built-mask, yield, alias, noise, settling,
// slew, opamp-gbw, then the safety cautions that apply (cautions.go).
func (d *Design) fillChecks() {
	d.Checks = []Check{d.idealMaskCheck()}
	if d.Built != nil {
		d.Checks = append(d.Checks, d.builtMaskCheck())
	}
	if d.MonteCarlo != nil {
		d.Checks = append(d.Checks, d.yieldCheck())
	}
	if d.Built != nil && d.Built.AliasMarginDB != nil {
		d.Checks = append(d.Checks, d.aliasCheck())
	}
	if c, ok := d.noiseCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if c, ok := d.settlingCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if c, ok := d.slewCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if c, ok := d.opAmpGBWCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if c, ok := d.stepModelCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	for _, pin := range []string{PinOutput, PinInput} {
		if c, ok := d.swingCheck(pin); ok {
			d.Checks = append(d.Checks, c)
		}
	}
	if c, ok := d.dcErrorCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if e := d.DelayEqualizer; e != nil {
		ok := e.SpreadPct <= e.TargetPct
		text := fmt.Sprintf("%d all-pass section(s) bring the passband's group-delay spread from %.3g %% to %.3g %% of its mean (at most %g %% asked).", e.Sections, e.FilterSpreadPct, e.SpreadPct, e.TargetPct)
		d.Checks = append(d.Checks, newCheck(CheckDelay, ok, SeverityError, e.SpreadPct, e.TargetPct, "%", 0, text))
	}
	if c, ok := d.driverSettlingCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if c, ok := d.driverStabilityCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if c, ok := d.commonModeCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	if c, ok := d.outputCommonModeCheck(); ok {
		d.Checks = append(d.Checks, c)
	}
	d.Checks = append(d.Checks, d.cautionChecks()...)
}

// StepModelLimitPct is the share of the step, in %, beyond which the
// step-model check warns that the step's first-order loading may be off
// (a rule of this program).
const StepModelLimitPct = 1

// stepModelCheck warns when the step takes the loading to first order
// only (circuit.Loading.FirstOrder) and the estimate of what that leaves
// out (circuit.Loading.FirstOrderShift) exceeds StepModelLimitPct of the
// step: the step's figures and the swing's step extremes may be that far
// from the board's.
func (d *Design) stepModelCheck() (Check, bool) {
	pct := 100 * d.stepLoadResidual
	if !(pct > StepModelLimitPct) {
		return Check{}, false
	}
	share := fmt.Sprintf("%.3g %% of the step", pct)
	if pct >= 100 {
		share = fmt.Sprintf("%.3g times the step", pct/100)
	}
	text := fmt.Sprintf("The step takes each stage loaded by the next stage's input only; what the stages beyond add through the op-amps' output resistance may move it by up to %s here (an estimate), so its overshoot, settling and the swing's step extremes may be that far off: check them with the deck's .tran.", share)
	return newCheck(CheckStepModel, false, SeverityWarning, pct, StepModelLimitPct, "%", 0, text), true
}

// swingCheck judges the op-amp outputs (pin "output": the swing check)
// or non-inverting inputs ("input": input-range) against the rails less
// the op-amp's headroom; present with a supply.
func (d *Design) swingCheck(pin string) (Check, bool) {
	if d.Spec.Supply == nil {
		return Check{}, false
	}
	var worst *SwingNode
	stage := 0
	for i, sec := range d.Sections {
		if sec.Swing == nil {
			continue
		}
		for j := range sec.Swing.Nodes {
			n := &sec.Swing.Nodes[j]
			if n.Pin == pin && n.HeadroomV != nil && (worst == nil || *n.HeadroomV < *worst.HeadroomV) {
				worst, stage = n, i+1
			}
		}
	}
	if worst == nil {
		return Check{}, false
	}
	id, what, hd := CheckSwing, "output", d.Spec.OpAmp.OutputHeadroomV
	if pin == PinInput {
		id, what, hd = CheckInput, "non-inverting input", d.Spec.OpAmp.InputHeadroomV
	}
	vpp := d.Spec.SignalVppV()
	cause := "a full-scale sine"
	if worst.StepV != nil && (worst.StepV[1] > worst.SineV[1] || worst.StepV[0] < worst.SineV[0]) {
		cause = "the full-scale step"
	}
	room := *worst.HeadroomV
	var text string
	if room >= 0 {
		text = fmt.Sprintf("With a %s input around %s, every op-amp %s stays within the rails less %s; the closest, %s at %s, spans %s to %s and keeps %s.",
			si.Format(vpp, "Vpp", 3), si.Format(d.reference(), "V", 3), what, si.Format(hd, "V", 3),
			worst.Ref, worst.Node, si.Format(worst.PeakV[0], "V", 4), si.Format(worst.PeakV[1], "V", 4), si.Format(room, "V", 3))
	} else {
		text = fmt.Sprintf("With a %s input around %s, %s's %s (%s) reaches %s to %s on %s, %s beyond the %s to %s it may use: it clips; lower signal_vpp or the gain, or pick an op-amp with more range.",
			si.Format(vpp, "Vpp", 3), si.Format(d.reference(), "V", 3), worst.Ref, what, worst.Node,
			si.Format(worst.PeakV[0], "V", 4), si.Format(worst.PeakV[1], "V", 4), cause, si.Format(-room, "V", 3),
			si.Format(worst.LimitV[0], "V", 4), si.Format(worst.LimitV[1], "V", 4))
	}
	return newCheck(id, room >= 0, SeverityError, room, 0, "V", stage, text), true
}

// dcErrorCheck compares the output's DC error with ½ LSB; present with a
// converter when the op-amp has an offset or a bias current.
func (d *Design) dcErrorCheck() (Check, bool) {
	dc := d.DC
	if dc == nil || dc.OutputOffsetLSB == nil || (d.Spec.OpAmp.OffsetV == 0 && d.Spec.OpAmp.BiasA == 0) {
		return Check{}, false
	}
	lsb := math.Abs(*dc.OutputOffsetLSB)
	ok := lsb <= dcBudgetLSB
	top := ""
	if len(dc.Contributors) > 0 {
		c := dc.Contributors[0]
		src := "offset voltage gives"
		if math.Abs(c.BiasV) > math.Abs(c.OffsetV) {
			src = "bias currents give"
		}
		top = fmt.Sprintf(" %s's %s %.0f %% of it.", c.Ref, src, 100*c.Share)
	}
	text := fmt.Sprintf("The output sits %s from the reference at DC (%.3g LSB), within the ½ LSB budget.", si.Format(dc.OutputOffsetV, "V", 3), *dc.OutputOffsetLSB) + top
	if !ok {
		text = fmt.Sprintf("The output sits %s from the reference at DC, %.3g LSB against a ½ LSB budget: calibrate the offset out or choose a more precise op-amp.", si.Format(dc.OutputOffsetV, "V", 3), *dc.OutputOffsetLSB) + top
		if len(dc.Balance) > 0 {
			b := dc.Balance[0]
			text += fmt.Sprintf(" %s in series with %s's %s input would bring it to %s.", si.Format(b.ResistorOhm, "Ω", 3), b.Ref, b.Pin, si.Format(b.OutputOffsetV, "V", 3))
		}
	}
	return newCheck(CheckDCError, ok, SeverityWarning, lsb, dcBudgetLSB, "LSB", 0, text), true
}

// driverSettlingCheck judges the error the SAR driver leaves at the end
// of the acquisition against ½ LSB; present with a driver.
func (d *Design) driverSettlingCheck() (Check, bool) {
	dr := d.Driver
	if dr == nil {
		return Check{}, false
	}
	ok := dr.SettledErrorLSB <= DriverSettleLimitLSB
	text := fmt.Sprintf("The sampling capacitor's %s kick settles through %s and %s to %.3g LSB by the end of the %s acquisition, within ½ LSB.",
		si.Format(dr.KickbackV, "V", 3), si.Format(dr.ROhm, "Ω", 3), si.Format(dr.CFarad, "F", 3), dr.SettledErrorLSB, si.Format(dr.AcquisitionTimeS, "s", 3))
	if !ok {
		text = fmt.Sprintf("The sampling capacitor's %s kick is still %.3g LSB off at the end of the %s acquisition, more than ½ LSB: the op-amp is too slow for the R–C, or the acquisition too short; a faster op-amp or a longer acquisition cures it.",
			si.Format(dr.KickbackV, "V", 3), dr.SettledErrorLSB, si.Format(dr.AcquisitionTimeS, "s", 3))
	}
	return newCheck(CheckDriverSettling, ok, SeverityError, dr.SettledErrorLSB, DriverSettleLimitLSB, "LSB", len(d.Sections), text), true
}

// driverStabilityCheck judges the phase margin of the last op-amp with
// the driver's R–C as its load; present with a driver and a finite
// op-amp.
func (d *Design) driverStabilityCheck() (Check, bool) {
	dr := d.Driver
	if dr == nil || dr.PhaseMarginDeg == nil {
		return Check{}, false
	}
	pm := *dr.PhaseMarginDeg
	ok := pm >= DriverPhaseMarginDeg
	ro := si.Format(d.Spec.OpAmp.OutputResistanceOhm, "Ω", 3)
	text := fmt.Sprintf("With %s and %s as its load and its %s output resistance, the last op-amp's loop keeps %.0f° of phase margin at %s (at least %d° asked).",
		si.Format(dr.ROhm, "Ω", 3), si.Format(dr.CFarad, "F", 3), ro, pm, si.Format(*dr.CrossoverHz, "Hz", 3), DriverPhaseMarginDeg)
	if !ok {
		text = fmt.Sprintf("With %s and %s as its load and its %s output resistance, the last op-amp's loop has only %.0f° of phase margin at %s, under %d°: it rings at each kick; a larger R (with a longer acquisition) or an op-amp made for capacitive loads cures it.",
			si.Format(dr.ROhm, "Ω", 3), si.Format(dr.CFarad, "F", 3), ro, pm, si.Format(*dr.CrossoverHz, "Hz", 3), DriverPhaseMarginDeg)
	}
	return newCheck(CheckDriverStability, ok, SeverityWarning, pm, DriverPhaseMarginDeg, "deg", len(d.Sections), text), true
}

// idealMaskCheck judges the ideal response (meets_mask).
func (d *Design) idealMaskCheck() Check {
	m := d.Mask
	worst := m.PassbandMarginDB
	if m.StopbandMarginDB != nil {
		worst = math.Min(worst, *m.StopbandMarginDB)
	}
	var text string
	switch {
	case d.MeetsMask:
		text = fmt.Sprintf("The ideal %s filter of order %d meets the mask with %s dB to spare.", approximationNames[d.Spec.Approximation], d.Order, dbText(worst))
	case !m.PassbandMet:
		text = fmt.Sprintf("The ideal filter misses the mask in the passband by %s dB: the order or the losses given do not fit the mask.", dbText(-m.PassbandMarginDB))
	default:
		text = fmt.Sprintf("The ideal filter of order %d misses the stopband attenuation by %s dB: raise the order or leave it to the lowest that meets the mask.", d.Order, dbText(-*m.StopbandMarginDB))
	}
	return newCheck(CheckIdealMask, d.MeetsMask, SeverityError, worst, 0, "dB", 0, text)
}

// builtMaskCheck judges the board as built by the acceptance rule.
func (d *Design) builtMaskCheck() Check {
	b, s := d.Built, d.Spec
	r := b.result
	worst := r.PassMarginDB
	what := fmt.Sprintf("the passband ripples %s dB; the mask allows %s dB", dbText(b.PassbandRippleDB), dbText(s.PassbandRippleDB))
	if b.StopbandMarginDB != nil && *b.StopbandMarginDB < worst {
		worst = *b.StopbandMarginDB
		what = fmt.Sprintf("the stopband comes within %s dB of the passband maximum; the mask asks for %s dB", dbText(b.PassbandMaxDB-*b.StopbandWorstDB), dbText(s.StopbandAttenDB))
	}
	if b.GainMarginDB != nil && *b.GainMarginDB < worst {
		worst = *b.GainMarginDB
		what = fmt.Sprintf("the passband maximum is %+.3g dB from gain_db; the tolerance is ±%s dB", b.GainErrorDB, dbText(*s.GainToleranceDB))
	}
	if b.AliasMarginDB != nil && *b.AliasMarginDB < worst {
		// The acceptance rule includes the alias band (its own check words
		// it too).
		worst = *b.AliasMarginDB
		what = fmt.Sprintf("what sampling folds onto the passband is only %s dB down; the converter needs %s dB", dbText(b.PassbandMaxDB-*b.AliasWorstDB), dbText(s.Converter.AliasAttenDB))
	}
	if b.Unstable {
		return newCheck(CheckBuiltMask, false, SeverityError, math.Min(worst, 0), 0, "dB", 0,
			"As built, the board is unstable: the op-amps' finite gain-bandwidth moves a pole into the right half-plane. A faster op-amp or lower-Q sections cure it.")
	}
	var text string
	if b.MeetsMask {
		text = fmt.Sprintf("As built (%s parts, the spec's op-amp), the board meets the mask with %s dB to spare: %s.", s.ResistorSeries, dbText(worst), what)
		if s.Values == "exact" {
			text = fmt.Sprintf("As built (exact parts, the spec's op-amp), the board meets the mask with %s dB to spare: %s.", dbText(worst), what)
		}
	} else {
		text = fmt.Sprintf("As built, %s (%s dB short). A design_margin, a faster op-amp or a finer resistor_series closes the gap.", what, dbText(-worst))
	}
	return newCheck(CheckBuiltMask, b.MeetsMask, SeverityError, worst, 0, "dB", 0, text)
}

// yieldCheck judges the Monte Carlo's yield against YieldTarget.
func (d *Design) yieldCheck() Check {
	mc := d.MonteCarlo
	pass := int(math.Round(mc.Yield * float64(mc.Trials)))
	target := YieldTarget
	if t := d.Spec.TargetYield; t != nil {
		target = *t // the spec's own target (see MarginSearch)
	}
	ok := mc.Yield >= target
	text := fmt.Sprintf("Yield %.1f %%: %d of %d boards drawn within the tolerances pass the mask as built (seed %d).", 100*mc.Yield, pass, mc.Trials, mc.Seed)
	if !ok {
		text = fmt.Sprintf("Yield %.1f %%: %d of %d boards drawn within the tolerances fail the mask as built (seed %d); %.0f %% is the target. Tighter parts (see each part's fail_at_pct) or a design_margin raise it.", 100*mc.Yield, mc.Trials-pass, mc.Trials, mc.Seed, 100*target)
	}
	return newCheck(CheckYield, ok, SeverityWarning, mc.Yield, target, "", 0, text)
}

// aliasCheck judges the alias band: what folds onto the passband.
func (d *Design) aliasCheck() Check {
	b, c := d.Built, d.Spec.Converter
	m := *b.AliasMarginDB
	ok := m >= -MaskToleranceDB
	atten := b.PassbandMaxDB - *b.AliasWorstDB
	text := fmt.Sprintf("Everything that sampling at %s folds onto the passband is at least %s dB down (%s dB asked).", si.Format(c.SampleRateHz, "Hz", 4), dbText(atten), dbText(c.AliasAttenDB))
	if !ok {
		text = fmt.Sprintf("Sampling at %s folds signals only %s dB down onto the passband; the converter needs %s dB. Raise the order, or the sample rate.", si.Format(c.SampleRateHz, "Hz", 4), dbText(atten), dbText(c.AliasAttenDB))
	}
	return newCheck(CheckAlias, ok, SeverityError, m, 0, "dB", 0, text)
}

// noiseCheck judges the noise the converter's output words carry (the
// sampled noise, folding included) against their quantisation noise: the
// resolution the filter costs the converter, enob_loss_bits.
func (d *Design) noiseCheck() (Check, bool) {
	n, c := d.Noise, d.Spec.Converter
	if n == nil || c == nil || n.QuantizationRMSV == nil || n.SampledRMSV == nil || n.ENOBLossBits == nil {
		return Check{}, false
	}
	q, rms, loss := *n.QuantizationRMSV, *n.SampledRMSV, *n.ENOBLossBits
	ok := loss <= NoiseLossBits
	snr := ""
	if n.SNRDB != nil {
		snr = fmt.Sprintf(", SNR %.1f dB", *n.SNRDB)
	}
	text := fmt.Sprintf("The noise the converter's samples carry, %s rms (folding included), costs the %d-bit converter %.2f bits (quantisation noise %s rms%s).",
		si.Format(rms, "V", 3), c.Bits, loss, si.Format(q, "V", 3), snr)
	if !ok {
		text = fmt.Sprintf("The noise the converter's samples carry, %s rms (folding included), costs the %d-bit converter %.2f bits, more than the %.1f bit allowed (quantisation noise %s rms%s): lower resistor values, a quieter op-amp or a filter that falls off faster above the band help.",
			si.Format(rms, "V", 3), c.Bits, loss, NoiseLossBits, si.Format(q, "V", 3), snr)
	}
	if n.SampledCapped {
		text += " The output noise density does not fall off at high frequencies (an ideal op-amp's follower passes its noise at every frequency), so the figure stops at 10⁴ × the sample rate: a real op-amp's bandwidth ends it sooner."
	}
	return newCheck(CheckNoise, ok, SeverityWarning, loss, NoiseLossBits, "bits", 0, text), true
}

// settlingCheck compares the as-built settling time with the ideal
// filter's.
func (d *Design) settlingCheck() (Check, bool) {
	st := d.Step
	if st != nil && st.Unstable {
		return newCheck(CheckSettling, false, SeverityError, math.Inf(1), 0, "s", 0,
			"As built, the board is unstable: the op-amps' finite gain-bandwidth moves a pole into the right half-plane, so a step never settles. A faster op-amp or lower-Q sections cure it."), true
	}
	if st == nil || st.SettlingS == nil || st.IdealSettlingS == nil || !(*st.IdealSettlingS > 0) {
		return Check{}, false
	}
	built, ideal := *st.SettlingS, *st.IdealSettlingS
	limit := SettlingSlack * ideal
	ok := built <= limit
	band := "±0.1 %"
	if c := d.Spec.Converter; c != nil {
		band = fmt.Sprintf("±½ LSB of %d bits", c.Bits)
	}
	text := fmt.Sprintf("A step settles to %s in %s as built, %s for the ideal filter.", band, si.Format(built, "s", 3), si.Format(ideal, "s", 3))
	if c := d.Spec.Converter; c != nil {
		text = fmt.Sprintf("A step settles to %s in %s as built (%.0f sample periods), %s for the ideal filter.", band, si.Format(built, "s", 3), math.Ceil(built*c.SampleRateHz), si.Format(ideal, "s", 3))
	}
	if !ok {
		text += fmt.Sprintf(" That is more than %.2g× the ideal: an op-amp or the part values slow the board down.", SettlingSlack)
	}
	return newCheck(CheckSettling, ok, SeverityWarning, built, limit, "s", 0, text), true
}

// slewCheck compares the largest slew rate a full-scale sine at the
// passband edge needs with the op-amp's.
func (d *Design) slewCheck() (Check, bool) {
	need, worst := 0.0, 0
	for i, sec := range d.Sections {
		if sec.OpAmpNeeds != nil && sec.OpAmpNeeds.SlewVPerS > need {
			need, worst = sec.OpAmpNeeds.SlewVPerS, i+1
		}
	}
	if worst == 0 {
		return Check{}, false
	}
	have := d.Spec.OpAmp.SlewVPerS
	ok := need <= have
	text := fmt.Sprintf("A full-scale sine at the passband edge needs at most %s at any stage's output (stage %d); the op-amp slews %s.", si.Format(need, "V/s", 3), worst, si.Format(have, "V/s", 3))
	if !ok {
		text = fmt.Sprintf("A full-scale sine at the passband edge needs %s at stage %d's output, more than the op-amp's %s: it would distort.", si.Format(need, "V/s", 3), worst, si.Format(have, "V/s", 3))
	}
	return newCheck(CheckSlew, ok, SeverityError, need, have, "V/s", worst, text), true
}

// opAmpGBWCheck compares the largest gain-bandwidth a stage needs (to keep
// the op-amp's own effect within 1 %) with the op-amp's.
func (d *Design) opAmpGBWCheck() (Check, bool) {
	if d.Spec.OpAmp.Ideal {
		return Check{}, false
	}
	need, worst, unmet := 0.0, 0, 0
	for i, sec := range d.Sections {
		if sec.OpAmpNeeds == nil {
			continue
		}
		if sec.OpAmpNeeds.GBWHz == nil {
			unmet = i + 1
			continue
		}
		if *sec.OpAmpNeeds.GBWHz > need {
			need, worst = *sec.OpAmpNeeds.GBWHz, i+1
		}
	}
	if worst == 0 && unmet == 0 {
		return Check{}, false
	}
	have := d.Spec.OpAmp.GBWHz
	if unmet > 0 {
		return newCheck(CheckOpAmpGBW, false, SeverityWarning, math.Inf(1), have, "Hz", unmet,
			fmt.Sprintf("No gain-bandwidth up to 1 THz keeps the op-amp's effect on stage %d within %d %%.", unmet, opAmpNeedPct)), true
	}
	ok := need <= have
	text := fmt.Sprintf("The stages need at most %s of gain-bandwidth (stage %d) to keep the op-amp's effect on f0, Q and gain within %d %%; the op-amp has %s.", si.Format(need, "Hz", 3), worst, opAmpNeedPct, si.Format(have, "Hz", 3))
	if !ok {
		text = fmt.Sprintf("Stage %d needs %s of gain-bandwidth to keep the op-amp's effect within %d %%; the op-amp has %s, so the board as built departs from the design (see built-mask).", worst, si.Format(need, "Hz", 3), opAmpNeedPct, si.Format(have, "Hz", 3))
	}
	return newCheck(CheckOpAmpGBW, ok, SeverityWarning, need, have, "Hz", worst, text), true
}

// approximationNames are the approximations as a sentence names them.
var approximationNames = map[string]string{
	"butterworth": "Butterworth", "chebyshev1": "Chebyshev I", "chebyshev2": "Chebyshev II",
	"bessel": "Bessel", "elliptic": "elliptic", "legendre": "optimum-L (Legendre)",
	"gaussian": "Gaussian", "linear-phase": "linear-phase",
}

// dbText formats a dB figure with three significant decimals for small
// values.
func dbText(v float64) string {
	switch a := math.Abs(v); {
	case a < 5e-4:
		return "0.000"
	case a >= 100:
		return fmt.Sprintf("%.1f", v)
	case a >= 10:
		return fmt.Sprintf("%.2f", v)
	}
	return fmt.Sprintf("%.3g", v)
}

// outputCommonModeCheck judges the distance between a differential
// design's output common mode, the reference on which the FDAs hold it,
// and converter.input_common_mode_v; present for a differential design
// whose converter names its common mode.
func (d *Design) outputCommonModeCheck() (Check, bool) {
	c := d.Spec.Converter
	if !d.Spec.Differential() || c == nil || c.InputCommonModeV == nil {
		return Check{}, false
	}
	vocm, want := d.reference(), *c.InputCommonModeV
	off := math.Abs(vocm - want)
	ok := off <= OutputCommonModeLimitV
	text := fmt.Sprintf("The fully differential op-amps hold the output common mode at the reference, %s; the converter's input wants %s, %s away (within %s).",
		si.Format(vocm, "V", 4), si.Format(want, "V", 4), si.Format(off, "V", 3), si.Format(OutputCommonModeLimitV, "V", 3))
	if !ok {
		text = fmt.Sprintf("The fully differential op-amps hold the output common mode at the reference, %s, but the converter's input wants %s, %s away (more than %s): set supply.reference_v to the converter's common mode, or drive the FDAs' Vocm pins from it.",
			si.Format(vocm, "V", 4), si.Format(want, "V", 4), si.Format(off, "V", 3), si.Format(OutputCommonModeLimitV, "V", 3))
	}
	return newCheck(CheckOutputCommonMode, ok, SeverityWarning, off, OutputCommonModeLimitV, "V", len(d.Sections), text), true
}
