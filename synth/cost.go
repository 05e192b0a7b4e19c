package synth

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/proto"
)

// Cost model of [EstimateCost], in CPU-milliseconds on one core of the
// machine it was calibrated on (go test on the specs of cost_test.go at
// GOMAXPROCS=1, 2026-12-03). A stage of p parts costs about p³ to analyse
// (its nodal cofactors). The chain's swing analysis follows each node's
// step response through the stages before it (exactly, by state space,
// where partial fractions are ill-conditioned, as in long notch chains):
// about the cube of the chain's size, counted in notch stages. A Monte
// Carlo trial costs about the same per stage and frequency point whatever
// the stage (notch stages' polynomials come from one expansion per stage
// structure, shared by the run), and the run sets up each structure once.
const (
	costBaseMs          = 1      // parse, prototype, sections, response grid
	costStageMs         = 0.4    // per stage: part search, as-built response
	costStageCubeMs     = 0.0025 // per stage and part³: sensitivities, noise, step
	costChainCubeMs     = 0.035  // per (Σ parts / costPartsNotch)³: swing
	costTrialSetupMs    = 0.017  // per distinct stage size, part³, when a Monte Carlo runs
	costTrialPointMs    = 3.3e-5 // per trial, frequency point and stage (measured 2.2e-5; half again as margin for the server's budget)
	costPartsFirstOrder = 2      // a first-order stage
	costPartsBiquad     = 4      // a Sallen-Key or multiple-feedback biquad
	costPartsSVBiquad   = 8      // a state-variable biquad
	costPartsNotch      = 12     // a notch stage (state-variable: four op-amps)
	// costEqualizerMs is the all-pass search of a delay_equalizer: its
	// evaluations are bounded (equalize.MaxEvaluations); measured 20 to
	// 100 ms when it succeeds with a few sections and 0.3 to 0.5 s when
	// it tries all 8 (BenchmarkEqualize), so a middle figure.
	// costEqualizerStages is the number of all-pass stages assumed, each
	// of costPartsAllpass parts (the second-order all-pass: bandpass and
	// summer).
	costEqualizerMs     = 250
	costEqualizerStages = 4
	costPartsAllpass    = 8
)

// Cost is the estimate of what designing a spec costs, in CPU-milliseconds.
type Cost struct {
	// DesignMs is the design without the Monte Carlo; MonteCarloMs the
	// Monte Carlo of the spec's trials; PerTrialMs one more trial.
	DesignMs     float64
	MonteCarloMs float64
	PerTrialMs   float64
	// Order is the prototype order the estimate assumed and Stages the
	// number of op-amp stages.
	Order  int
	Stages int
}

// TotalMs is the whole estimate.
func (c Cost) TotalMs() float64 { return c.DesignMs + c.MonteCarloMs }

// EstimateCost returns the CPU-milliseconds that [Synthesize] is expected
// to spend on s, within about a factor of three: deterministic, cheap
// (no synthesis; the minimum order is the closed form) and from the spec
// alone. The CLI is bounded by nothing but the spec's own limits; the
// workbench refuses a spec that costs more than it will spend.
func EstimateCost(s Spec) float64 { return EstimateCostOf(s).TotalMs() }

// EstimateCostOf is [EstimateCost] with its parts.
func EstimateCostOf(s Spec) Cost {
	order := estimateOrder(s)
	var parts []int
	switch {
	case s.Response.IsBand():
		// Every prototype pole makes a second-order section; a bandstop's
		// all have jω zeros, a bandpass's as many as the prototype's zeros
		// (two each).
		notches := 0
		switch {
		case s.Response == Bandstop:
			notches = order
		case hasFiniteZeros(s.Approximation):
			notches = 2 * (order / 2)
		}
		for i := range order {
			parts = append(parts, biquadParts(s.Topology, i < notches))
		}
	default:
		for range order / 2 {
			parts = append(parts, biquadParts(s.Topology, hasFiniteZeros(s.Approximation)))
		}
		if order%2 == 1 {
			parts = append(parts, costPartsFirstOrder)
		}
	}
	c := Cost{DesignMs: costBaseMs, Order: order}
	if s.DelayEqualizer != nil {
		c.DesignMs += costEqualizerMs
		for range costEqualizerStages {
			parts = append(parts, costPartsAllpass)
		}
	}
	c.Stages = len(parts)
	var setup, size float64
	seen := map[int]bool{}
	for _, p := range parts {
		fp := float64(p)
		c.DesignMs += costStageMs + costStageCubeMs*fp*fp*fp
		size += fp / costPartsNotch
		if !seen[p] {
			seen[p] = true
			setup += fp * fp * fp
		}
	}
	c.DesignMs += costChainCubeMs * size * size * size
	points := float64(MonteCarloPoints + len(s.PassbandHz) + len(s.StopbandHz))
	c.PerTrialMs = costTrialPointMs * points * float64(len(parts))
	if s.MonteCarlo.Trials > 0 {
		c.MonteCarloMs = costTrialSetupMs*setup + float64(s.MonteCarlo.Trials)*c.PerTrialMs
	}
	if s.TargetYield != nil {
		// At worst every margin of the ladder is designed, each with its
		// Monte Carlo.
		n := float64(len(MarginLadder(s)))
		c.DesignMs, c.MonteCarloMs, c.PerTrialMs = n*c.DesignMs, n*c.MonteCarloMs, n*c.PerTrialMs
	}
	return c
}

// hasFiniteZeros reports whether the approximation's prototype has jω
// zeros (notch stages).
func hasFiniteZeros(approx string) bool {
	return approx == string(proto.Chebyshev2) || approx == string(proto.Elliptic)
}

func biquadParts(topology string, notch bool) int {
	switch {
	case notch:
		return costPartsNotch
	case topology == "state-variable":
		return costPartsSVBiquad
	}
	return costPartsBiquad
}

// estimateOrder is the prototype order synthesize designs: the spec's, or
// the minimum for the mask (the highest, MaxOrder, when none fits).
func estimateOrder(s Spec) int {
	if s.Order > 0 {
		return min(s.Order, MaxOrder)
	}
	if !s.HasStopband() || len(s.PassbandHz) != len(s.StopbandHz) {
		return 2
	}
	approx := proto.Approximation(s.Approximation)
	amax, amin := s.DesignRippleDB(), s.DesignAttenDB()
	ratio := normalizedStopband(s.Response, s.PassbandHz, s.StopbandHz)
	popt := proto.PhaseErrorDeg(s.phaseError())
	n, err := proto.MinOrder(approx, amax, amin, ratio, popt)
	if s.Response == Bandstop {
		if _, r := optimalBandstopEdges(s.PassbandHz, s.StopbandHz); r > ratio {
			if nOpt, errOpt := proto.MinOrder(approx, amax, amin, r, popt); errOpt == nil && (err != nil || nOpt < n) {
				n, err = nOpt, nil
			}
		}
	}
	if err != nil || n <= 0 {
		return MaxOrder
	}
	return min(n, MaxOrder)
}

// MaxTrialsWithin returns the most Monte Carlo trials s may ask for and
// cost at most budgetMs CPU-milliseconds ([EstimateCost]), from 0 to
// [MaxTrials]; 0 when even the design alone is over budgetMs.
func MaxTrialsWithin(s Spec, budgetMs float64) int {
	s.MonteCarlo.Trials = 1
	c := EstimateCostOf(s)
	left := budgetMs - c.DesignMs - (c.MonteCarloMs - c.PerTrialMs)
	if left <= 0 || c.PerTrialMs <= 0 {
		return 0
	}
	return int(min(math.Floor(left/c.PerTrialMs), MaxTrials))
}

// CheckCost returns nil when s costs at most maxMs CPU-milliseconds
// ([EstimateCost]), and otherwise a [*FieldError] naming the field that
// dominates the cost: montecarlo.trials, with the most trials that would
// pass, when the Monte Carlo is over the bound and the design alone is
// not; else order (or stopband_hz when the order is the mask's).
func CheckCost(s Spec, maxMs float64) error {
	c := EstimateCostOf(s)
	if c.TotalMs() <= maxMs {
		return nil
	}
	bound := fmt.Sprintf("this server's bound of %.3g CPU-seconds", maxMs/1000)
	if s.MonteCarlo.Trials > 0 && c.DesignMs < maxMs {
		n := MaxTrialsWithin(s, maxMs)
		return fieldErr("montecarlo.trials", "%d trials of this design would cost about %.3g CPU-seconds, over %s: at most %d trials for this design on this server (the command-line tool has no such bound)",
			s.MonteCarlo.Trials, c.TotalMs()/1000, bound, n)
	}
	field := "order"
	if s.Order == 0 {
		field = "stopband_hz"
	}
	return fieldErr(field, "this design (order %d, %d stages) would cost about %.3g CPU-seconds, over %s: ask for a lower order or a simpler topology (the command-line tool has no such bound)",
		c.Order, c.Stages, c.TotalMs()/1000, bound)
}
