package synth

import (
	"context"
	"fmt"
	"math"
)

// The ladder of design margins that a target yield climbs (see
// [MarginSearch]): step k designs with passband_db = k·MarginStepPassbandFrac·Amax
// and stopband_db = k·MarginStepStopbandDB, each at least the spec's own
// design_margin, for k = 0 … MarginLevels−1.
const (
	// MarginLevels is the number of steps of the ladder: the costliest
	// target-yield design is this many designs with their Monte Carlo.
	MarginLevels = 13
	// MarginStepPassbandFrac is the passband step as a share of Amax
	// (1/16: the top step designs to Amax/4).
	MarginStepPassbandFrac = 1.0 / 16
	// MarginStepStopbandDB is the stopband step in dB (the top step adds
	// 6 dB to Amin).
	MarginStepStopbandDB = 0.5
)

// MarginSearch is what a design with a target yield chose, and why: the
// design margins tried in order, each with the yield of its Monte Carlo,
// and the one kept.
type MarginSearch struct {
	// TargetYield is the spec's target_yield.
	TargetYield float64 `json:"target_yield"`
	// Reached reports whether a step's yield reached the target; the
	// design is then that of the first such step, else that of the step
	// with the highest yield (the earliest of equals).
	Reached bool `json:"reached"`
	// DesignMargin is the margin chosen (also the design's
	// spec.design_margin); Yield its yield over Trials.
	DesignMargin DesignMargin `json:"design_margin"`
	Yield        float64      `json:"yield"`
	Trials       int          `json:"trials"`
	// Steps are the margins tried, in order.
	Steps []MarginStep `json:"steps"`
	// Text says in one sentence what was chosen and why.
	Text string `json:"text"`
}

// MarginStep is one design margin tried by a target-yield search: its
// order and yield, or why it could not be designed (which ends the
// search: larger margins only ask more).
type MarginStep struct {
	DesignMargin DesignMargin `json:"design_margin"`
	Order        int          `json:"order"`
	Yield        *float64     `json:"yield"`
	Error        string       `json:"error,omitempty"`
}

// validateTargetYield checks target_yield: in (0, 1], and only with a
// Monte Carlo to measure the yield by.
func (s Spec) validateTargetYield() error {
	t := s.TargetYield
	if t == nil {
		return nil
	}
	if err := finite("target_yield", *t); err != nil {
		return err
	}
	if !(*t > 0) || *t > 1 {
		return fieldErr("target_yield", "must be above 0 and at most 1, a share of boards (got %g)", *t)
	}
	if s.MonteCarlo.Trials <= 0 {
		return fieldErr("montecarlo.trials", "must be above 0 with target_yield: the yield is measured by the Monte Carlo (e.g. 1000 trials)")
	}
	return nil
}

// MarginLadder returns the design margins a target-yield search of s
// tries, in order: step k is (k·MarginStepPassbandFrac·Amax,
// k·MarginStepStopbandDB), each component at least s.DesignMargin's and
// the stopband's kept within [MaxAttenDB]; repeats are dropped. The first
// step is s.DesignMargin itself.
func MarginLadder(s Spec) []DesignMargin {
	out := make([]DesignMargin, 0, MarginLevels)
	for k := range MarginLevels {
		m := DesignMargin{
			PassbandDB: math.Max(s.DesignMargin.PassbandDB, float64(k)*MarginStepPassbandFrac*s.PassbandRippleDB),
			StopbandDB: math.Max(s.DesignMargin.StopbandDB, math.Min(float64(k)*MarginStepStopbandDB, MaxAttenDB-s.StopbandAttenDB)),
		}
		if n := len(out); n > 0 && out[n-1] == m {
			continue
		}
		out = append(out, m)
	}
	return out
}

// synthesizeForYield designs s (which has a TargetYield) at each margin of
// [MarginLadder] in turn, with the Monte Carlo, and keeps the first whose
// yield reaches the target (else the best). The design's Spec is s with
// the chosen margin, so that it parses back to the same spec and designs
// to the same board. Each step is designed to level ([Compared] or
// [Verified]).
func synthesizeForYield(ctx context.Context, s Spec, level Level) (*Design, error) {
	target := *s.TargetYield
	search := &MarginSearch{TargetYield: target, Trials: s.MonteCarlo.Trials}
	var best *Design
	for i, m := range MarginLadder(s) {
		step := s
		step.TargetYield, step.DesignMargin = nil, m
		d, err := SynthesizeTo(ctx, step, level)
		if err != nil {
			if ctx.Err() != nil {
				return nil, ctx.Err()
			}
			fe, ok := IsFieldError(err)
			if !ok || i == 0 {
				return nil, err // the spec's own margin cannot be designed: its error is the answer
			}
			search.Steps = append(search.Steps, MarginStep{DesignMargin: m, Error: fe.Error()})
			break
		}
		y := d.MonteCarlo.Yield
		search.Steps = append(search.Steps, MarginStep{DesignMargin: m, Order: d.Order, Yield: &y})
		if best == nil || y > best.MonteCarlo.Yield {
			best = d
		}
		if y >= target {
			best, search.Reached = d, true
			break
		}
	}
	search.DesignMargin, search.Yield = best.Spec.DesignMargin, best.MonteCarlo.Yield
	search.Text = search.sentence(s)
	best.Spec.TargetYield = s.TargetYield
	best.MarginSearch = search
	best.fillChecks() // the yield check judges against the spec's target
	return best, nil
}

// sentence says what the search chose and why.
func (m *MarginSearch) sentence(s Spec) string {
	margin := fmt.Sprintf("design margin %.4g dB in the passband and %.4g dB in the stopband", m.DesignMargin.PassbandDB, m.DesignMargin.StopbandDB)
	if m.Reached {
		return fmt.Sprintf("Target yield %.4g: the %s is the smallest of the %d margins tried (of %d on the ladder) whose yield, %.4g over %d trials, reaches it.",
			m.TargetYield, margin, len(m.Steps), len(MarginLadder(s)), m.Yield, m.Trials)
	}
	return fmt.Sprintf("Target yield %.4g not reached: none of the %d margins tried (up to %.4g dB in the passband and %.4g dB in the stopband) reaches it; the %s gave the highest yield, %.4g over %d trials. Tighter parts, a higher order or another approximation may.",
		m.TargetYield, len(m.Steps), m.Steps[len(m.Steps)-1].DesignMargin.PassbandDB, m.Steps[len(m.Steps)-1].DesignMargin.StopbandDB, margin, m.Yield, m.Trials)
}
