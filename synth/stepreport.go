package synth

import (
	"fmt"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/step"
)

// StepReport is the unit-step response, ideal and as built, with the
// figures of the as-built one.
type StepReport struct {
	TimeS    []float64 `json:"time_s"`
	Ideal    []float64 `json:"ideal"`
	Realized []float64 `json:"realized"`
	// OvershootPct, RiseTimeS and SettlingS are nil where undefined (a
	// response with no DC gain has no rise time, say).
	OvershootPct *float64 `json:"overshoot_pct"`
	RiseTimeS    *float64 `json:"rise_time_s"`
	SettlingS    *float64 `json:"settling_s"`
	// SettlingFrac is the settling band as a fraction of the final value:
	// ½ LSB of the converter, or 0.1 %.
	SettlingFrac float64 `json:"settling_frac"`
	// IdealSettlingS is the settling time of the ideal response.
	IdealSettlingS *float64 `json:"ideal_settling_s"`
}

func (d *Design) stepResponse(ch circuit.Chain) error {
	frac := DefaultSettlingFrac
	if c := d.Spec.Converter; c != nil {
		frac = step.HalfLSBFrac(c.Bits)
	}
	var ideal, built []step.Stage
	for _, sec := range d.Cascade() {
		ideal = append(ideal, step.FromSection(sec))
	}
	tfs, err := ch.TransferFunctions()
	if err != nil {
		return fmt.Errorf("synth: step: %w", err)
	}
	for _, r := range tfs {
		built = append(built, step.FromRational(r))
	}
	t := step.SettlingGrid(built, StepPoints, frac)
	yb, fig, err := step.Measure(built, t, frac)
	if err != nil {
		return fmt.Errorf("synth: step: %w", err)
	}
	yi, err := step.Response(ideal, t)
	if err != nil {
		return fmt.Errorf("synth: step: %w", err)
	}
	figIdeal := step.Analyze(t, yi, frac) // interpolated between samples: enough for a comparison figure
	d.Step = &StepReport{
		TimeS: t, Ideal: yi, Realized: yb, SettlingFrac: frac,
		OvershootPct: finitePtr(fig.OvershootPct), RiseTimeS: finitePtr(fig.RiseTimeS),
		SettlingS: finitePtr(fig.SettlingS), IdealSettlingS: finitePtr(figIdeal.SettlingS),
	}
	return nil
}
