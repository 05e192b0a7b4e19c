package synth

import (
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/standards/si"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/step"
)

// The driver's design rules.
const (
	// DriverCapRatio is the least ratio of the driver's capacitor to the
	// converter's sampling capacitor (common practice: 10 to 20 times, so
	// that the capacitor, not the op-amp, supplies the sampling
	// capacitor's charge; we take the upper end).
	DriverCapRatio = 20
	// DriverDesignLSB is the settling error the driver's R is chosen for,
	// in LSB: half of the ½ LSB that the driver-settling check allows,
	// which leaves room for the parts' tolerances and the op-amp (our own
	// figure).
	DriverDesignLSB = 0.25
	// DriverSettleLimitLSB is the settling error the driver-settling check
	// allows at the end of the acquisition: ½ LSB.
	DriverSettleLimitLSB = 0.5
	// DriverPhaseMarginDeg is the least phase margin of the last op-amp's
	// loop with the driver's R–C as its load that the driver-stability
	// check allows (common practice: below 45° the loop's closed-loop
	// response peaks by more than about 2.3 dB and its step overshoots
	// by more than about 25 %, so the ringing lengthens the settling of
	// each kick and part spreads push it towards oscillation).
	DriverPhaseMarginDeg = 45
	// driverMinOhm and driverMaxOhm bound the driver resistors tried.
	driverMinOhm = 1
	driverMaxOhm = 100e3
	// driverScanBelow and driverScanAbove bound the resistor values
	// tried, as factors below and above the closed form's; driverMaxTries
	// bounds their number.
	driverScanBelow = 10
	driverScanAbove = 3
	driverMaxTries  = 256
	// driverCoarse is the stride of the first pass over the candidates.
	driverCoarse = 8
	// driverWindowFrac and driverWindowPoints: the settling error is
	// judged at this many times from the end of the acquisition over
	// this further share of it.
	driverWindowFrac   = 0.2
	driverWindowPoints = 21
)

// Driver is the R–C between the chain's last op-amp and a SAR
// converter's input (INTERFACE.md, "The converter's input"): R from the
// op-amp's output to the converter's input, C (C0G) from there to ground.
// At each acquisition the converter's sampling capacitor Cs, left at the
// other end of the range, is switched onto C: charge sharing kicks the
// node by Vfs·Cs/(Cs + C), and the op-amp recharges it through R.
type Driver struct {
	// ROhm and CFarad are the values as built.
	ROhm   float64 `json:"r_ohm"`
	CFarad float64 `json:"c_farad"`
	// Components are the two parts, with their chain-wide designators (as
	// on the bill of materials and in the deck).
	Components []Component `json:"components"`
	// Dielectric is the capacitor's dielectric: "C0G" (stable, no voltage
	// coefficient, no dielectric absorption worth counting).
	Dielectric string `json:"dielectric"`
	// KickbackV is the charge-sharing step of a full-scale kick,
	// Vfs·Cs/(Cs + C).
	KickbackV float64 `json:"kickback_v"`
	// TimeConstantS is R·(C + Cs), the single-RC settling's time constant
	// while the sampling capacitor is connected.
	TimeConstantS float64 `json:"time_constant_s"`
	// ClosedFormSettleS is R·(C + Cs)·ln(kick/½ LSB): the single-RC
	// settling time to ½ LSB (an ideal op-amp).
	ClosedFormSettleS float64 `json:"closed_form_settle_s"`
	// AcquisitionTimeS is the converter's acquisition time.
	AcquisitionTimeS float64 `json:"acquisition_time_s"`
	// SettledErrorLSB is the error left at the end of the acquisition, in
	// LSB, from the full circuit: the last stage as built with the spec's
	// op-amp (its output resistance included), R, C and Cs.
	SettledErrorLSB float64 `json:"settled_error_lsb"`
	// PhaseMarginDeg is the phase margin of the last op-amp's loop with
	// R–C as its load and the op-amp's output resistance (nil for an
	// ideal op-amp, whose loop gain is infinite); CrossoverHz where its
	// loop gain crosses 1.
	PhaseMarginDeg *float64 `json:"phase_margin_deg"`
	CrossoverHz    *float64 `json:"crossover_hz"`
	// PoleHz is the R–C's pole, 1/(2π·R·C), part of the response as built.
	PoleHz float64 `json:"pole_hz"`
	// Reason says how R and C were chosen, and what became of the
	// filter's real pole.
	Reason string `json:"reason"`
}

// driverSettledErrorV returns the error of the node that the converter
// samples at time tS after the sampling capacitor csFarad, charged vfs
// below it, is switched onto st's Out (st ends with the driver): −vfs·Cs
// times the impulse response of the transimpedance from a current into
// Out to V(Out), with Cs on Out and the stage's input at rest. The
// impulse response is the step response of s·Z(s), exact (package step).
func driverSettledErrorV(st circuit.Stage, m circuit.Model, csFarad, vfs float64, tS []float64) ([]float64, error) {
	aug := st
	aug.Parts = slices.Clip(slices.Clone(st.Parts))
	next := 1
	for _, p := range st.Parts {
		if p.Kind == circuit.Capacitor {
			var n int
			if _, err := fmt.Sscanf(p.Ref, "C%d", &n); err == nil && n >= next {
				next = n + 1
			}
		}
	}
	aug.Parts = append(aug.Parts, circuit.Part{Ref: fmt.Sprintf("C%d", next), Kind: circuit.Capacitor, A: st.Out, B: circuit.Ground,
		Value: csFarad, Exact: csFarad})
	tr, err := aug.SourceTransfers(m, []circuit.Source{{To: st.Out, From: circuit.Ground}})
	if err != nil {
		return nil, err
	}
	// s·Z(s) with s = scale·p: the numerator shifted up one power.
	num := make([]float64, len(tr.Den))
	for i := 0; i+1 < len(num) && i < len(tr.Num[0]); i++ {
		num[i+1] = tr.ScaleRadPerSec * tr.Num[0][i]
	}
	y, err := step.Response([]step.Stage{{Num: num, Den: tr.Den, ScaleRadPerSec: tr.ScaleRadPerSec}}, tS)
	if err != nil {
		return nil, err
	}
	for i := range y {
		y[i] *= -vfs * csFarad
	}
	return y, nil
}

// driverErrorLSB returns the driver's settling error in LSB as the
// design judges it (window: the largest |error| from the end of the
// acquisition over a further fifth of it, so that a ringing error that
// happens to cross zero at the end is not taken for settled) and as it
// is reported (end: at the end of the acquisition).
func driverErrorLSB(st circuit.Stage, m circuit.Model, csF, vfs, tacq, lsb float64) (window, end float64, err error) {
	tS := make([]float64, 0, driverWindowPoints+1)
	tS = append(tS, 0)
	for i := range driverWindowPoints {
		tS = append(tS, tacq*(1+driverWindowFrac*float64(i)/float64(driverWindowPoints-1)))
	}
	e, err := driverSettledErrorV(st, m, csF, vfs, tS)
	if err != nil {
		return 0, 0, fmt.Errorf("synth: driver settling: %w", err)
	}
	for _, v := range e[1:] {
		window = math.Max(window, math.Abs(v)/lsb)
	}
	return window, math.Abs(e[1]) / lsb, nil
}

// designDriver chooses the driver's R and C for a SAR converter and
// appends them to the chain's last stage (see [Driver]): C is the first
// capacitor-series value at least DriverCapRatio times Cs; R starts at
// the largest resistor-series value whose single-RC settling
// R·(C + Cs)·ln(kick/(DriverDesignLSB LSB)) fits the acquisition time;
// then, judged on the full circuit (see [driverErrorLSB]), R is the
// largest series value from a tenth to three times that whose error
// stays within DriverDesignLSB (the one that comes closest when none
// does).
func (d *Design) designDriver(ch *circuit.Chain, rs, cs eseries.Series) error {
	s := d.Spec
	c := s.Converter
	if !c.IsSAR() || len(ch.Stages) == 0 {
		return nil
	}
	exact := s.Values == "exact"
	csF, tacq, vfs := c.SamplingCapacitanceFarad, c.AcquisitionTimeS, c.FullScaleVpp
	lsb := vfs / math.Exp2(float64(c.Bits))
	cExact := DriverCapRatio * csF
	cF := cExact
	cSeries := "exact"
	if !exact {
		_, cF = cs.Neighbours(cExact)
		cSeries = cs.Name()
	}
	kick := vfs * csF / (csF + cF)
	lnDesign := math.Max(math.Log(kick/(DriverDesignLSB*lsb)), 1e-3)
	rExact := tacq / ((cF + csF) * lnDesign)
	// The scan stays within [driverMinOhm, driverMaxOhm] (common practice
	// for a converter driver's R: ohms to kilohms).
	center := min(max(rExact, driverMinOhm), driverMaxOhm)
	rOhm := center
	rSeries := "exact"
	if !exact {
		rOhm = rs.Nearest(center)
		rSeries = rs.Name()
	}
	last := len(ch.Stages) - 1
	base := ch.Stages[last]
	drive := slices.IndexFunc(base.OpAmps, func(u circuit.OpAmp) bool { return u.Out == base.Out }) + 1
	m := ch.Model
	build := func(r float64) circuit.Stage {
		return base.WithDriver(
			circuit.Part{Value: r, Exact: rExact, Series: rSeries, TolerancePct: s.Tolerance.ResistorPct},
			circuit.Part{Value: cF, Exact: cExact, Series: cSeries, TolerancePct: s.Tolerance.CapacitorPct})
	}
	errAt := func(r float64) (window, end float64, err error) {
		return driverErrorLSB(build(r), m, csF, vfs, tacq, lsb)
	}
	// Every series value from driverScanBelow below to driverScanAbove
	// above the closed form's R: the largest that settles within
	// DriverDesignLSB, else the one that comes closest. Both ways
	// matter: below the closed form a slow op-amp's ringing can grow as
	// R shrinks, above it the op-amp's own settling can help.
	cands := []float64{rOhm}
	if !exact {
		cands = cands[:0]
		for r, _ := rs.Neighbours(min(center*driverScanAbove, driverMaxOhm)); r >= center/driverScanBelow && r >= driverMinOhm && len(cands) < driverMaxTries; {
			cands = append(cands, r)
			next, _ := rs.Neighbours(r * (1 - 1e-6))
			if math.IsNaN(next) || next >= r {
				break
			}
			r = next
		}
		if len(cands) == 0 {
			cands = append(cands, rOhm)
		}
	}
	// Coarse to fine: every driverCoarse-th candidate, then the ones
	// between the first coarse one that settles and the one above it.
	bestR, bestWin, bestErr := math.NaN(), math.Inf(1), math.Inf(1)
	try := func(i int) bool {
		w, end, err := errAt(cands[i])
		if err != nil {
			return false // a candidate whose circuit cannot be analysed is passed over
		}
		if w <= DriverDesignLSB || w < bestWin && bestWin > DriverDesignLSB {
			bestR, bestWin, bestErr = cands[i], w, end
		}
		return w <= DriverDesignLSB
	}
	prev := -1
	for i := 0; i < len(cands); i += driverCoarse {
		if try(i) {
			for j := prev + 1; j < i && !try(j); j++ {
			}
			break
		}
		prev = i
	}
	if math.IsNaN(bestR) {
		return fieldErr("converter.sampling_capacitance_farad", "the driver R–C for this sampling capacitor and acquisition time cannot be analysed with the last stage (R from %g to %g Ohm)", cands[len(cands)-1], cands[0])
	}
	rOhm = bestR
	st := build(rOhm)
	dr := &Driver{ROhm: rOhm, CFarad: cF, Dielectric: "C0G", KickbackV: kick, TimeConstantS: rOhm * (cF + csF),
		AcquisitionTimeS: tacq, SettledErrorLSB: bestErr, PoleHz: 1 / (2 * math.Pi * rOhm * cF)}
	dr.ClosedFormSettleS = dr.TimeConstantS * math.Log(kick/(0.5*lsb))
	if !m.Ideal && drive > 0 {
		pm, fc, ok, err := st.PhaseMarginDeg(m, drive)
		if err != nil {
			return fmt.Errorf("synth: driver phase margin: %w", err)
		}
		if ok {
			dr.PhaseMarginDeg, dr.CrossoverHz = &pm, &fc
		}
	}
	for _, p := range st.Parts {
		if p.Driver {
			dr.Components = append(dr.Components, Component{Ref: ch.Ref(last+1, p.Ref), Kind: string(p.Kind), Value: p.Value,
				Exact: p.Exact, Series: p.Series, TolerancePct: p.TolerancePct})
		}
	}
	ch.Stages[last] = st
	dr.Reason = d.driverReason(dr, csF, rExact, bestWin <= DriverDesignLSB, lnDesign)
	d.Driver = dr
	return nil
}

// driverReason says how the driver was chosen: rClosed is the
// single-RC closed form's R for DriverDesignLSB, met whether the full
// circuit settles within it.
func (d *Design) driverReason(dr *Driver, csF, rClosed float64, met bool, lnDesign float64) string {
	s := d.Spec
	series := s.CapacitorSeries + " value"
	if s.Values == "exact" {
		series = "value (exact)"
	}
	// R and C carry their designators, as on the schematic and the BOM.
	rName, cName := "R", "C"
	for _, c := range dr.Components {
		switch c.Kind {
		case string(circuit.Resistor):
			rName = "R (" + c.Ref + ")"
		case string(circuit.Capacitor):
			cName = "C (" + c.Ref + ")"
		}
	}
	text := fmt.Sprintf("%s = %s (C0G), the first %s at least %d × the %s sampling capacitor (common practice: 10 to 20 ×), so that a full-scale kick is Vfs·Cs/(Cs + C) = %s. ",
		cName, si.Format(dr.CFarad, "F", 3), series, DriverCapRatio, si.Format(csF, "F", 3), si.Format(dr.KickbackV, "V", 3))
	closed := fmt.Sprintf("the single-RC closed form R·(C + Cs)·ln(kick/¼ LSB) = %s gives R = %s", si.Format(dr.AcquisitionTimeS, "s", 3), si.Format(rClosed, "Ω", 3))
	switch {
	case s.Values == "exact":
		text += fmt.Sprintf("%s = %s: %s; ", rName, si.Format(dr.ROhm, "Ω", 3), closed)
	case met:
		text += fmt.Sprintf("%s = %s: %s, and of the %s values from a tenth to three times that, %s is the largest with which the full circuit (the last stage with the spec's op-amp, R, C and Cs) stays within ¼ LSB at the end of the acquisition and over a further fifth of it; ",
			rName, si.Format(dr.ROhm, "Ω", 3), closed, s.ResistorSeries, si.Format(dr.ROhm, "Ω", 3))
	default:
		text += fmt.Sprintf("%s = %s: %s, and of the %s values from a tenth to three times that, none lets the full circuit settle within ¼ LSB; %s comes closest; ",
			rName, si.Format(dr.ROhm, "Ω", 3), closed, s.ResistorSeries, si.Format(dr.ROhm, "Ω", 3))
	}
	text += fmt.Sprintf("the full circuit leaves %.3g LSB at the end of the %s acquisition (the check allows ½ LSB; ¼ LSB leaves room for the parts' spread).",
		dr.SettledErrorLSB, si.Format(dr.AcquisitionTimeS, "s", 3))
	// The filter's real pole, considered as the R–C's.
	for _, sec := range d.Sections {
		if sec.Order != 1 {
			continue
		}
		tau := 1 / (2 * math.Pi * sec.F0Hz)
		need := tau * lnDesign
		if need > dr.AcquisitionTimeS {
			text += fmt.Sprintf(" The filter's real pole at %s was considered as the R–C's pole and not used: its time constant %s would take %s to settle the kick to ¼ LSB, longer than the acquisition; the R–C is a pole of its own at %s.",
				si.Format(sec.F0Hz, "Hz", 4), si.Format(tau, "s", 3), si.Format(need, "s", 3), si.Format(dr.PoleHz, "Hz", 3))
		} else {
			text += fmt.Sprintf(" The filter's real pole at %s could settle the kick in time, but it was kept in its own stage, whose op-amp isolates the filter's parts from the kick; the R–C is a pole of its own at %s.",
				si.Format(sec.F0Hz, "Hz", 4), si.Format(dr.PoleHz, "Hz", 3))
		}
		return text
	}
	return text + fmt.Sprintf(" The filter has no real pole to merge it with; the R–C is a pole of its own at %s.", si.Format(dr.PoleHz, "Hz", 3))
}
