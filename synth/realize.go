package synth

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"strconv"

	"github.com/polewright/polewright/standards/eseries"
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
	// f0, Q and gain at f0 within 1 % (the gain matters for a buffer,
	// whose op-amp adds a pole but moves no other), found to within about 10 % (the errors it gives lie
	// between 0.9 % and 1 %); nil when no gain-bandwidth up to 1 THz does.
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

	results := make([]topology.Result, len(ordered))
	inverting, firstOrder := 0, -1
	for i, sec := range ordered {
		top := s.Topology
		if sec.Order() == 1 {
			top, firstOrder = topology.RCBuffer, i
		}
		r, err := topology.Realize(sec, top, opt)
		if err != nil {
			return realizeError(i, d.Sections[i], s.Topology, err)
		}
		results[i] = r
		if r.Inverting {
			inverting++
		}
	}
	// Keep the chain's polarity: an odd number of inverting stages is put
	// right by the first-order stage's inverting form, or else by a
	// unity-gain inverter after the last stage.
	polarity := ""
	if inverting%2 == 1 && firstOrder >= 0 {
		r, err := topology.Realize(ordered[firstOrder], topology.InvertingRC, opt)
		if err == nil && r.Inverting {
			results[firstOrder] = r
			results[firstOrder].Reason = "inverting first-order form, so that the chain as a whole does not invert; " + r.Reason
			inverting++
		}
	}
	if inverting%2 == 1 {
		last := len(results) - 1
		results[last].Stage = withInverter(results[last].Stage, rs)
		polarity = "a unity-gain inverter follows, so that the chain as a whole does not invert"
	}

	model := circuit.Model{GBWHz: s.OpAmp.GBWHz, DCGainDB: s.OpAmp.DCGainDB, Ideal: s.OpAmp.Ideal}
	chain := circuit.Chain{Model: model}
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
		if polarity != "" && i == len(results)-1 {
			sec.TopologyReason += "; " + polarity
		}
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
		if err := d.analyseStage(i, r.Stage, model); err != nil {
			return err
		}
	}
	d.chain = &chain
	return nil
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

// analyseStage fills the as-built figures of section i from its stage.
func (d *Design) analyseStage(i int, st circuit.Stage, model circuit.Model) error {
	sec := &d.Sections[i]
	built, err := st.TransferFunction(model)
	if err != nil {
		return fmt.Errorf("synth: stage %d: %w", i+1, err)
	}
	ideal, err := st.TransferFunction(circuit.Model{Ideal: true})
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
	if !model.Ideal && worst > 0 {
		start = model.GBWHz * worst / opAmpNeedPct // errors fall as 1/GBW
	}
	sec.OpAmpNeeds = opAmpNeeds(st, model, f0i, qi, sec.Order, start)
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

// opAmpNeeds finds the least gain-bandwidth that keeps the op-amp's own
// effect on the stage's f0, Q and gain at f0 within opAmpNeedPct, with the spec's DC
// gain (100 dB for an ideal spec). Well above the stage's f0 the errors
// fall as 1/GBW, so a secant step on that law from start (the estimate from
// the spec's op-amp, or the rule of thumb when start is 0) reaches the
// answer in a few evaluations; the result is then checked and nudged up
// until it holds.
func opAmpNeeds(st circuit.Stage, model circuit.Model, f0, q float64, order int, start float64) *OpAmpNeeds {
	dc := model.DCGainDB
	if model.Ideal {
		dc = 100
	}
	rule := 50 * f0
	if order == 2 {
		rule = 100 * q * f0
	}
	// worst returns the larger of the op-amp's f0 and Q errors, in percent.
	idealTF, err := st.TransferFunction(circuit.Model{Ideal: true})
	if err != nil {
		return &OpAmpNeeds{RuleOfThumbGBWHz: rule}
	}
	refGain := cmplx.Abs(idealTF.AtHz(f0))
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
		e := math.Max(math.Abs(pct(f, f0)), math.Abs(pct(cmplx.Abs(tf.AtHz(f0)), refGain)))
		if order == 2 {
			e = math.Max(e, math.Abs(pct(qq, q)))
		}
		return e
	}
	const maxGBWHz = 1e12
	g := rule
	if start > f0 && start < maxGBWHz {
		g = start
	}
	// Secant steps on the 1/GBW law aim at 95 % of the limit; an answer
	// whose errors lie between 90 % and 100 % of it is taken (so the need
	// is found to within about 10 %).
	for range 6 {
		e := worst(g)
		if e <= opAmpNeedPct && e >= 0.9*opAmpNeedPct {
			return &OpAmpNeeds{GBWHz: &g, RuleOfThumbGBWHz: rule}
		}
		if math.IsInf(e, 0) || e == 0 {
			break
		}
		next := math.Min(maxGBWHz, math.Max(f0, g*e/(0.95*opAmpNeedPct)))
		if math.Abs(next/g-1) < 1e-3 {
			break
		}
		g = next
	}
	for range 40 {
		if worst(g) <= opAmpNeedPct {
			return &OpAmpNeeds{GBWHz: &g, RuleOfThumbGBWHz: rule}
		}
		if g *= 1.05; g > maxGBWHz {
			break
		}
	}
	return &OpAmpNeeds{RuleOfThumbGBWHz: rule}
}
