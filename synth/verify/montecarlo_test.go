package verify_test

import (
	"context"
	"errors"
	"math"
	"slices"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/verify"
	"github.com/polewright/polewright/synth/verify/internal/mcbench"
)

func background() context.Context { return context.Background() }

func always(db []float64, _ func(float64) float64) bool { return true }

// predictedStdPct is the first-order spread of a stage's f0 and Q from
// its sensitivities: σ_y/y = √(Σ S_x²·σ_x²), σ_x = tolerance·σ-per-unit
// of the distribution (1/√3 uniform, 0.986578/3 for the 3σ gaussian
// truncated at the tolerance). Source: the first-order (delta-method)
// propagation of independent errors, e.g. Schaumann & Van Valkenburg,
// "Design of Analog Filters", ch. on sensitivity; issue 5's check.
func predictedStdPct(t *testing.T, st circuit.Stage, m circuit.Model, tol verify.Tolerance) (f0, q float64) {
	t.Helper()
	sens, err := verify.Sensitivities(st, m)
	require.NoError(t, err)
	unit := tol.Distribution.Sigma()
	var sf, sq float64
	for _, s := range sens {
		var pct float64
		for _, p := range st.Parts {
			if p.Ref == s.Ref {
				pct = p.TolerancePct
				if p.Kind == circuit.Resistor && tol.ResistorPct > 0 {
					pct = tol.ResistorPct
				}
				if p.Kind == circuit.Capacitor && tol.CapacitorPct > 0 {
					pct = tol.CapacitorPct
				}
			}
		}
		sx := pct / 100 * unit
		sf += s.F0 * s.F0 * sx * sx
		sq += s.Q * s.Q * sx * sx
	}
	return 100 * math.Sqrt(sf), 100 * math.Sqrt(sq)
}

// TestMonteCarloSpreadMatchesFirstOrder is issue 5's check: the Monte
// Carlo σ of each stage's f0 (and Q) agrees within 10 % with the
// first-order prediction σ_y/y = √(Σ S_x²·σ_x²) from the sensitivities.
// With 20,000 trials the sampling error of a σ is about 0.5 %; the
// remaining difference is the second-order term of 5 % capacitors, about
// 1 %. Q is held to the same 10 % where its predicted spread is at least
// 0.05 % (a Q that is first-order insensitive, as for R1 = R2 in the
// Sallen-Key, has its spread from second-order terms only, which the
// first-order formula does not claim to predict).
func TestMonteCarloSpreadMatchesFirstOrder(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		ch   circuit.Chain
		tol  verify.Tolerance
	}{
		{"butterworth8/single-pole/uniform", mcbench.Chain(mcbench.SinglePole), verify.Tolerance{}},
		{"butterworth8/ideal/gaussian", mcbench.Chain(mcbench.Ideal), verify.Tolerance{Distribution: verify.Gaussian}},
		{"mixed/ideal/uniform-2-10", circuit.Chain{Model: ideal, Stages: []circuit.Stage{
			sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9), mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9),
			sallenKeyHP(10e-9, 10e-9, 33e3, 4.7e3), rcBuffer(15e3, 10e-9),
		}}, verify.Tolerance{ResistorPct: 2, CapacitorPct: 10}},
		{"mixed/single-pole/gaussian", circuit.Chain{Model: singlePole, Stages: []circuit.Stage{
			sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9), mfbLP(10e3, 20e3, 4.7e3, 47e-9, 2.2e-9),
			sallenKeyHP(10e-9, 10e-9, 33e3, 4.7e3), rcBuffer(15e3, 10e-9),
		}}, verify.Tolerance{Distribution: verify.Gaussian}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			res, err := verify.MonteCarlo(background(), tc.ch, tc.tol, verify.MonteCarloOptions{
				Trials: 20000, Seed: 7, FreqHz: []float64{1e3},
			}, always)
			require.NoError(t, err)
			for k, st := range tc.ch.Stages {
				sp := res.Stages[k]
				require.True(t, sp.Valid)
				pf, pq := predictedStdPct(t, st, tc.ch.Model, tc.tol)
				t.Logf("stage %d %s: σ_f0 MC %.4f %% vs first order %.4f %% (ratio %.4f); σ_Q MC %.4f %% vs %.4f %%",
					k+1, st.Topology, sp.F0StdPct, pf, sp.F0StdPct/pf, sp.QStdPct, pq)
				require.InEpsilon(t, pf, sp.F0StdPct, 0.10, "σ_f0 of stage %d", k+1)
				if pq >= 0.05 {
					require.InEpsilon(t, pq, sp.QStdPct, 0.10, "σ_Q of stage %d", k+1)
				}
				require.InEpsilon(t, sp.F0NominalHz, sp.F0MeanHz, 0.01)
			}
		})
	}
}

// TestMonteCarloDeterminism: the same seed gives identical results with
// 1, 2 and 3 workers; another seed gives another result.
func TestMonteCarloDeterminism(t *testing.T) {
	t.Parallel()
	ch := mcbench.Chain(mcbench.SinglePole)
	freq := mcbench.FreqHz()
	run := func(seed uint64, workers int) verify.MonteCarloResult {
		res, err := verify.MonteCarlo(background(), ch, verify.Tolerance{GBWSpreadPct: 20},
			verify.MonteCarloOptions{
				Trials: 1000, Seed: seed, FreqHz: freq, Workers: workers,
				Edges: []verify.Edge{{Name: "passband_edge", FreqHz: mcbench.PassEdgeHz}, {Name: "stopband_edge", FreqHz: mcbench.StopEdgeHz}},
			}, verify.GridOnly(mcbench.Meets(freq)))
		require.NoError(t, err)
		return res
	}
	one := run(42, 1)
	for _, w := range []int{2, 3} {
		require.Equal(t, one, run(42, w), "workers %d", w)
	}
	other := run(43, 2)
	require.NotEqual(t, one.Envelope.P01DB, other.Envelope.P01DB)
	require.NotEqual(t, one.Stages, other.Stages)
	require.Greater(t, one.Yield, 0.0)
	require.Less(t, one.Yield, 1.0)
}

// TestMonteCarloYield: without spread every board is the nominal one, so
// a mask the nominal meets gives yield 1 and an envelope that is the
// nominal response (circuit.Chain.MagnitudeDB); a mask no board can meet
// gives 0.
func TestMonteCarloYield(t *testing.T) {
	t.Parallel()
	exact := mcbench.Chain(mcbench.SinglePole)
	for k := range exact.Stages {
		exact.Stages[k].Parts = slices.Clone(exact.Stages[k].Parts)
		for j := range exact.Stages[k].Parts {
			exact.Stages[k].Parts[j].TolerancePct = 0
		}
	}
	freq := mcbench.FreqHz()
	nominal, err := exact.MagnitudeDB(nil, freq)
	require.NoError(t, err)
	impossible := func(db []float64) bool {
		for i, f := range freq {
			if f >= mcbench.StopEdgeHz && db[i] > -1000 {
				return false
			}
		}
		return true
	}
	for _, tc := range []struct {
		name  string
		ch    circuit.Chain
		meets func([]float64) bool
		want  float64
	}{
		{"zero-tolerance/nominal-mask", exact, mcbench.Meets(freq), 1},
		{"zero-tolerance/impossible-mask", exact, impossible, 0},
		{"spread/impossible-mask", mcbench.Chain(mcbench.SinglePole), impossible, 0},
		{"spread/accept-all", mcbench.Chain(mcbench.SinglePole), func([]float64) bool { return true }, 1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			res, err := verify.MonteCarlo(background(), tc.ch, verify.Tolerance{},
				verify.MonteCarloOptions{Trials: 500, Seed: 1, FreqHz: freq}, verify.GridOnly(tc.meets))
			require.NoError(t, err)
			require.Equal(t, tc.want, res.Yield)
			require.Equal(t, int(tc.want*500), res.Passed)
			if tc.ch.Stages[0].Parts[0].TolerancePct == 0 {
				for i := range freq {
					for _, v := range []float64{res.Envelope.MinDB[i], res.Envelope.P01DB[i], res.Envelope.P99DB[i], res.Envelope.MaxDB[i]} {
						require.InDelta(t, nominal[i], v, 1e-9*math.Max(1, math.Abs(nominal[i])))
					}
				}
			}
		})
	}
}

// TestMonteCarloEnvelopePercentiles checks the envelope against the
// percentiles of every trial's response, collected through meets and
// computed as numpy.percentile's default (linear interpolation at
// h = (n−1)·p), for trial counts around the tail sizes' steps.
func TestMonteCarloEnvelopePercentiles(t *testing.T) {
	t.Parallel()
	ch := mcbench.Chain(mcbench.SinglePole)
	freq := []float64{100, 900, 1000, 1100, 3000, 1e4}
	for _, n := range []int{1, 2, 3, 100, 101, 102, 1234} {
		t.Run("", func(t *testing.T) {
			t.Parallel()
			var mu sync.Mutex
			var all [][]float64
			res, err := verify.MonteCarlo(background(), ch, verify.Tolerance{Distribution: verify.Gaussian},
				verify.MonteCarloOptions{Trials: n, Seed: 3, FreqHz: freq, Workers: 2},
				func(db []float64, _ func(float64) float64) bool {
					mu.Lock()
					all = append(all, slices.Clone(db))
					mu.Unlock()
					return true
				})
			require.NoError(t, err)
			require.Len(t, all, n)
			kLo, kHi := verify.TailSizes(n)
			require.LessOrEqual(t, kLo, n)
			require.LessOrEqual(t, kHi, n)
			col := make([]float64, n)
			for i := range freq {
				for j := range all {
					col[j] = all[j][i]
				}
				slices.Sort(col)
				pct := func(p float64) float64 {
					h := float64(n-1) * p
					lo := int(math.Floor(h))
					if lo+1 >= n {
						return col[lo]
					}
					return col[lo] + (h-float64(lo))*(col[lo+1]-col[lo])
				}
				require.Equal(t, col[0], res.Envelope.MinDB[i])
				require.Equal(t, col[n-1], res.Envelope.MaxDB[i])
				require.InDelta(t, pct(0.01), res.Envelope.P01DB[i], 1e-12)
				require.InDelta(t, pct(0.99), res.Envelope.P99DB[i], 1e-12)
			}
		})
	}
}

// TestMonteCarloEdgeLoss: the histograms count every trial; without
// spread there is one bin at the nominal loss.
func TestMonteCarloEdgeLoss(t *testing.T) {
	t.Parallel()
	ch := mcbench.Chain(mcbench.Ideal)
	edges := []verify.Edge{{Name: "passband_edge", FreqHz: mcbench.PassEdgeHz}, {Name: "stopband_edge", FreqHz: mcbench.StopEdgeHz}}
	nominal, err := ch.MagnitudeDB(nil, []float64{mcbench.PassEdgeHz, mcbench.StopEdgeHz})
	require.NoError(t, err)
	res, err := verify.MonteCarlo(background(), ch, verify.Tolerance{},
		verify.MonteCarloOptions{Trials: 3000, Seed: 5, FreqHz: []float64{mcbench.PassEdgeHz, mcbench.StopEdgeHz}, Edges: edges, HistogramBins: 15}, always)
	require.NoError(t, err)
	require.Len(t, res.EdgeLoss, 2)
	for i, e := range edges {
		h := res.EdgeLoss[e.Name]
		require.Equal(t, e.FreqHz, h.FreqHz)
		require.Len(t, h.Counts, 15)
		require.Len(t, h.EdgesDB, 16)
		sum := 0
		for _, c := range h.Counts {
			sum += c
		}
		require.Equal(t, 3000, sum)
		// The loss at an edge is the negated gain, whose extremes the
		// envelope holds (the edges are also grid points here).
		require.InDelta(t, -res.Envelope.MaxDB[i], h.EdgesDB[0], 1e-12)
		require.InDelta(t, -res.Envelope.MinDB[i], h.EdgesDB[15], 1e-12)
		require.Less(t, h.EdgesDB[0], -nominal[i])
		require.Greater(t, h.EdgesDB[15], -nominal[i])
	}
	for k := range ch.Stages {
		ch.Stages[k].Parts = slices.Clone(ch.Stages[k].Parts)
		for j := range ch.Stages[k].Parts {
			ch.Stages[k].Parts[j].TolerancePct = 0
		}
	}
	res, err = verify.MonteCarlo(background(), ch, verify.Tolerance{},
		verify.MonteCarloOptions{Trials: 10, Seed: 5, FreqHz: []float64{1e3}, Edges: edges}, always)
	require.NoError(t, err)
	for i, e := range edges {
		h := res.EdgeLoss[e.Name]
		require.Equal(t, []int{10}, h.Counts)
		require.InDelta(t, -nominal[i], h.EdgesDB[0], 1e-9)
		require.Equal(t, h.EdgesDB[0], h.EdgesDB[1])
	}
}

// TestMonteCarloGBWSpread: the op-amps' GBW spread alone moves f0 a
// little (a 1 MHz op-amp under a 1 kHz filter) and the ideal model
// ignores it.
func TestMonteCarloGBWSpread(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		m    circuit.Model
		zero bool
	}{{"single-pole", circuit.Model{GBWHz: 1e5, DCGainDB: 100}, false}, {"ideal", ideal, true}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			st := sallenKeyLP(10e3, 22e3, 33e-9, 4.7e-9)
			for j := range st.Parts {
				st.Parts[j].TolerancePct = 0
			}
			res, err := verify.MonteCarlo(background(), circuit.Chain{Stages: []circuit.Stage{st}, Model: tc.m},
				verify.Tolerance{GBWSpreadPct: 30}, verify.MonteCarloOptions{Trials: 200, FreqHz: []float64{1e3}}, always)
			require.NoError(t, err)
			if tc.zero {
				require.Zero(t, res.Stages[0].F0StdPct)
			} else {
				require.Greater(t, res.Stages[0].F0StdPct, 1e-4)
				require.Less(t, res.Stages[0].F0StdPct, 1.0)
			}
		})
	}
}

// TestMonteCarloErrors: bad options give clear errors wrapping
// verify.ErrInvalid (or circuit.ErrInvalid for the chain).
func TestMonteCarloErrors(t *testing.T) {
	t.Parallel()
	ch := mcbench.Chain(mcbench.SinglePole)
	ok := verify.MonteCarloOptions{Trials: 10, FreqHz: []float64{1e3}}
	badPart := mcbench.Chain(mcbench.SinglePole)
	badPart.Stages[0].Parts = slices.Clone(badPart.Stages[0].Parts)
	badPart.Stages[0].Parts[0].TolerancePct = 60
	for _, tc := range []struct {
		name   string
		ch     circuit.Chain
		tol    verify.Tolerance
		opt    func(o *verify.MonteCarloOptions)
		meets  verify.Judge
		target error
		msg    string
	}{
		{"trials-over-max", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.Trials = verify.MaxTrials + 1 }, always, verify.ErrInvalid, "limit of 100000"},
		{"trials-negative", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.Trials = -1 }, always, verify.ErrInvalid, "Trials -1"},
		{"trials-zero", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.Trials = 0 }, always, verify.ErrInvalid, "Trials 0"},
		{"empty-grid", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.FreqHz = nil }, always, verify.ErrInvalid, "FreqHz is empty"},
		{"nan-freq", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.FreqHz = []float64{math.NaN()} }, always, verify.ErrInvalid, "FreqHz[0]"},
		{"negative-freq", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.FreqHz = []float64{-1} }, always, verify.ErrInvalid, "FreqHz[0]"},
		{"nan-resistor-tolerance", ch, verify.Tolerance{ResistorPct: math.NaN()}, nil, always, verify.ErrInvalid, "ResistorPct NaN"},
		{"nan-capacitor-tolerance", ch, verify.Tolerance{CapacitorPct: math.NaN()}, nil, always, verify.ErrInvalid, "CapacitorPct NaN"},
		{"negative-tolerance", ch, verify.Tolerance{CapacitorPct: -1}, nil, always, verify.ErrInvalid, "CapacitorPct -1"},
		{"huge-tolerance", ch, verify.Tolerance{ResistorPct: 80}, nil, always, verify.ErrInvalid, "[0, 50]"},
		{"inf-gbw-spread", ch, verify.Tolerance{GBWSpreadPct: math.Inf(1)}, nil, always, verify.ErrInvalid, "GBWSpreadPct"},
		{"unknown-distribution", ch, verify.Tolerance{Distribution: "cauchy"}, nil, always, verify.ErrInvalid, `"cauchy"`},
		{"part-tolerance", badPart, verify.Tolerance{}, nil, always, verify.ErrInvalid, "part R1"},
		{"negative-workers", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.Workers = -2 }, always, verify.ErrInvalid, "Workers -2"},
		{"bins", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.HistogramBins = -1 }, always, verify.ErrInvalid, "HistogramBins"},
		{"edge-name", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.Edges = []verify.Edge{{Name: "a"}, {Name: "a"}} }, always, verify.ErrInvalid, "repeated"},
		{"edge-freq", ch, verify.Tolerance{}, func(o *verify.MonteCarloOptions) { o.Edges = []verify.Edge{{Name: "a", FreqHz: math.Inf(1)}} }, always, verify.ErrInvalid, "Edges[0]"},
		{"nil-meets", ch, verify.Tolerance{}, nil, nil, verify.ErrInvalid, "meets is nil"},
		{"empty-chain", circuit.Chain{Model: ideal}, verify.Tolerance{}, nil, always, circuit.ErrInvalid, "no stages"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			opt := ok
			if tc.opt != nil {
				tc.opt(&opt)
			}
			_, err := verify.MonteCarlo(background(), tc.ch, tc.tol, opt, tc.meets)
			require.ErrorIs(t, err, tc.target)
			require.ErrorContains(t, err, tc.msg)
		})
	}
}

// TestMonteCarloCancel: a cancelled context stops a long run quickly and
// MonteCarlo returns ctx.Err(); an already cancelled one does no work.
func TestMonteCarloCancel(t *testing.T) {
	t.Parallel()
	ch := mcbench.Chain(mcbench.SinglePole)
	freq := mcbench.FreqHz()
	t.Run("during", func(t *testing.T) {
		t.Parallel()
		ctx, cancel := context.WithCancel(background())
		defer cancel()
		var once sync.Once
		var cancelled time.Time
		var last int
		_, err := verify.MonteCarlo(ctx, ch, verify.Tolerance{}, verify.MonteCarloOptions{
			Trials: verify.MaxTrials, FreqHz: freq,
			Progress: func(done int) {
				last = done
				once.Do(func() { cancelled = time.Now(); cancel() })
			},
		}, always)
		require.ErrorIs(t, err, context.Canceled)
		require.Less(t, time.Since(cancelled), 100*time.Millisecond)
		require.Less(t, last, verify.MaxTrials/2)
	})
	t.Run("before", func(t *testing.T) {
		t.Parallel()
		ctx, cancel := context.WithCancel(background())
		cancel()
		calls := 0
		_, err := verify.MonteCarlo(ctx, ch, verify.Tolerance{}, verify.MonteCarloOptions{Trials: 10, FreqHz: freq},
			func([]float64, func(float64) float64) bool { calls++; return true })
		require.True(t, errors.Is(err, context.Canceled))
		require.Zero(t, calls)
	})
}

// TestMonteCarloProgressAndMaxTrials: MaxTrials itself is accepted; the
// progress counts increase to the number of trials.
func TestMonteCarloProgressAndMaxTrials(t *testing.T) {
	t.Parallel()
	var counts []int
	res, err := verify.MonteCarlo(background(), circuit.Chain{Model: ideal, Stages: []circuit.Stage{rcBuffer(10e3, 10e-9)}},
		verify.Tolerance{}, verify.MonteCarloOptions{Trials: verify.MaxTrials, FreqHz: []float64{1e3}, Progress: func(d int) { counts = append(counts, d) }}, always)
	require.NoError(t, err)
	require.Equal(t, verify.MaxTrials, res.Trials)
	require.True(t, slices.IsSorted(counts))
	require.Equal(t, verify.MaxTrials, counts[len(counts)-1])
	// RC lowpass: σ_f0 = √(2)·σ for R and C of equal σ... R 1 %, C 5 %
	// uniform: √(1² + 5²)/√3 % (S = −1 each).
	require.InEpsilon(t, math.Sqrt(26)/math.Sqrt(3), res.Stages[0].F0StdPct, 0.02)
	require.Zero(t, res.Stages[0].QStdPct)
}

// TestMonteCarloGenericStages runs the example designs, whose
// state-variable notch stages take the generic path, and checks the
// first-order σ_f0 there too.
func TestMonteCarloGenericStages(t *testing.T) {
	t.Parallel()
	for name, ch := range exampleChains(t) {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			res, err := verify.MonteCarlo(background(), ch, verify.Tolerance{}, verify.MonteCarloOptions{Trials: 4000, Seed: 11, FreqHz: []float64{1, 1e3, 1e5}}, always)
			require.NoError(t, err)
			for k, st := range ch.Stages {
				if !res.Stages[k].Valid {
					continue
				}
				pf, _ := predictedStdPct(t, st, ch.Model, verify.Tolerance{})
				t.Logf("stage %d %s: σ_f0 MC %.4f %% vs first order %.4f %%", k+1, st.Topology, res.Stages[k].F0StdPct, pf)
				require.InEpsilon(t, pf, res.Stages[k].F0StdPct, 0.10)
			}
		})
	}
}

// TestMonteCarloDeepStopband: a long chain far into its stopband (beyond
// −2000 dB, where the squared magnitude leaves the float64 range) gives
// the sum of its stages' responses in dB (each from
// circuit.Chain.MagnitudeDB of the stage alone), on the fused path (all
// stages of degree ≤ 3) and on the general one (with a state-variable
// stage of degree 6).
func TestMonteCarloDeepStopband(t *testing.T) {
	t.Parallel()
	sv := exampleChains(t)["audio-dac-reconstruction.json"].Stages[0]
	sk := sallenKeyLP(10e3, 10e3, 20e-9, 10e-9)
	for _, tc := range []struct {
		name   string
		stages []circuit.Stage
	}{
		{"fused", slices.Repeat([]circuit.Stage{sk}, 12)},
		{"general", append(slices.Repeat([]circuit.Stage{sk}, 12), sv)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ch := circuit.Chain{Model: singlePole}
			for _, st := range tc.stages {
				st.Parts = slices.Clone(st.Parts)
				for j := range st.Parts {
					st.Parts[j].TolerancePct = 0
				}
				ch.Stages = append(ch.Stages, st)
			}
			freq := []float64{10, 1e3, 1e5, 1e7, 1e9}
			want := make([]float64, len(freq))
			for _, st := range ch.Stages {
				db, err := circuit.Chain{Stages: []circuit.Stage{st}, Model: ch.Model}.MagnitudeDB(nil, freq)
				require.NoError(t, err)
				for i := range want {
					want[i] += db[i]
				}
			}
			require.Less(t, want[len(want)-1], -2000.0)
			res, err := verify.MonteCarlo(background(), ch, verify.Tolerance{}, verify.MonteCarloOptions{Trials: 2, FreqHz: freq}, always)
			require.NoError(t, err)
			for i := range freq {
				require.InDelta(t, want[i], res.Envelope.MinDB[i], 1e-6*math.Max(1, math.Abs(want[i])), "f %g Hz", freq[i])
			}
		})
	}
}
