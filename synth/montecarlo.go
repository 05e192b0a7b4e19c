package synth

import (
	"context"
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/accept"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/verify"
)

// MonteCarloReport is the outcome of a tolerance Monte Carlo.
type MonteCarloReport struct {
	Trials int    `json:"trials"`
	Seed   uint64 `json:"seed"`
	// Yield is the share of trials whose board passes the acceptance rule
	// (see [BuiltReport]), extremes refined between grid points.
	Yield float64 `json:"yield"`
	// Envelope is the spread of the magnitude response.
	Envelope EnvelopeReport `json:"envelope"`
	// Stages is the spread of each stage's f0 and Q.
	Stages []StageSpread `json:"stages"`
	// EdgeLoss histograms the loss at the passband and stopband edges.
	EdgeLoss map[string]HistogramReport `json:"edge_loss"`
	// CommonMode is the common-mode rejection of a differential design
	// under the same part spread, or nil.
	CommonMode *CommonModeReport `json:"common_mode,omitempty"`
}

// EnvelopeReport is the magnitude response's spread over the trials, in
// dB (floored at −400 dB).
type EnvelopeReport struct {
	FreqHz []float64 `json:"freq_hz"`
	MinDB  []float64 `json:"min_db"`
	P01DB  []float64 `json:"p01_db"`
	P99DB  []float64 `json:"p99_db"`
	MaxDB  []float64 `json:"max_db"`
}

// StageSpread is the spread of one stage's f0 and Q over the trials.
type StageSpread struct {
	F0MeanHz float64 `json:"f0_mean_hz"`
	F0StdPct float64 `json:"f0_std_pct"`
	QMean    float64 `json:"q_mean"`
	QStdPct  float64 `json:"q_std_pct"`
}

// HistogramReport counts the trials' loss at one frequency in bins:
// Counts[i] lie in [EdgesDB[i], EdgesDB[i+1]).
type HistogramReport struct {
	FreqHz  float64   `json:"freq_hz"`
	EdgesDB []float64 `json:"edges_db"`
	Counts  []int     `json:"counts"`
}

func (d *Design) monteCarlo(ctx context.Context, ch circuit.Chain) error {
	s := d.Spec
	lo, hi := d.Response.FreqHz[0], d.Response.FreqHz[len(d.Response.FreqHz)-1]
	plan := d.monteCarloPlan(response.LogSpaceHz(nil, lo, hi, MonteCarloPoints))
	grid := plan.Grid()
	meets := func(db []float64, eval func(float64) float64) bool {
		return plan.Judge(db, eval, accept.Decisive).Meets
	}
	var edges []verify.Edge
	for i, f := range s.PassbandHz {
		edges = append(edges, verify.Edge{Name: edgeName("passband_edge", i, len(s.PassbandHz)), FreqHz: f})
	}
	for i, f := range s.StopbandHz {
		edges = append(edges, verify.Edge{Name: edgeName("stopband_edge", i, len(s.StopbandHz)), FreqHz: f})
	}
	tol := verify.Tolerance{
		// Every part carries the spec's tolerance already (see realize).
		Distribution: verify.Distribution(s.Tolerance.Distribution), GBWSpreadPct: s.Tolerance.GBWPct,
	}
	opt := verify.MonteCarloOptions{
		Trials: s.MonteCarlo.Trials, Seed: s.MonteCarlo.Seed, FreqHz: grid, Edges: edges,
	}
	if report, ok := ctx.Value(progressKey{}).(func(done, total int)); ok {
		total := s.MonteCarlo.Trials
		opt.Progress = func(done int) { report(done, total) }
	}
	r, err := verify.MonteCarlo(ctx, ch, tol, opt, meets)
	if err != nil {
		if ctx.Err() != nil {
			return ctx.Err()
		}
		return fmt.Errorf("synth: Monte Carlo: %w", err)
	}
	mc := &MonteCarloReport{
		Trials: r.Trials, Seed: r.Seed, Yield: r.Yield,
		Envelope: EnvelopeReport{FreqHz: r.Envelope.FreqHz, MinDB: floorDB(r.Envelope.MinDB),
			P01DB: floorDB(r.Envelope.P01DB), P99DB: floorDB(r.Envelope.P99DB), MaxDB: floorDB(r.Envelope.MaxDB)},
		EdgeLoss: map[string]HistogramReport{},
	}
	for _, st := range r.Stages {
		mc.Stages = append(mc.Stages, StageSpread{F0MeanHz: st.F0MeanHz, F0StdPct: st.F0StdPct, QMean: st.QMean, QStdPct: st.QStdPct})
	}
	for name, h := range r.EdgeLoss {
		mc.EdgeLoss[name] = HistogramReport{FreqHz: h.FreqHz, EdgesDB: h.EdgesDB, Counts: h.Counts}
	}
	d.MonteCarlo = mc
	return d.commonMode(ch)
}

func edgeName(base string, i, n int) string {
	if n == 1 {
		return base
	}
	return fmt.Sprintf("%s_%s", base, []string{"lo", "hi"}[i])
}

// progressKey is the context key of a Monte Carlo progress callback.
type progressKey struct{}

// WithProgress returns a context under which [Synthesize] reports the
// progress of the Monte Carlo the spec asks for: report(done, total) is
// called after each block of trials, never concurrently, with increasing
// done. A run without trials never calls it.
func WithProgress(ctx context.Context, report func(done, total int)) context.Context {
	return context.WithValue(ctx, progressKey{}, report)
}

// monteCarloHintSpread is how far from each extreme of the nominal board
// the Monte Carlo grid puts neighbours, as a fraction: the trials'
// extremes move with their parts, and a neighbour on each side keeps them
// bracketed (see [accept.DecisiveDB]).
const monteCarloHintSpread = 0.01

// aliasKeepDB is how far below the nominal board's alias-band worst an
// alias interval's largest response may lie and still be judged in every
// trial: part tolerances move a response by far less.
const aliasKeepDB = 20

// monteCarloPlan returns the acceptance plan of the Monte Carlo's trials:
// the base grid, the nominal board's extremes with neighbours
// monteCarloHintSpread away, and of the alias band only the intervals
// that come within aliasKeepDB of its worst.
func (d *Design) monteCarloPlan(base []float64) *accept.Plan {
	m := d.Spec.acceptMask()
	r := d.Built.result
	var hints []float64
	for _, f := range r.Extremes {
		hints = append(hints, f, f*(1-monteCarloHintSpread), f*(1+monteCarloHintSpread))
	}
	if len(m.Alias) > 0 {
		keep := m.Alias[:0:0]
		for _, b := range m.Alias {
			worst := math.Max(dbOf(d.chainTFs.AtHz(b.LoHz))+d.chainLoad.DBAt(b.LoHz), dbOf(d.chainTFs.AtHz(b.HiHz))+d.chainLoad.DBAt(b.HiHz))
			for _, f := range r.Extremes {
				if f >= b.LoHz && f <= b.HiHz {
					worst = math.Max(worst, dbOf(d.chainTFs.AtHz(f))+d.chainLoad.DBAt(f))
				}
			}
			if worst >= r.AliasWorstDB-aliasKeepDB {
				keep = append(keep, b)
			}
		}
		m.Alias = keep
	}
	return accept.NewPlan(m, base, hints)
}
