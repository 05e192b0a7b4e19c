package synth

import (
	"fmt"

	"github.com/polewright/polewright/synth/accept"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/verify"
)

// Sensitivity is a part's normalised sensitivity S = ∂ln y/∂ln x of its
// stage's f0 and Q, the stage as built (with the spec's op-amp).
type Sensitivity struct {
	Ref string  `json:"ref"`
	F0  float64 `json:"f0"`
	Q   float64 `json:"q"`
}

// PartTolerance is the tolerance a part needs for the stage's f0 within
// 1 % and Q within 2 % on 99 % of boards, first order.
type PartTolerance struct {
	Ref          string  `json:"ref"`
	TolerancePct float64 `json:"tolerance_pct"`
}

// partFigures fills stage i's sensitivities and required part
// tolerances, both of the stage as built: its parts and the chain's
// op-amp model.
func (d *Design) partFigures(ch circuit.Chain, i int) error {
	sec := &d.Sections[i]
	s := d.Spec
	// The stage as built: the spec's op-amp, as everything beside them
	// (realized, the Monte Carlo). Exact derivatives by the adjoint of the
	// stage's nodal system, at the cost of one transfer function.
	// The section's own circuit: the converter driver (on the last stage)
	// is not part of the section's f0 and Q.
	sens, err := verify.Sensitivities(ch.Stages[i].WithoutDriver(), ch.Model)
	if err != nil {
		return fmt.Errorf("synth: stage %d sensitivities: %w", i+1, err)
	}
	sec.Sensitivities = make([]Sensitivity, len(sens))
	for k, x := range sens {
		sec.Sensitivities[k] = Sensitivity{Ref: ch.Ref(i+1, x.Ref), F0: x.F0, Q: x.Q}
	}
	target := toleranceTarget
	if sec.Order == 1 {
		target.QPct = 0
	}
	target.Distribution = verify.Distribution(s.Tolerance.Distribution)
	if req, err := verify.RequiredTolerancePct(sens, target); err == nil {
		for _, p := range req {
			sec.RequiredTolerance = append(sec.RequiredTolerance, PartTolerance{Ref: ch.Ref(i+1, p.Ref), TolerancePct: p.TolerancePct})
		}
	}
	return nil
}

// failAt fills every component's FailAtPct: each part alone is moved
// until the board as built fails the acceptance rule, judged as a Monte
// Carlo trial is (see [Design.monteCarloPlan]).
func (d *Design) failAt(ch circuit.Chain) error {
	lo, hi := d.Response.FreqHz[0], d.Response.FreqHz[len(d.Response.FreqHz)-1]
	plan := d.monteCarloPlan(response.LogSpaceHz(nil, lo, hi, MonteCarloPoints))
	limits, err := verify.FailAt(ch, plan.Grid(), func(db []float64, eval func(float64) float64) float64 {
		return plan.Judge(db, eval, accept.Decisive).MinMarginDB()
	})
	if err != nil {
		return fmt.Errorf("synth: fail_at_pct: %w", err)
	}
	for k := range d.Sections {
		comps := d.Sections[k].Components
		for j := range comps {
			l := limits[k][j]
			comps[j].FailAtPct = [2]*float64{finitePtr(l.DownPct), finitePtr(l.UpPct)}
		}
	}
	if dr := d.Driver; dr != nil {
		// The driver's parts follow the last stage's own.
		k := len(d.Sections) - 1
		for j := range dr.Components {
			if n := len(d.Sections[k].Components) + j; n < len(limits[k]) {
				l := limits[k][n]
				dr.Components[j].FailAtPct = [2]*float64{finitePtr(l.DownPct), finitePtr(l.UpPct)}
			}
		}
	}
	return nil
}
