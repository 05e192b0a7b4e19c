package explore

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strconv"
	"sync"

	"github.com/polewright/polewright/synth"
)

// Bounds of an exploration. Every candidate is a whole design with its
// Monte Carlo, so these bound what one request may cost beside the spec's
// own limits.
const (
	// OrderSpan is how far above each approximation's lowest order the
	// candidates go: orders n … n+OrderSpan.
	OrderSpan = 2
	// MaxCandidates is the most candidates one exploration designs.
	MaxCandidates = 160
	// MaxTrialsPerCandidate is the most Monte Carlo trials each candidate
	// may ask for (montecarlo.trials of the spec).
	MaxTrialsPerCandidate = 5000
)

// DefaultTopologies and DefaultSeries are what a spec that names no
// topology (no resistor_series) is explored over.
var (
	DefaultTopologies = []string{"sallen-key", "multiple-feedback", "state-variable"}
	DefaultSeries     = []string{"E24", "E96"}
)

// Objective is one figure of the Pareto comparison: Field is the
// candidate's JSON field, Goal "min" or "max".
type Objective struct {
	Field string `json:"field"`
	Goal  string `json:"goal"`
}

// Objectives are the figures the Pareto set is taken under: the board as
// built meets the mask, its yield, the op-amps and passive parts it
// takes, the op-amp it needs, the noise the converter sees and the
// settling time. A null figure counts as the worst; true beats false.
var Objectives = []Objective{
	{"built_meets_mask", "max"},
	{"yield", "max"},
	{"opamps", "min"},
	{"passive_parts", "min"},
	{"gbw_needed_hz", "min"},
	{"sampled_rms_v", "min"},
	{"settling_s", "min"},
}

// Candidate is one filter of an exploration and its figures, each what
// the design of its Permalink gives. Figures a design lacks are nil: the
// yield without a Monte Carlo, the sampled noise without a converter.
type Candidate struct {
	Approximation  string `json:"approximation"`
	Order          int    `json:"order"`
	Topology       string `json:"topology"`
	ResistorSeries string `json:"resistor_series"`
	// DesignMargin is the margin designed with: the spec's, or the one a
	// target yield chose.
	DesignMargin synth.DesignMargin `json:"design_margin"`
	// MeetsMask is the ideal response against the mask, BuiltMeetsMask
	// the board as built (the acceptance rule).
	MeetsMask      bool     `json:"meets_mask"`
	BuiltMeetsMask bool     `json:"built_meets_mask"`
	Yield          *float64 `json:"yield"`
	// OpAmps and PassiveParts count the amplifiers and the resistors and
	// capacitors of the whole chain.
	OpAmps       int `json:"opamps"`
	PassiveParts int `json:"passive_parts"`
	// GBWNeededHz and SlewNeededVPerS are the most any stage asks of its
	// op-amps.
	GBWNeededHz     *float64 `json:"gbw_needed_hz"`
	SlewNeededVPerS *float64 `json:"slew_needed_v_per_s"`
	// SampledRMSV is the output noise the converter's words carry.
	SampledRMSV *float64 `json:"sampled_rms_v"`
	// GroupDelaySpreadS is the largest minus the smallest group delay of
	// the ideal response over the passband (a lowpass's from 0 Hz, an open
	// band up to 100 × its edge), on the design's grid.
	GroupDelaySpreadS *float64 `json:"group_delay_spread_s"`
	// SettlingS is the step response's settling time as built.
	SettlingS *float64 `json:"settling_s"`
	// Permalink is the result page of this candidate's spec.
	Permalink string `json:"permalink"`
	// TargetReached reports, with a target yield, whether this
	// candidate's yield reaches it.
	TargetReached *bool `json:"target_reached,omitempty"`
}

// Skipped is a combination that could not be designed, and why.
type Skipped struct {
	Approximation  string `json:"approximation"`
	Order          int    `json:"order"`
	Topology       string `json:"topology"`
	ResistorSeries string `json:"resistor_series"`
	Reason         string `json:"reason"`
}

// Result is an exploration: the candidates, the indices of the Pareto set
// under Objectives, the recommended candidate and why.
type Result struct {
	Candidates  []Candidate `json:"candidates"`
	Pareto      []int       `json:"pareto"`
	Recommended int         `json:"recommended"`
	Reason      string      `json:"reason"`
	Objectives  []Objective `json:"objectives"`
	// Skipped are the combinations no design exists for (a notch section
	// on a topology without a notch form, an order above the limit).
	Skipped []Skipped `json:"skipped"`
	// TrialsPerCandidate is the Monte Carlo of each candidate (each
	// margin tried, with a target yield); TargetYield the spec's target.
	TrialsPerCandidate int      `json:"trials_per_candidate"`
	TargetYield        *float64 `json:"target_yield,omitempty"`
}

// job is one candidate to design.
type job struct {
	approx, topology, series string
	order                    int
	raw                      map[string]any
	spec                     synth.Spec
}

// Plan is an exploration ready to run: the spec read and validated, the
// candidates enumerated, their specs parsed.
type Plan struct {
	spec    synth.Spec
	key     string
	jobs    []job
	skipped []Skipped
}

// NewPlan reads the spec JSON data as [synth.ParseSpecBytes] does and
// enumerates the candidates: every approximation, at orders from its
// lowest for the mask (the spec's order when it gives no stopband) to
// OrderSpan above, on the spec's topology (or each of
// DefaultTopologies; fully-differential alone for a differential
// converter input) and resistor series (or each of DefaultSeries).
// Every other field is the spec's, and the mask (passband_ripple_db
// included) is the same for all. Errors are [*synth.FieldError] values:
// the spec's own, and the bounds of this package.
func NewPlan(ctx context.Context, data []byte) (*Plan, error) {
	spec, err := synth.ParseSpecBytes(data)
	if err != nil {
		return nil, err
	}
	if spec.MonteCarlo.Trials > MaxTrialsPerCandidate {
		return nil, &synth.FieldError{Field: "montecarlo.trials", Reason: fmt.Sprintf(
			"explore runs at most %d trials per candidate (got %d): every candidate is a whole design with its own Monte Carlo", MaxTrialsPerCandidate, spec.MonteCarlo.Trials)}
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	var raw map[string]any
	if err := dec.Decode(&raw); err != nil {
		return nil, &synth.FieldError{Field: "json", Reason: "the spec must be a JSON object"}
	}
	// One mask for every candidate: the spec's Amax, whose default
	// depends on the approximation.
	if _, ok := raw["passband_ripple_db"]; !ok {
		raw["passband_ripple_db"] = number(spec.PassbandRippleDB)
	}
	topologies := DefaultTopologies
	if _, ok := raw["topology"]; ok {
		topologies = []string{spec.Topology}
	} else if spec.Differential() {
		// A differential converter takes fully differential stages only.
		topologies = []string{"fully-differential"}
	}
	series := DefaultSeries
	if _, ok := raw["resistor_series"]; ok {
		series = []string{spec.ResistorSeries}
	}
	p := &Plan{spec: spec}
	key, err := json.Marshal(raw) // map keys sorted: canonical
	if err != nil {
		return nil, &synth.FieldError{Field: "json", Reason: "the spec cannot be read"}
	}
	p.key = string(key)
	var firstErr error
	for _, approx := range synth.Approximations {
		low, err := lowestOrder(ctx, raw, spec, approx)
		if err != nil {
			if ctx.Err() != nil {
				return nil, ctx.Err()
			}
			fe, ok := synth.IsFieldError(err)
			if !ok {
				return nil, err
			}
			p.skipped = append(p.skipped, Skipped{Approximation: approx, Reason: fe.Error()})
			firstErr = cmpOr(firstErr, err)
			continue
		}
		for order := low; order <= low+OrderSpan; order++ {
			for _, top := range topologies {
				for _, rs := range series {
					j := job{approx: approx, order: order, topology: top, series: rs, raw: clone(raw)}
					j.raw["approximation"], j.raw["order"] = approx, json.Number(strconv.Itoa(order))
					j.raw["topology"], j.raw["resistor_series"] = top, rs
					if order > synth.MaxOrder {
						p.skipped = append(p.skipped, j.skip(fmt.Sprintf("order %d is above the limit of %d", order, synth.MaxOrder)))
						continue
					}
					b, _ := json.Marshal(j.raw)
					if j.spec, err = synth.ParseSpecBytes(b); err != nil {
						p.skipped = append(p.skipped, j.skip(err.Error()))
						firstErr = cmpOr(firstErr, err)
						continue
					}
					p.jobs = append(p.jobs, j)
				}
			}
		}
	}
	if len(p.jobs) > MaxCandidates {
		return nil, &synth.FieldError{Field: "topology", Reason: fmt.Sprintf(
			"explore designs at most %d candidates (this spec makes %d); name a topology or a resistor_series to narrow the search", MaxCandidates, len(p.jobs))}
	}
	if len(p.jobs) == 0 {
		if firstErr != nil {
			return nil, firstErr
		}
		return nil, &synth.FieldError{Field: "stopband_hz", Reason: "no approximation can meet this mask within the order limit"}
	}
	return p, nil
}

func cmpOr(a, b error) error {
	if a != nil {
		return a
	}
	return b
}

func (j job) skip(reason string) Skipped {
	return Skipped{Approximation: j.approx, Order: j.order, Topology: j.topology, ResistorSeries: j.series, Reason: reason}
}

// lowestOrder is the lowest order of approx for the mask of raw (its
// margin included), or the spec's order when it gives no stopband.
func lowestOrder(ctx context.Context, raw map[string]any, spec synth.Spec, approx string) (int, error) {
	if !spec.HasStopband() {
		return spec.Order, nil
	}
	r := clone(raw)
	r["approximation"] = approx
	delete(r, "order")
	delete(r, "target_yield")
	b, _ := json.Marshal(r)
	s, err := synth.ParseSpecBytes(b)
	if err != nil {
		return 0, err
	}
	d, err := synth.SynthesizeIdeal(ctx, s)
	if err != nil {
		return 0, err
	}
	return d.Order, nil
}

// number is v as a JSON number.
func number(v float64) json.Number { return json.Number(strconv.FormatFloat(v, 'g', -1, 64)) }

// clone copies a decoded JSON object, its nested objects too.
func clone(m map[string]any) map[string]any {
	out := make(map[string]any, len(m))
	for k, v := range m {
		if o, ok := v.(map[string]any); ok {
			v = clone(o)
		}
		out[k] = v
	}
	return out
}

// Key is the canonical form of the explored spec (its JSON with sorted
// keys): two requests with the same key explore the same candidates.
func (p *Plan) Key() string { return p.key }

// Len is the number of candidates the plan designs.
func (p *Plan) Len() int { return len(p.jobs) }

// Spec is the explored spec as parsed.
func (p *Plan) Spec() synth.Spec { return p.spec }

// CostMs is the estimate of what designing every candidate costs, in
// CPU-milliseconds: the sum of [synth.EstimateCost] over the candidates.
func (p *Plan) CostMs() float64 {
	var sum float64
	for _, j := range p.jobs {
		sum += jobCost(j)
	}
	return sum
}

// jobCost is [synth.EstimateCost] of one candidate, except that a
// candidate whose notch sections its topology cannot build (Sallen-Key and
// multiple-feedback have no notch form, see synth/topology) counts its
// design alone: it fails before its Monte Carlo. A wrong guess here moves
// only the estimate.
func jobCost(j job) float64 {
	c := synth.EstimateCostOf(j.spec)
	notches := j.approx == "chebyshev2" || j.approx == "elliptic" || j.spec.Response == synth.Bandstop
	if notches && (j.topology == "sallen-key" || j.topology == "multiple-feedback") {
		return c.DesignMs
	}
	return c.TotalMs()
}

// CheckCost returns nil when the plan costs at most maxMs
// CPU-milliseconds ([Plan.CostMs]) and otherwise a [*synth.FieldError]:
// montecarlo.trials, with the most trials per candidate that fit, when
// the designs alone fit; else topology (narrow the search).
func (p *Plan) CheckCost(maxMs float64) error {
	total := p.CostMs()
	if total <= maxMs {
		return nil
	}
	bound := fmt.Sprintf("this server's bound of %.3g CPU-seconds", maxMs/1000)
	var designMs, perTrialMs float64
	for _, j := range p.jobs {
		j.spec.MonteCarlo.Trials = 1
		c := synth.EstimateCostOf(j.spec)
		if jobCost(j) == c.DesignMs {
			designMs += c.DesignMs
			continue
		}
		designMs += c.DesignMs + c.MonteCarloMs - c.PerTrialMs
		perTrialMs += c.PerTrialMs
	}
	if p.spec.MonteCarlo.Trials > 0 && designMs < maxMs && perTrialMs > 0 {
		n := int(math.Floor((maxMs - designMs) / perTrialMs))
		return &synth.FieldError{Field: "montecarlo.trials", Reason: fmt.Sprintf(
			"exploring %d candidates with %d trials each would cost about %.3g CPU-seconds, over %s: at most %d trials per candidate on this server (the command-line tool allows %d)",
			len(p.jobs), p.spec.MonteCarlo.Trials, total/1000, bound, max(n, 0), MaxTrialsPerCandidate)}
	}
	return &synth.FieldError{Field: "topology", Reason: fmt.Sprintf(
		"exploring %d candidates would cost about %.3g CPU-seconds, over %s: name a topology or a resistor_series to narrow the search",
		len(p.jobs), total/1000, bound)}
}

// Explore is [NewPlan] and [Plan.Run] without progress.
func Explore(ctx context.Context, data []byte) (*Result, error) {
	p, err := NewPlan(ctx, data)
	if err != nil {
		return nil, err
	}
	return p.Run(ctx, nil)
}

// Run designs every candidate with [synth.SynthesizeTo] at
// [synth.Compared] (the verification its figures read, the spec's Monte
// Carlo, and with target_yield the margin search), at most runtime.GOMAXPROCS(0) at a time, and compares them.
// progress, when not nil, is called after each candidate with the
// number done and the total, never concurrently. A candidate that cannot
// be designed (a [*synth.FieldError]) is listed in Result.Skipped; when
// ctx is done Run stops and returns ctx.Err(); any other failure ends
// the run with that error.
func (p *Plan) Run(ctx context.Context, progress func(done, total int)) (*Result, error) {
	parent := ctx
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	type outcome struct {
		c    *Candidate
		skip *Skipped
		err  error
	}
	out := make([]outcome, len(p.jobs))
	next := make(chan int)
	var mu sync.Mutex
	done := 0
	var wg sync.WaitGroup
	for range min(runtime.GOMAXPROCS(0), len(p.jobs)) {
		wg.Go(func() {
			for i := range next {
				c, skip, err := p.design(ctx, p.jobs[i])
				out[i] = outcome{c, skip, err}
				if err != nil {
					cancel()
				}
				mu.Lock()
				done++
				if progress != nil && err == nil {
					progress(done, len(p.jobs))
				}
				mu.Unlock()
			}
		})
	}
feed:
	for i := range p.jobs {
		select {
		case next <- i:
		case <-ctx.Done():
			break feed
		}
	}
	close(next)
	wg.Wait()
	if err := parent.Err(); err != nil {
		return nil, err
	}
	res := &Result{Objectives: slices.Clone(Objectives), Skipped: slices.Clone(p.skipped),
		TrialsPerCandidate: p.spec.MonteCarlo.Trials, TargetYield: p.spec.TargetYield, Candidates: []Candidate{}}
	for _, o := range out {
		if o.err != nil && !errors.Is(o.err, context.Canceled) {
			return nil, o.err // the failure that cancelled the others
		}
	}
	for _, o := range out {
		switch {
		case o.skip != nil:
			res.Skipped = append(res.Skipped, *o.skip)
		case o.c != nil:
			res.Candidates = append(res.Candidates, *o.c)
		}
	}
	if len(res.Candidates) == 0 {
		return nil, &synth.FieldError{Field: "topology", Reason: "no candidate can be built: " + res.Skipped[0].Reason}
	}
	res.Pareto = ParetoSet(res.Candidates, res.Objectives)
	res.Recommended, res.Reason = recommend(res.Candidates, res.Pareto, p.spec.TargetYield)
	return res, nil
}

// design designs one candidate: its figures, or why it cannot be built.
func (p *Plan) design(ctx context.Context, j job) (*Candidate, *Skipped, error) {
	if err := ctx.Err(); err != nil {
		return nil, nil, err
	}
	d, err := synth.SynthesizeTo(ctx, j.spec, synth.Compared)
	if err != nil {
		if ctx.Err() != nil {
			return nil, nil, ctx.Err()
		}
		if fe, ok := synth.IsFieldError(err); ok {
			s := j.skip(fe.Error())
			return nil, &s, nil
		}
		return nil, nil, fmt.Errorf("explore: %s order %d, %s, %s: %w", j.approx, j.order, j.topology, j.series, err)
	}
	c := Figures(d)
	// The permalink designs exactly the spec the candidate's board came
	// from: with a target yield, the margin it chose and no search.
	raw := clone(j.raw)
	if j.spec.TargetYield != nil {
		delete(raw, "target_yield")
		raw["design_margin"] = map[string]any{
			"passband_db": number(d.Spec.DesignMargin.PassbandDB),
			"stopband_db": number(d.Spec.DesignMargin.StopbandDB),
		}
		reached := d.MarginSearch != nil && d.MarginSearch.Reached
		c.TargetReached = &reached
	}
	c.Permalink = "/design?" + Query(raw)
	return &c, nil, nil
}
