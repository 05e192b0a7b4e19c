// Package explore answers "which filter should I build?": it designs every
// reasonable candidate for one spec — each approximation at its lowest
// order for the mask and up to [OrderSpan] above, on each topology and
// resistor series asked (or the defaults) — by [synth.SynthesizeTo] at
// [synth.Compared]: the design command's own computation of everything a
// candidate's figures read (the as-built response, noise, step, Monte
// Carlo, target-yield search), without the per-part figures and the board
// report that no figure reads, so that every candidate's figures are what
// the design of its permalink gives.
// It then takes the Pareto set of the candidates under [Objectives] and
// recommends one of it, saying why.
//
// # Bounds
//
// An exploration designs at most [MaxCandidates] candidates, each with at
// most [MaxTrialsPerCandidate] Monte Carlo trials (and, with the spec's
// target_yield, at most [synth.MarginLevels] margins); [Plan.CostMs]
// estimates the whole, for a server to admit or refuse. Candidates run at
// most runtime.GOMAXPROCS(0) at a time and stop when the context is done.
package explore
