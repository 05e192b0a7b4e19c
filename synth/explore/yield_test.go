package explore_test

import (
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/explore"
)

// acceptsDense applies INTERFACE.md's acceptance rule for a lowpass
// without converter or gain tolerance, written here from the contract and
// independently of package accept: over the passband [0, fp] the largest
// minus the smallest response at most Amax; over the stopband [fs,
// 100·fs] every response at least Amin below the passband's largest. The
// extremes are taken on dense log grids (n and 4n points), 0 Hz included.
func acceptsDense(tfs circuit.Cascade, fp, fs, amax, amin float64, n int) bool {
	db := func(f float64) float64 {
		h := tfs.AtHz(f)
		return 20 * math.Log10(math.Hypot(real(h), imag(h)))
	}
	pmax, pmin := db(0), db(0)
	lo := fp * 1e-5
	for i := range n {
		v := db(lo * math.Pow(fp/lo, float64(i)/float64(n-1)))
		pmax, pmin = math.Max(pmax, v), math.Min(pmin, v)
	}
	worst := math.Inf(-1)
	for i := range 4 * n {
		worst = math.Max(worst, db(fs*math.Pow(100, float64(i)/float64(4*n-1))))
	}
	return pmax-pmin <= amax+1e-6 && pmax-worst >= amin-1e-6
}

// drawBoard returns a copy of ch with every part drawn uniformly within
// its own tolerance by this test's generator (the spec's distribution is
// the default, uniform).
func drawBoard(ch circuit.Chain, rng *rand.Rand) circuit.Chain {
	out := circuit.Chain{Model: ch.Model}
	for _, st := range ch.Stages {
		st.Parts = slices.Clone(st.Parts)
		for j := range st.Parts {
			p := &st.Parts[j]
			p.Value *= 1 + p.TolerancePct/100*(2*rng.Float64()-1)
		}
		out.Stages = append(out.Stages, st)
	}
	return out
}

// TestTargetYieldRecommendation: with target_yield, the recommended
// candidate's yield reaches the target, and a Monte Carlo written here
// (this test's own draws of the part values within their tolerances, each
// board analysed by the circuit model and judged by acceptsDense) agrees
// with it within 4 binomial σ. The candidate's design is rebuilt from its
// own fields, as its permalink carries them, and gives the same yield.
func TestTargetYieldRecommendation(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("target-yield exploration and an independent Monte Carlo: a few seconds")
	}
	const base = `"passband_hz": 1000, "stopband_hz": 3000, "passband_ripple_db": 1, "stopband_atten_db": 30,
		"topology": "sallen-key", "resistor_series": "E96", "montecarlo": {"trials": 400, "seed": 9}`
	const target = 0.8
	res, err := explore.Explore(context.Background(), []byte(`{`+base+`, "target_yield": 0.8}`))
	require.NoError(t, err)
	require.Contains(t, res.Pareto, res.Recommended)
	rec := res.Candidates[res.Recommended]
	require.NotNil(t, rec.Yield)
	require.GreaterOrEqual(t, *rec.Yield, target)
	require.True(t, *rec.TargetReached)
	for _, c := range res.Candidates {
		require.Equal(t, *c.Yield >= target, *c.TargetReached, "%s %d", c.Approximation, c.Order)
	}

	dm, err := json.Marshal(rec.DesignMargin)
	require.NoError(t, err)
	spec, err := synth.ParseSpecBytes([]byte(`{` + base + `, "approximation": "` + rec.Approximation + `", "order": ` + itoa(rec.Order) +
		`, "design_margin": ` + string(dm) + `}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	require.Equal(t, *rec.Yield, d.MonteCarlo.Yield)

	ch, err := d.Chain()
	require.NoError(t, err)
	const n = 3000
	rng := rand.New(rand.NewPCG(31, 4))
	passed := 0
	for range n {
		tfs, err := drawBoard(ch, rng).TransferFunctions()
		require.NoError(t, err)
		if acceptsDense(tfs, 1000, 3000, 1, 30, 1500) {
			passed++
		}
	}
	want := float64(passed) / n
	got := *rec.Yield
	sigma := math.Sqrt(want * (1 - want) * (1.0/n + 1.0/float64(d.MonteCarlo.Trials)))
	t.Logf("recommended %s order %d, margin %+v: yield %.4f (%d trials), independent %.4f (%d trials), %.2f σ",
		rec.Approximation, rec.Order, rec.DesignMargin, got, d.MonteCarlo.Trials, want, n, (got-want)/sigma)
	require.InDelta(t, want, got, 4*sigma)
	require.GreaterOrEqual(t, want, target-4*sigma)
}
