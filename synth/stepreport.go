package synth

import (
	"errors"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/step"
)

// StepReport is the unit-step response, ideal and as built, with the
// figures of the as-built one. Every number in it is finite: a figure
// that is undefined for the response, or that cannot be computed, is nil.
type StepReport struct {
	// TimeS are the times of Ideal and Realized: StepPoints equally
	// spaced from 0 to step.SettleMargin times the later of the two
	// settling times (when neither has one, a span from the ideal filter's
	// slowest pole, as step.SettlingGrid takes it).
	TimeS []float64 `json:"time_s"`
	// Ideal is the step response of the ideal sections.
	Ideal []float64 `json:"ideal"`
	// Realized is the step response of the circuit as built; nil when it
	// cannot be computed, in particular for an unstable board (Unstable).
	Realized []float64 `json:"realized"`
	// The figures of the as-built response, by the rules of step.Figures
	// (threshold step.MinFinalFrac = 1 %):
	//
	//   - OvershootPct, in % of the final value, is given for a response
	//     that settles to at least 1 % of its largest |y| (a lowpass, a
	//     bandstop) and nil otherwise;
	//   - UndershootPct is given for the others (a highpass, a bandpass, an
	//     even-order equiripple highpass whose DC gain is its stopband
	//     level) and nil where OvershootPct is given: the largest |y| of the
	//     sign opposite to the largest excursion, in % of the largest |y|;
	//   - RiseTimeS, 10–90 % of the way from y(0⁺) to the final value, is
	//     nil where OvershootPct is, and for a response that starts within
	//     1 % of its largest |y| of where it ends (an ideal bandstop starts
	//     at its passband gain; as built, the op-amps' finite bandwidth
	//     makes a bandstop rise from 0, at their speed, and that is what it
	//     shows then);
	//   - SettlingS is given for every response that settles: the last time
	//     it is outside FinalValue ± SettlingBand.
	OvershootPct  *float64 `json:"overshoot_pct"`
	UndershootPct *float64 `json:"undershoot_pct"`
	RiseTimeS     *float64 `json:"rise_time_s"`
	SettlingS     *float64 `json:"settling_s"`
	// SettlingFrac is the half-width of the settling band as a fraction of
	// its reference: with a converter, ½ LSB = 2^−(bits+1) of full scale,
	// and full scale of the unit-step response is the passband gain Gain
	// (the converter sees full scale when the passband output is full
	// scale); without one, 0.1 % of the response's largest |y|.
	SettlingFrac float64 `json:"settling_frac"`
	// SettlingBand is the half-width of the as-built response's settling
	// band, in the units of the response (V/V): SettlingFrac·Gain with a
	// converter, SettlingFrac times the as-built largest |y| without (the
	// ideal response's when the as-built one has no figures).
	SettlingBand float64 `json:"settling_band"`
	// IdealSettlingS is the settling time of the ideal response, by the
	// same rule (without a converter, to ±SettlingFrac of its own largest
	// |y|).
	IdealSettlingS *float64 `json:"ideal_settling_s"`
	// Unstable reports a circuit that, as built, has a pole on or to the
	// right of the imaginary axis (the op-amps' finite bandwidth can push
	// a high-Q stage there): its step response does not settle, so
	// Realized and the figures are nil.
	Unstable bool `json:"unstable"`
}

// stepResponse fills d.Step from the as-built stages' transfer functions
// tfs (the chain's, as judgeBuilt keeps them). An analysis that cannot
// run (the as-built cascade is unstable, too large for package step, or
// its response is not finite) leaves its part of the report nil.
func (d *Design) stepResponse(tfs circuit.Cascade) {
	band := step.Band{Frac: DefaultSettlingFrac}
	if c := d.Spec.Converter; c != nil {
		band = step.Band{Frac: step.HalfLSBFrac(c.Bits), FullScale: math.Abs(d.Gain)}
		if !(band.FullScale > 0) || math.IsInf(band.FullScale, 0) {
			band.FullScale = 0 // no passband gain to speak of: the peak stands in
		}
	}
	var ideal, built []step.Stage
	for _, sec := range d.Cascade() {
		ideal = append(ideal, step.FromSection(sec))
	}
	for _, r := range tfs {
		built = append(built, step.FromRational(r))
	}
	// Each cascade is built once for its figures and its response.
	measure := func(stages []step.Stage) (*step.Model, step.Figures, error) {
		m, err := step.NewModel(stages)
		if err != nil {
			fig, err := step.Measure(stages, band) // NaN figures and the error
			return nil, fig, err
		}
		fig, err := m.Measure(band)
		return m, fig, err
	}
	mI, figI, errI := measure(ideal)
	mB, figB, errB := measure(built)

	// The grid: past the later settling time, or from the ideal poles.
	end := 0.0
	for _, f := range []step.Figures{figI, figB} {
		if isFinite(f.SettlingS) {
			end = math.Max(end, step.SettleMargin*f.SettlingS)
		}
	}
	if !(end > 0) {
		g := step.SettlingGrid(ideal, 2, band.Frac)
		end = g[1]
	}
	t := step.Grid(end, StepPoints)
	rep := &StepReport{TimeS: t, SettlingFrac: band.Frac, Unstable: errors.Is(errB, step.ErrUnstable)}
	if errI == nil {
		rep.Ideal = finiteResponse(mI, t)
		rep.IdealSettlingS = finitePtr(figI.SettlingS)
	}
	if errB == nil {
		rep.Realized = finiteResponse(mB, t)
	}
	if rep.Realized != nil {
		rep.OvershootPct = finitePtr(figB.OvershootPct)
		rep.UndershootPct = finitePtr(figB.UndershootPct)
		rep.RiseTimeS = finitePtr(figB.RiseTimeS)
		rep.SettlingS = finitePtr(figB.SettlingS)
	}
	if isFinite(figI.BandAbs) {
		rep.SettlingBand = figI.BandAbs
	}
	if rep.Realized != nil && isFinite(figB.BandAbs) {
		rep.SettlingBand = figB.BandAbs
	}
	d.Step = rep
}

// finiteResponse returns the step response of the model m at t (the
// plotted curve: [step.Model.Curve]), or nil when it cannot be computed
// or is not finite everywhere.
func finiteResponse(m *step.Model, t []float64) []float64 {
	y, err := m.Curve(t)
	if err != nil {
		return nil
	}
	for _, v := range y {
		if !isFinite(v) {
			return nil
		}
	}
	return y
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
