package verify

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/polewright/polewright/synth/circuit"
)

// ErrInvalid is wrapped by every error this package returns for bad
// input (options, tolerances, limits). Errors of the circuit itself wrap
// circuit.ErrInvalid or circuit.ErrSingular.
var ErrInvalid = errors.New("verify: invalid")

func invalidf(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrInvalid}, args...)...)
}

// MaxTrials is the most trials one [MonteCarlo] run takes.
const MaxTrials = 100000

// DefaultHistogramBins is the number of bins of each edge-loss histogram
// when MonteCarloOptions.HistogramBins is 0; MaxHistogramBins bounds it.
const (
	DefaultHistogramBins = 20
	MaxHistogramBins     = 1000
)

// blockSize is the number of consecutive trials a worker takes at a time.
// Per-stage sums are accumulated per block and the blocks are added in
// order, so the result does not depend on the number of workers.
const blockSize = 64

// Edge is a named frequency at which [MonteCarlo] histograms the loss,
// typically the passband and stopband edges of the mask.
type Edge struct {
	// Name keys the histogram in MonteCarloResult.EdgeLoss
	// ("passband_edge", "stopband_edge").
	Name string
	// FreqHz is the frequency, finite and ≥ 0.
	FreqHz float64
}

// MonteCarloOptions controls a [MonteCarlo] run.
type MonteCarloOptions struct {
	// Trials is the number of boards drawn, 1 to [MaxTrials].
	Trials int
	// Seed selects the random streams: trial i draws from a PCG stream
	// seeded from (Seed, i), so a run is repeatable and independent of
	// Workers.
	Seed uint64
	// FreqHz is the grid (finite, ≥ 0, not empty) on which every trial's
	// magnitude response is computed, passed to meets and enveloped.
	FreqHz []float64
	// Workers is the number of goroutines; 0 means runtime.GOMAXPROCS(0).
	Workers int
	// Edges are the frequencies whose loss is histogrammed; may be empty.
	Edges []Edge
	// HistogramBins is the number of bins per edge histogram, 0 for
	// DefaultHistogramBins, at most MaxHistogramBins.
	HistogramBins int
	// Progress, when set, is called after each block of trials with the
	// number of trials done so far, never concurrently and with
	// increasing counts.
	Progress func(done int)
}

// Envelope is the spread of the magnitude response over the trials at
// each grid frequency, in dB: the extremes and the 1st and 99th
// percentiles (linear interpolation between order statistics, as numpy's
// default: the p-quantile of n sorted values v is v[h] interpolated at
// h = (n−1)·p). An exact zero of the response at a grid frequency is
// −Inf dB, as in package circuit; callers clamp for display.
type Envelope struct {
	// FreqHz is the grid (a copy of MonteCarloOptions.FreqHz).
	FreqHz []float64
	// MinDB and MaxDB are the extremes over the trials.
	MinDB, MaxDB []float64
	// P01DB and P99DB are the 1st and 99th percentiles.
	P01DB, P99DB []float64
}

// StageSpread is the spread of one stage's f0 and Q over the trials, from
// its section's pole pair ([circuit.Rational.DominantPair]).
type StageSpread struct {
	// Valid is false for a stage without a pole (a gain stage); the other
	// fields are then 0.
	Valid bool
	// F0NominalHz and QNominal are the stage's values as built, without
	// spread.
	F0NominalHz, QNominal float64
	// F0MeanHz and QMean are the means over the trials; F0StdPct and
	// QStdPct the sample standard deviations as percentages of the means
	// (0 for the Q of a first-order stage, whose Q is 0).
	F0MeanHz, F0StdPct, QMean, QStdPct float64
}

// Histogram counts values in bins: Counts[i] values lie in [EdgesDB[i],
// EdgesDB[i+1]), the last bin closed. The bins span the values' range in
// equal widths; when every value is the same there is one bin whose two
// edges are that value.
type Histogram struct {
	// FreqHz is the frequency the loss was taken at.
	FreqHz float64
	// EdgesDB are the bin edges, len(Counts)+1 of them, ascending.
	EdgesDB []float64
	// Counts are the number of trials per bin; they add up to the trials.
	Counts []int
}

// MonteCarloResult is what a [MonteCarlo] run found.
type MonteCarloResult struct {
	// Trials and Seed are the run's.
	Trials int
	Seed   uint64
	// Passed is the number of trials that met the mask, Yield = Passed /
	// Trials.
	Passed int
	Yield  float64
	// Envelope is the spread of the magnitude response on the grid.
	Envelope Envelope
	// Stages is the f0 and Q spread of each stage, in chain order.
	Stages []StageSpread
	// EdgeLoss histograms the loss (−gain, dB) at each of the options'
	// edges, keyed by name; nil without edges.
	EdgeLoss map[string]Histogram
}

// Judge decides whether a trial's board passes: db is its magnitude
// response in dB on the run's grid (a buffer it must not keep), eval the
// same response at any frequency in Hz (dB), for refining extremes between
// grid points. eval is only valid during the call. A Judge must be safe
// for concurrent use (each worker passes its own eval).
type Judge func(db []float64, eval func(fHz float64) float64) bool

// GridOnly returns a Judge that looks at the grid alone.
func GridOnly(meets func(db []float64) bool) Judge {
	if meets == nil {
		return nil
	}
	return func(db []float64, _ func(float64) float64) bool { return meets(db) }
}

// MonteCarlo builds opt.Trials boards of the chain, every part drawn
// within its tolerance (see [Tolerance]) and each single-pole op-amp's
// GBW within tol.GBWSpreadPct, analyses each as built on opt.FreqHz and
// counts the boards that meets passes (see [Judge]).
//
// Trial i draws from its own PCG stream seeded from (opt.Seed, i), in a
// fixed order (stage by stage, every part in order, then each op-amp's
// GBW), so that the result is the same for every number of workers and
// the same seed gives the same result. The trials are spread over
// opt.Workers goroutines.
//
// Each stage is analysed through the multi-affine expansion of its nodal
// determinants in its part admittances (exact integer coefficients,
// computed once per run for each structure of stage, so that the stages
// of one topology share one; see the package documentation), which makes a
// trial's transfer function a few dozen flops for a Sallen-Key stage; the
// response on the grid is then two real Horner evaluations per
// polynomial, stage and frequency. A stage of more than 16 variables
// (parts plus single-pole op-amps), or of 13 to 16 in a run of fewer than
// 2^k/512 trials, takes the generic path instead,
// [circuit.Stage.TransferFunctionScaled] of the perturbed stage, some
// thirty times slower per trial; its op-amps then share one GBW draw.
//
// Memory is bounded independently of the grid's product with the trials:
// the percentiles are exact order statistics kept in per-frequency heaps
// of the ⌊0.01·(n−1)⌋+2 lowest and highest values (16·(0.01·n+2) bytes
// per frequency and worker), the per-stage moments are summed per block,
// and only the edge losses are kept per trial (8 bytes per trial and
// edge).
//
// MonteCarlo checks ctx between trials and returns ctx.Err() when it is
// done early. Invalid options, tolerances or a nil meets give an error
// wrapping [ErrInvalid]; an invalid chain one wrapping
// circuit.ErrInvalid.
func MonteCarlo(ctx context.Context, ch circuit.Chain, tol Tolerance, opt MonteCarloOptions, meets Judge) (MonteCarloResult, error) {
	cm, err := newChainModel(ch, tol, opt)
	if err != nil {
		return MonteCarloResult{}, err
	}
	if meets == nil {
		return MonteCarloResult{}, invalidf("montecarlo: meets is nil (the mask test is required)")
	}
	if err := ctx.Err(); err != nil {
		return MonteCarloResult{}, err
	}
	n := opt.Trials
	nBlocks := (n + blockSize - 1) / blockSize
	workers := opt.Workers
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = min(workers, nBlocks)

	nStages := len(cm.stages)
	blocks := make([]blockStats, nBlocks)
	for i := range blocks {
		blocks[i].stages = make([]moments, nStages)
	}
	edgeLoss := make([]float64, n*len(opt.Edges))
	ws := make([]*worker, workers)
	var (
		next, done atomic.Int64
		stop       atomic.Bool
		errOnce    sync.Once
		runErr     error
		progMu     sync.Mutex
		reported   int
		wg         sync.WaitGroup
	)
	fail := func(err error) {
		errOnce.Do(func() { runErr = err })
		stop.Store(true)
	}
	cancel := ctx.Done()
	for wi := range ws {
		w := newWorker(cm, n)
		ws[wi] = w
		wg.Add(1)
		go func() {
			defer wg.Done()
			for !stop.Load() {
				b := int(next.Add(1)) - 1
				if b >= nBlocks {
					return
				}
				bs := &blocks[b]
				lo, hi := b*blockSize, min((b+1)*blockSize, n)
				for i := lo; i < hi; i++ {
					if cancel != nil {
						select {
						case <-cancel:
							fail(ctx.Err())
							return
						default:
						}
					}
					if err := w.trial(i); err != nil {
						fail(fmt.Errorf("montecarlo: trial %d: %w", i, err))
						return
					}
					if w.stable && meets(w.db[:cm.nFreq], w.evalDB) {
						bs.passed++
					}
					w.tails.add(w.db[:cm.nFreq])
					for e := range opt.Edges {
						edgeLoss[i*len(opt.Edges)+e] = -w.db[cm.nFreq+e]
					}
					for k, sm := range cm.stages {
						if w.ok[k] {
							bs.stages[k].add(w.f0[k]-sm.nomF0, w.q[k]-sm.nomQ)
						}
					}
				}
				d := int(done.Add(int64(hi - lo)))
				if opt.Progress != nil {
					progMu.Lock()
					if d > reported {
						reported = d
						opt.Progress(d)
					}
					progMu.Unlock()
				}
			}
		}()
	}
	wg.Wait()
	if runErr != nil { // ctx.Err() when cancelled, or an analysis error
		return MonteCarloResult{}, runErr
	}

	res := MonteCarloResult{Trials: n, Seed: opt.Seed}
	tails := make([]*tails, len(ws))
	for i, w := range ws {
		tails[i] = &w.tails
	}
	res.Envelope = mergeTails(tails, opt.FreqHz, n)
	total := make([]moments, nStages)
	for _, b := range blocks {
		res.Passed += b.passed
		for k := range total {
			total[k].merge(b.stages[k])
		}
	}
	res.Yield = float64(res.Passed) / float64(n)
	res.Stages = make([]StageSpread, nStages)
	for k, sm := range cm.stages {
		res.Stages[k] = total[k].spread(sm.nomF0, sm.nomQ, sm.nomOK)
	}
	if len(opt.Edges) > 0 {
		bins := opt.HistogramBins
		if bins == 0 {
			bins = DefaultHistogramBins
		}
		res.EdgeLoss = make(map[string]Histogram, len(opt.Edges))
		vals := make([]float64, n)
		for e, edge := range opt.Edges {
			for i := range vals {
				vals[i] = edgeLoss[i*len(opt.Edges)+e]
			}
			h := histogram(vals, bins)
			h.FreqHz = edge.FreqHz
			res.EdgeLoss[edge.Name] = h
		}
	}
	return res, nil
}

// chainModel is a chain prepared for trials.
type chainModel struct {
	ch       circuit.Chain
	stages   []*stageModel
	partTol  [][]float64 // per stage and part, as a fraction
	gbwTol   float64
	gaussian bool
	grid     []float64 // FreqHz, then the edges
	nFreq    int
	x, u     [][]float64 // per stage: ω/scale and −(ω/scale)² on the grid
	maxParts int
	// maxFastParts is the most parts of a stage on the fast path (at
	// most maxExpandVars), which sizes the workers' subset products.
	maxFastParts int
	runSeed      uint64
	// fused: every stage is expanded with polynomials of degree ≤ 3, and
	// the response is computed in one pass over the grid (fusedResponse)
	// in the variable x = ω/refScale, ratio[k] = refScale/scale of stage k.
	fused    bool
	refScale float64
	xr, ur   []float64
	ratio    []float64
	// fused7: not fused, but every stage is expanded with polynomials of
	// degree ≤ 7 (a notch stage of four single-pole op-amps: 4 and 6);
	// the response is computed in one pass over the grid as well
	// (fused7Response).
	fused7 bool
	// load is the nominal board's inter-stage loading (see
	// circuit.Loading), loadDB its 20·log10|L| on the grid: every trial's
	// response carries it (the parts' tolerances move the loading itself
	// by about as many percent of its size, which the trials leave out).
	load   circuit.Loading
	loadDB []float64
}

// addLoad adds the nominal inter-stage loading to a response on the grid.
func (cm *chainModel) addLoad(db []float64) {
	for i, v := range cm.loadDB {
		db[i] += v
	}
}

// newChainModel validates the run's inputs and prepares the stages.
func newChainModel(ch circuit.Chain, tol Tolerance, opt MonteCarloOptions) (*chainModel, error) {
	return buildChainModel(ch, tol, opt, expandAuto)
}

// buildChainModel is newChainModel with the stages' expansion mode.
func buildChainModel(ch circuit.Chain, tol Tolerance, opt MonteCarloOptions, mode expandMode) (*chainModel, error) {
	switch {
	case opt.Trials < 1:
		return nil, invalidf("montecarlo: Trials %d is not >= 1", opt.Trials)
	case opt.Trials > MaxTrials:
		return nil, invalidf("montecarlo: Trials %d is more than the limit of %d trials per run", opt.Trials, MaxTrials)
	case opt.Workers < 0:
		return nil, invalidf("montecarlo: Workers %d is negative", opt.Workers)
	case len(opt.FreqHz) == 0:
		return nil, invalidf("montecarlo: FreqHz is empty (the response grid is required)")
	case opt.HistogramBins < 0 || opt.HistogramBins > MaxHistogramBins:
		return nil, invalidf("montecarlo: HistogramBins %d is not in [0, %d]", opt.HistogramBins, MaxHistogramBins)
	}
	for i, f := range opt.FreqHz {
		if !(f >= 0) || math.IsInf(f, 1) {
			return nil, invalidf("montecarlo: FreqHz[%d] = %v is not finite and >= 0", i, f)
		}
	}
	names := make(map[string]bool, len(opt.Edges))
	for i, e := range opt.Edges {
		if e.Name == "" || names[e.Name] {
			return nil, invalidf("montecarlo: Edges[%d]: name %q is empty or repeated", i, e.Name)
		}
		names[e.Name] = true
		if !(e.FreqHz >= 0) || math.IsInf(e.FreqHz, 1) {
			return nil, invalidf("montecarlo: Edges[%d] (%s): FreqHz %v is not finite and >= 0", i, e.Name, e.FreqHz)
		}
	}
	if err := tol.Validate(); err != nil {
		return nil, err
	}
	if err := ch.Validate(); err != nil {
		return nil, err
	}
	cm := &chainModel{
		ch:       ch,
		gaussian: tol.Distribution == Gaussian,
		nFreq:    len(opt.FreqHz),
		runSeed:  opt.Seed,
	}
	if !ch.Model.Ideal {
		cm.gbwTol = tol.GBWSpreadPct / 100
	}
	cm.grid = append(slices.Clip(opt.FreqHz), nil...)
	for _, e := range opt.Edges {
		cm.grid = append(cm.grid, e.FreqHz)
	}
	load, err := ch.Loading()
	if err != nil {
		return nil, fmt.Errorf("montecarlo: %w", err)
	}
	if !load.Empty() {
		cm.load = load
		cm.loadDB = make([]float64, len(cm.grid))
		load.ApplyDB(cm.loadDB, cm.grid)
	}
	cache := expansionCache{}
	for k, st := range ch.Stages {
		sm, err := newStageModel(st, ch.Model, opt.Trials, mode, cache)
		if err != nil {
			return nil, fmt.Errorf("stage %d (%s): %w", k+1, st.Topology, err)
		}
		cm.stages = append(cm.stages, sm)
		pt := make([]float64, len(st.Parts))
		for j, p := range st.Parts {
			if pt[j], err = tol.partTolerance(p); err != nil {
				return nil, fmt.Errorf("stage %d (%s): %w", k+1, st.Topology, err)
			}
		}
		cm.partTol = append(cm.partTol, pt)
		cm.maxParts = max(cm.maxParts, len(sm.aug.Parts))
		if !sm.generic {
			cm.maxFastParts = max(cm.maxFastParts, len(sm.aug.Parts))
		}
		x := make([]float64, len(cm.grid))
		u := make([]float64, len(cm.grid))
		for i, f := range cm.grid {
			x[i] = 2 * math.Pi * f / sm.scale
			u[i] = -x[i] * x[i]
		}
		cm.x = append(cm.x, x)
		cm.u = append(cm.u, u)
	}
	cm.fused = true
	var lg float64
	for _, sm := range cm.stages {
		cm.fused = cm.fused && !sm.generic && sm.degNum <= 3 && sm.degDen <= 3
		lg += math.Log(sm.scale)
	}
	cm.refScale = math.Exp(lg / float64(len(cm.stages)))
	cm.xr = make([]float64, len(cm.grid))
	cm.ur = make([]float64, len(cm.grid))
	for i, f := range cm.grid {
		cm.xr[i] = 2 * math.Pi * f / cm.refScale
		cm.ur[i] = -cm.xr[i] * cm.xr[i]
	}
	for _, sm := range cm.stages {
		cm.ratio = append(cm.ratio, cm.refScale/sm.scale)
	}
	if !cm.fused {
		cm.fused7 = true
		for _, sm := range cm.stages {
			cm.fused7 = cm.fused7 && !sm.generic && sm.degNum <= 7 && sm.degDen <= 7
		}
	}
	return cm, nil
}

// worker holds one goroutine's scratch space.
type worker struct {
	cm       *chainModel
	pcg      rand.PCG
	rng      *rand.Rand
	y        []float64
	pa, pb   []float64 // subset products of the two halves of y (compiled.eval)
	beta     []float64
	num, den []float64
	mag2     []float64
	lexp     []float64
	db       []float64
	roots    [][]complex128
	reals    []float64
	f0, q    []float64
	ok       []bool
	parts    []circuit.Part // generic path
	fac, gbw [][]float64    // the board's part and GBW factors
	coef     [][8]float64   // fused path: N0..N3, D0..D3 of each stage in x
	coef7    [][16]float64  // fused7 path: each stage's coefficients in x, by parity (fused7Response)
	nums     [][]float64    // other paths: each stage's N and D in s/scale
	dens     [][]float64
	tails    tails
	// evalDB is w.responseDB as a func value, made once.
	evalDB func(fHz float64) float64
	// stable is false when a stage of the board has a pole on or right of
	// the jω axis (such a board fails whatever its response says).
	stable bool
}

func newWorker(cm *chainModel, trials int) *worker {
	w := &worker{cm: cm}
	w.rng = rand.New(&w.pcg)
	maxOps, maxDeg := 1, 1
	for _, sm := range cm.stages {
		maxOps = max(maxOps, len(sm.stage.OpAmps))
		maxDeg = max(maxDeg, sm.degDen, sm.degNum, len(sm.nomRoots))
		w.roots = append(w.roots, make([]complex128, len(sm.nomRoots)))
	}
	w.y = make([]float64, cm.maxParts)
	w.pa = make([]float64, 1<<(cm.maxFastParts/2))
	w.pb = make([]float64, 1<<(cm.maxFastParts-cm.maxFastParts/2))
	w.beta = make([]float64, maxOps)
	w.num = make([]float64, maxDeg+1)
	w.den = make([]float64, maxDeg+1)
	w.reals = make([]float64, 0, maxDeg+1)
	w.mag2 = make([]float64, len(cm.grid))
	w.lexp = make([]float64, len(cm.grid))
	w.db = make([]float64, len(cm.grid))
	w.f0 = make([]float64, len(cm.stages))
	w.q = make([]float64, len(cm.stages))
	w.ok = make([]bool, len(cm.stages))
	w.parts = make([]circuit.Part, cm.maxParts)
	for _, sm := range cm.stages {
		w.fac = append(w.fac, make([]float64, len(sm.stage.Parts)))
		w.gbw = append(w.gbw, make([]float64, sm.nOps))
	}
	w.coef = make([][8]float64, len(cm.stages))
	if cm.fused7 {
		w.coef7 = make([][16]float64, len(cm.stages))
	}
	w.nums = make([][]float64, len(cm.stages))
	w.dens = make([][]float64, len(cm.stages))
	w.tails = newTails(cm.nFreq, trials)
	w.evalDB = w.responseDB
	return w
}

// responseDB returns the current board's magnitude response at fHz, in
// dB: the product of its stages' rational forms, as analyse left them,
// with the nominal inter-stage loading.
func (w *worker) responseDB(fHz float64) float64 {
	return w.stagesDB(fHz) + w.cm.load.DBAt(fHz)
}

// stagesDB is responseDB without the loading.
func (w *worker) stagesDB(fHz float64) float64 {
	cm := w.cm
	var l float64 // ln of the squared magnitude
	if cm.fused {
		x := 2 * math.Pi * fHz / cm.refScale
		u := -x * x
		// As fusedResponse: one logarithm unless the products leave the
		// range where they are safe.
		n2, d2 := 1.0, 1.0
		for k := range w.coef {
			c := &w.coef[k]
			a := c[0] + u*c[2]
			b := (c[1] + u*c[3]) * x
			e := c[4] + u*c[6]
			g := (c[5] + u*c[7]) * x
			n2 *= a*a + b*b
			d2 *= e*e + g*g
			if !(n2 > 1e-200 && n2 < 1e200 && d2 > 1e-200 && d2 < 1e200) {
				l += math.Log(n2) - math.Log(d2)
				n2, d2 = 1, 1
			}
		}
		return dbPerLn * (l + math.Log(n2/d2))
	}
	if cm.fused7 {
		x := 2 * math.Pi * fHz / cm.refScale
		u := -x * x
		// As fused7Response, with fusedResponse's guard above.
		n2, d2 := 1.0, 1.0
		for k := range w.coef7 {
			a, b, e, g := eval7(&w.coef7[k], u, x)
			n2 *= a*a + b*b
			d2 *= e*e + g*g
			if !(n2 > 1e-200 && n2 < 1e200 && d2 > 1e-200 && d2 < 1e200) {
				l += math.Log(n2) - math.Log(d2)
				n2, d2 = 1, 1
			}
		}
		return dbPerLn * (l + math.Log(n2/d2))
	}
	for k, sm := range cm.stages {
		p := complex(0, 2*math.Pi*fHz/sm.scale)
		n, d := horner(w.nums[k], p), horner(w.dens[k], p)
		l += 2 * (math.Log(math.Hypot(real(n), imag(n))) - math.Log(math.Hypot(real(d), imag(d))))
	}
	return dbPerLn * l
}

// horner evaluates the polynomial with ascending coefficients c at p.
func horner(c []float64, p complex128) complex128 {
	var v complex128
	for j := len(c) - 1; j >= 0; j-- {
		v = v*p + complex(c[j], 0)
	}
	return v
}

// trial draws board i and analyses it: see draw and analyse.
func (w *worker) trial(i int) error {
	w.draw(i)
	return w.analyse()
}

// draw sets the factors of board i: w.fac[k][j] multiplies part j of
// stage k, w.gbw[k][u] the GBW of op-amp u of stage k (single-pole model
// only), in the fixed order stage by stage, parts then op-amps.
func (w *worker) draw(i int) {
	cm := w.cm
	w.pcg.Seed(trialSeed(cm.runSeed, i))
	for k, tol := range cm.partTol {
		fac := w.fac[k]
		for j, t := range tol {
			fac[j] = 1 + t*unitDraw(w.rng, cm.gaussian)
		}
		g := w.gbw[k]
		for u := range g {
			g[u] = 1 + cm.gbwTol*unitDraw(w.rng, cm.gaussian)
		}
	}
}

// analyse computes the board given by w.fac and w.gbw: its response in
// w.db (dB on the grid) and its stages' f0 and Q in w.f0, w.q, w.ok.
func (w *worker) analyse() error {
	cm := w.cm
	w.stable = true
	if !cm.fused && !cm.fused7 {
		for f := range w.mag2 {
			w.mag2[f] = 1
			w.lexp[f] = 0
		}
	}
	var alpha float64
	if !cm.ch.Model.Ideal {
		alpha = math.Pow(10, -cm.ch.Model.DCGainDB/20)
	}
	for k, sm := range cm.stages {
		fac := w.fac[k]
		beta := w.beta[:sm.nOps]
		for u, g := range w.gbw[k] {
			beta[u] = sm.scale / (2 * math.Pi * cm.ch.Model.GBWHz * g)
		}
		if sm.generic {
			for j, p := range sm.stage.Parts {
				w.parts[j] = p
				w.parts[j].Value = p.Value * fac[j]
			}
			if err := w.genericStage(k, sm, beta); err != nil {
				return err
			}
			continue
		}
		y := w.y[:len(sm.y0)]
		for j, y0 := range sm.y0 {
			switch {
			case j >= len(fac):
				y[j] = y0 // a parasitic part of the op-amp model: not toleranced
			case sm.isCap[j]:
				y[j] = y0 * fac[j]
			default:
				y[j] = y0 / fac[j]
			}
		}
		num, den := w.num[:sm.degNum+1], w.den[:sm.degDen+1]
		nA := sm.denC.nA
		pa, pb := w.pa[:1<<nA], w.pb[:1<<(len(y)-nA)]
		subsetProducts(pa, y[:nA])
		subsetProducts(pb, y[nA:])
		sm.numC.eval(num, pa, pb, alpha, beta)
		sm.denC.eval(den, pa, pb, alpha, beta)
		w.stagePoles(k, sm, num, den)
		if cm.fused7 {
			w.nums[k] = append(w.nums[k][:0], num...)
			w.dens[k] = append(w.dens[k][:0], den...)
			// As below: c_j·p^j = (c_j·ratio^j)·x^j, split by parity.
			c := &w.coef7[k]
			*c = [16]float64{}
			rho, rj := cm.ratio[k], 1.0
			for j := range max(len(num), len(den)) {
				at := j/2 + 4*(j%2)
				if j < len(num) {
					c[at] = num[j] * rj
				}
				if j < len(den) {
					c[8+at] = den[j] * rj
				}
				rj *= rho
			}
			continue
		}
		if !cm.fused {
			w.nums[k] = append(w.nums[k][:0], num...)
			w.dens[k] = append(w.dens[k][:0], den...)
			accumulate(w.mag2, w.lexp, cm.x[k], cm.u[k], num, den)
			continue
		}
		// p = s/scale = x·ratio: c_j·p^j = (c_j·ratio^j)·x^j.
		c := &w.coef[k]
		*c = [8]float64{}
		rho, rj := cm.ratio[k], 1.0
		for j := range 4 {
			if j < len(num) {
				c[j] = num[j] * rj
			}
			if j < len(den) {
				c[4+j] = den[j] * rj
			}
			rj *= rho
		}
	}
	switch {
	case cm.fused:
		fusedResponse(w.db, cm.xr, cm.ur, w.coef)
	case cm.fused7:
		fused7Response(w.db, cm.xr, cm.ur, w.coef7)
	default:
		copy(w.db, w.mag2)
		dbInPlace(w.db)
		for f, l := range w.lexp {
			if l != 0 {
				w.db[f] += 10 * l
			}
		}
	}
	cm.addLoad(w.db)
	return nil
}

// dbPerLn is 10/ln 10: 10·log10(v) = dbPerLn·ln(v).
const dbPerLn = 10 / math.Ln10

// toDB returns 10·log10(v·10^lexp) for a squared magnitude v, with NaN
// (0·∞ across stages) as −Inf.
func toDB(v, lexp float64) float64 {
	d := dbPerLn*math.Log(v) + 10*lexp
	if d != d {
		return math.Inf(-1)
	}
	return d
}

// fusedResponse writes 20·log10|Π_k N_k(jx)/D_k(jx)| at each x of the
// grid (u = −x²) into db, for stages of degree ≤ 3 whose coefficients in
// x are coef[k] (N0..N3, D0..D3): one pass, the squared magnitudes of all
// numerators and of all denominators multiplied, one division and one
// logarithm per frequency. A product that leaves [1e-280, 1e280], or a
// quotient below 1e-300 (a deep stopband of a long chain, or an exact
// zero), is redone stage by stage in logarithms.
func fusedResponse(db, x, u []float64, coef [][8]float64) {
	x = x[:len(db)]
	u = u[:len(db)]
	for f, uf := range u {
		xf := x[f]
		n2, d2 := 1.0, 1.0
		for k := range coef {
			c := &coef[k]
			a := c[0] + uf*c[2]
			b := (c[1] + uf*c[3]) * xf
			e := c[4] + uf*c[6]
			g := (c[5] + uf*c[7]) * xf
			n2 *= a*a + b*b
			d2 *= e*e + g*g
		}
		// The quotient too must be a normal number: n2 and d2 in range
		// can still divide to below 1e-308 (a chain's deep stopband).
		if q := n2 / d2; n2 > 1e-280 && n2 < 1e280 && d2 > 1e-280 && d2 < 1e280 && q > 1e-300 {
			db[f] = q // a squared magnitude, made dB below
		} else {
			db[f] = -1 // out of range: redone below
		}
	}
	dbInPlace(db)
	for f, v := range db {
		if v != -1 {
			continue
		}
		uf, xf := u[f], x[f]
		var l float64
		for k := range coef {
			c := &coef[k]
			a := c[0] + uf*c[2]
			b := (c[1] + uf*c[3]) * xf
			e := c[4] + uf*c[6]
			g := (c[5] + uf*c[7]) * xf
			l += math.Log(math.Hypot(a, b)) - math.Log(math.Hypot(e, g))
		}
		db[f] = toDB(1, 2*l/math.Ln10)
	}
}

// fused7Response is fusedResponse for stages of degree ≤ 7, coef[k]
// holding stage k's coefficients in x by parity: the numerator's even
// powers x⁰, x², x⁴, x⁶ in 0..3 and odd ones in 4..7, the denominator's
// in 8..11 and 12..15. Each polynomial costs two real Horner evaluations
// in u = −x² per frequency, unrolled; the squared magnitudes of all
// numerators and of all denominators are multiplied, and one division
// and one logarithm per frequency follow. A product that leaves
// [1e-280, 1e280], or a quotient below 1e-300, is redone stage by stage
// in logarithms.
func fused7Response(db, x, u []float64, coef [][16]float64) {
	x = x[:len(db)]
	u = u[:len(db)]
	for f, uf := range u {
		xf := x[f]
		n2, d2 := 1.0, 1.0
		for k := range coef {
			a, b, e, g := eval7(&coef[k], uf, xf)
			n2 *= a*a + b*b
			d2 *= e*e + g*g
		}
		// The quotient too must be a normal number: n2 and d2 in range
		// can still divide to below 1e-308 (a chain's deep stopband).
		if q := n2 / d2; n2 > 1e-280 && n2 < 1e280 && d2 > 1e-280 && d2 < 1e280 && q > 1e-300 {
			db[f] = q
		} else {
			db[f] = -1 // out of range: redone below
		}
	}
	dbInPlace(db)
	for f, v := range db {
		if v != -1 {
			continue
		}
		var l float64
		for k := range coef {
			a, b, e, g := eval7(&coef[k], u[f], x[f])
			l += math.Log(math.Hypot(a, b)) - math.Log(math.Hypot(e, g))
		}
		db[f] = toDB(1, 2*l/math.Ln10)
	}
}

// eval7 returns N(jx) = a + jb and D(jx) = e + jg of the stage whose
// coefficients c are laid out as for fused7Response, with u = −x².
func eval7(c *[16]float64, u, x float64) (a, b, e, g float64) {
	a = c[0] + u*(c[1]+u*(c[2]+u*c[3]))
	b = (c[4] + u*(c[5]+u*(c[6]+u*c[7]))) * x
	e = c[8] + u*(c[9]+u*(c[10]+u*c[11]))
	g = (c[12] + u*(c[13]+u*(c[14]+u*c[15]))) * x
	return a, b, e, g
}

// stagePoles finds the trial's poles of stage k, and its f0 and Q, by
// Newton steps on the perturbed denominator from the nominal poles
// (polyRoots) instead of a full root solve. When those do not converge
// in a few steps or two of them collide on one root (then the
// Aberth-Ehrlich iteration is tried, and when it fails too), it takes the
// circuit package's full solve, the companion matrix's eigenvalues.
func (w *worker) stagePoles(k int, sm *stageModel, num, den []float64) {
	z := w.roots[k]
	copy(z, sm.nomRoots)
	if len(z) == len(den)-1 && den[len(den)-1] != 0 && polyRoots(den, z) {
		w.f0[k], w.q[k], w.ok[k] = dominantPair(z, sm.scale, sm.sectionOrder, w.reals)
		w.checkStable(z)
		return
	}
	r := circuit.Rational{Num: slices.Clone(num), Den: slices.Clone(den), ScaleRadPerSec: sm.scale, SectionOrder: sm.sectionOrder}
	w.f0[k], w.q[k], w.ok[k] = r.DominantPair()
	w.checkStable(r.Poles())
}

// checkStable clears w.stable when a pole is not in the open left
// half-plane.
func (w *worker) checkStable(poles []complex128) {
	for _, p := range poles {
		if !(real(p) < 0) {
			w.stable = false
		}
	}
}

// genericStage analyses the perturbed stage k (parts in w.parts) with the
// circuit package; every op-amp of the stage takes the first's GBW draw.
func (w *worker) genericStage(k int, sm *stageModel, beta []float64) error {
	st := sm.stage
	st.Parts = w.parts[:len(st.Parts)]
	m := w.cm.ch.Model
	if len(beta) > 0 {
		m.GBWHz = sm.scale / (2 * math.Pi * beta[0])
	}
	r, err := st.TransferFunctionScaled(m, sm.scale)
	if err != nil {
		return fmt.Errorf("stage %d (%s): %w", k+1, st.Topology, err)
	}
	// The section order is the nominal stage's: the perturbed rational
	// form may come out a degree short when the interpolation takes a far
	// op-amp coefficient for rounding noise, and then its own
	// SectionOrder would make the section look first order.
	poles := r.Poles()
	w.f0[k], w.q[k], w.ok[k] = dominantPair(poles, 1, sm.sectionOrder, w.reals[:0])
	w.checkStable(poles)
	w.nums[k] = append(w.nums[k][:0], r.Num...)
	w.dens[k] = append(w.dens[k][:0], r.Den...)
	accumulate(w.mag2, w.lexp, w.cm.x[k], w.cm.u[k], r.Num, r.Den)
	return nil
}

// maxSplit bounds the polynomial length accumulate splits on the stack.
const maxSplit = 32

// accumulate multiplies mag2[f] by |N(jx_f)/D(jx_f)|², with N and D
// ascending in p and u[f] = −x[f]²: each polynomial is split once into
// its even and odd powers, so that N(jx) = E_N(u) + jx·O_N(u) costs two
// real Horner evaluations. A product that leaves [1e-200, 1e200] moves
// its decade exponent into lexp (log10 units of the squared magnitude),
// so that deep stopbands of long chains neither underflow nor overflow.
func accumulate(mag2, lexp, x, u []float64, num, den []float64) {
	if len(num) > maxSplit || len(den) > maxSplit {
		accumulateSlow(mag2, lexp, x, num, den)
		return
	}
	if len(num) <= 4 && len(den) <= 4 {
		accumulateCubic(mag2, lexp, x, u, num, den)
		return
	}
	var buf [2 * maxSplit]float64
	ne, no := splitEvenOdd(num, buf[:0:maxSplit/2], buf[maxSplit/2:maxSplit/2:maxSplit])
	de, do := splitEvenOdd(den, buf[maxSplit:maxSplit:3*maxSplit/2], buf[3*maxSplit/2:3*maxSplit/2:2*maxSplit])
	u = u[:len(mag2)]
	x = x[:len(mag2)]
	for f, uf := range u {
		var a, b, c, d float64
		for j := len(ne) - 1; j >= 0; j-- {
			a = a*uf + ne[j]
		}
		for j := len(no) - 1; j >= 0; j-- {
			b = b*uf + no[j]
		}
		for j := len(de) - 1; j >= 0; j-- {
			c = c*uf + de[j]
		}
		for j := len(do) - 1; j >= 0; j-- {
			d = d*uf + do[j]
		}
		xf := x[f]
		b *= xf
		d *= xf
		n2, d2 := a*a+b*b, c*c+d*d
		if !(n2 > 1e-290 && n2 < 1e290 && d2 > 1e-290 && d2 < 1e290) {
			lexp[f] += 2 * (math.Log10(math.Hypot(a, b)) - math.Log10(math.Hypot(c, d)))
			continue
		}
		v := mag2[f] * (n2 / d2)
		if !(v > 1e-200 && v < 1e200) {
			lexp[f] += math.Log10(v)
			v = 1
		}
		mag2[f] = v
	}
}

// accumulateCubic is accumulate for polynomials of degree ≤ 3 (most
// stages: a second-order section and one op-amp pole), padded with zero
// coefficients and unrolled.
func accumulateCubic(mag2, lexp, x, u []float64, num, den []float64) {
	var n, d [4]float64
	copy(n[:], num)
	copy(d[:], den)
	u = u[:len(mag2)]
	x = x[:len(mag2)]
	for f, uf := range u {
		xf := x[f]
		a := n[0] + uf*n[2]
		b := (n[1] + uf*n[3]) * xf
		c := d[0] + uf*d[2]
		e := (d[1] + uf*d[3]) * xf
		n2, d2 := a*a+b*b, c*c+e*e
		if !(n2 > 1e-290 && n2 < 1e290 && d2 > 1e-290 && d2 < 1e290) {
			lexp[f] += 2 * (math.Log10(math.Hypot(a, b)) - math.Log10(math.Hypot(c, e)))
			continue
		}
		v := mag2[f] * (n2 / d2)
		if !(v > 1e-200 && v < 1e200) {
			lexp[f] += math.Log10(v)
			v = 1
		}
		mag2[f] = v
	}
}

// accumulateSlow is accumulate for long polynomials, in complex
// arithmetic with logarithms.
func accumulateSlow(mag2, lexp, x []float64, num, den []float64) {
	for f := range mag2 {
		p := complex(0, x[f])
		var n, d complex128
		for j := len(num) - 1; j >= 0; j-- {
			n = n*p + complex(num[j], 0)
		}
		for j := len(den) - 1; j >= 0; j-- {
			d = d*p + complex(den[j], 0)
		}
		lexp[f] += 2 * (math.Log10(math.Hypot(real(n), imag(n))) - math.Log10(math.Hypot(real(d), imag(d))))
	}
}

// splitEvenOdd appends the even- and odd-power coefficients of c to even
// and odd.
func splitEvenOdd(c, even, odd []float64) ([]float64, []float64) {
	for i, v := range c {
		if i%2 == 0 {
			even = append(even, v)
		} else {
			odd = append(odd, v)
		}
	}
	return even, odd
}

// moments accumulates shifted sums of f0 and Q (deviations from the
// nominal, which keeps the variance free of cancellation).
type moments struct {
	n                int
	sf, sff, sq, sqq float64
}

func (m *moments) add(df, dq float64) {
	m.n++
	m.sf += df
	m.sff += df * df
	m.sq += dq
	m.sqq += dq * dq
}

func (m *moments) merge(o moments) {
	m.n += o.n
	m.sf += o.sf
	m.sff += o.sff
	m.sq += o.sq
	m.sqq += o.sqq
}

// spread turns the sums into a StageSpread.
func (m moments) spread(f0, q float64, ok bool) StageSpread {
	if !ok || m.n == 0 {
		return StageSpread{}
	}
	s := StageSpread{Valid: true, F0NominalHz: f0, QNominal: q}
	n := float64(m.n)
	s.F0MeanHz = f0 + m.sf/n
	s.QMean = q + m.sq/n
	if m.n > 1 {
		vf := math.Max(0, (m.sff-m.sf*m.sf/n)/(n-1))
		vq := math.Max(0, (m.sqq-m.sq*m.sq/n)/(n-1))
		s.F0StdPct = 100 * math.Sqrt(vf) / s.F0MeanHz
		if s.QMean != 0 {
			s.QStdPct = 100 * math.Sqrt(vq) / math.Abs(s.QMean)
		}
	}
	return s
}

// blockStats is what one block of trials contributes.
type blockStats struct {
	passed int
	stages []moments
}

// histogram bins vals (not empty) into bins equal bins over their finite
// range; infinite values go to the end bins, NaN is skipped.
func histogram(vals []float64, bins int) Histogram {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range vals {
		if !math.IsInf(v, 0) && v == v {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if math.IsInf(lo, 1) { // no finite value
		lo, hi = 0, 0
	}
	if lo == hi {
		bins = 1
	}
	h := Histogram{EdgesDB: make([]float64, bins+1), Counts: make([]int, bins)}
	width := (hi - lo) / float64(bins)
	for i := range h.EdgesDB {
		h.EdgesDB[i] = lo + float64(i)*width
	}
	h.EdgesDB[bins] = hi
	for _, v := range vals {
		if v != v {
			continue
		}
		i := 0
		if width > 0 {
			i = int(math.Floor((v - lo) / width))
		}
		h.Counts[min(max(i, 0), bins-1)]++
	}
	return h
}
