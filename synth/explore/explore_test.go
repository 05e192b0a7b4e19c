package explore_test

import (
	"context"
	"encoding/json"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/explore"
)

// antiAlias is a lowpass anti-alias spec: a 16-bit converter at 192 kHz,
// 20 kHz kept within 0.5 dB, the stopband from the converter.
const antiAlias = `{"passband_hz": 20000, "passband_ripple_db": 0.5,
	"converter": {"bits": 16, "sample_rate_hz": 192000, "full_scale_vpp": 4}`

// figure reads a candidate's figure from its JSON, as a client would: a
// number (true 1, false 0), or ok = false for null.
func figure(t *testing.T, c explore.Candidate, field string) (float64, bool) {
	b, err := json.Marshal(c)
	require.NoError(t, err)
	var m map[string]any
	require.NoError(t, json.Unmarshal(b, &m))
	v, present := m[field]
	require.True(t, present, "objective %q is not a candidate field", field)
	switch v := v.(type) {
	case nil:
		return 0, false
	case bool:
		if v {
			return 1, true
		}
		return 0, true
	case float64:
		return v, true
	}
	t.Fatalf("field %q is %T", field, v)
	return 0, false
}

// bruteForcePareto is the definition, applied to the candidates' JSON: i
// is in the set when no j is at least as good in every objective and
// better in one, a null figure being worse than any number.
func bruteForcePareto(t *testing.T, cs []explore.Candidate, objs []explore.Objective) []int {
	at := func(i int, o explore.Objective) (float64, bool) { return figure(t, cs[i], o.Field) }
	// noWorse and better compare j against i on one objective.
	cmp := func(j, i int, o explore.Objective) int {
		vj, okj := at(j, o)
		vi, oki := at(i, o)
		switch {
		case !okj && !oki:
			return 0
		case !okj:
			return -1
		case !oki:
			return 1
		}
		if o.Goal == "max" {
			vj, vi = -vj, -vi
		}
		switch {
		case vj < vi:
			return 1
		case vj > vi:
			return -1
		}
		return 0
	}
	var out []int
	for i := range cs {
		dominated := false
		for j := range cs {
			if i == j {
				continue
			}
			worse, better := false, false
			for _, o := range objs {
				switch cmp(j, i, o) {
				case -1:
					worse = true
				case 1:
					better = true
				}
			}
			if !worse && better {
				dominated = true
			}
		}
		if !dominated {
			out = append(out, i)
		}
	}
	return out
}

// TestExploreAntiAlias: the candidates of the anti-alias spec, every one
// designed, the Pareto set the brute-force non-dominated set, the
// recommendation in it, and the enumeration what the package comment
// says (each approximation from its lowest order to two above).
func TestExploreAntiAlias(t *testing.T) {
	t.Parallel()
	res, err := explore.Explore(context.Background(), []byte(antiAlias+`, "montecarlo": {"trials": 200, "seed": 5}}`))
	require.NoError(t, err)
	require.NotEmpty(t, res.Candidates)
	require.Equal(t, explore.Objectives, res.Objectives)
	require.Equal(t, bruteForcePareto(t, res.Candidates, res.Objectives), res.Pareto)
	require.Contains(t, res.Pareto, res.Recommended)
	require.NotEmpty(t, res.Reason)
	require.Equal(t, 200, res.TrialsPerCandidate)

	// Every approximation's lowest order for the mask, as the design
	// command finds it, and two above; every combination either a
	// candidate or skipped with its reason.
	seen := map[[4]string]bool{}
	for _, c := range res.Candidates {
		seen[[4]string{c.Approximation, itoa(c.Order), c.Topology, c.ResistorSeries}] = true
		require.NotNil(t, c.Yield)
		require.NotNil(t, c.SampledRMSV, "a converter is given")
		require.Contains(t, c.Permalink, "order="+itoa(c.Order))
	}
	for _, s := range res.Skipped {
		require.NotEmpty(t, s.Reason)
		seen[[4]string{s.Approximation, itoa(s.Order), s.Topology, s.ResistorSeries}] = true
	}
	for _, approx := range synth.Approximations {
		s, err := synth.ParseSpecBytes([]byte(antiAlias + `, "approximation": "` + approx + `"}`))
		require.NoError(t, err)
		d, err := synth.SynthesizeIdeal(context.Background(), s)
		if err != nil {
			continue // no order meets the mask: skipped as a whole
		}
		for order := d.Order; order <= d.Order+explore.OrderSpan; order++ {
			for _, top := range explore.DefaultTopologies {
				for _, rs := range explore.DefaultSeries {
					require.True(t, seen[[4]string{approx, itoa(order), top, rs}], "%s %d %s %s", approx, order, top, rs)
				}
			}
		}
	}
}

func itoa(n int) string { b, _ := json.Marshal(n); return string(b) }

// TestParetoSetRandom: ParetoSet against the brute-force definition on
// random figures with ties and nulls.
func TestParetoSetRandom(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(7, 7))
	ptr := func() *float64 {
		if rng.IntN(5) == 0 {
			return nil
		}
		v := float64(rng.IntN(4)) // few values: many ties
		return &v
	}
	for range 200 {
		cs := make([]explore.Candidate, 1+rng.IntN(12))
		for i := range cs {
			cs[i] = explore.Candidate{BuiltMeetsMask: rng.IntN(2) == 0, Yield: ptr(), OpAmps: rng.IntN(4), PassiveParts: rng.IntN(4),
				GBWNeededHz: ptr(), SampledRMSV: ptr(), SettlingS: ptr()}
		}
		require.Equal(t, bruteForcePareto(t, cs, explore.Objectives), explore.ParetoSet(cs, explore.Objectives))
	}
}

// TestExploreBounds: the bounds are errors that name the field.
func TestExploreBounds(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name, spec, field string
	}{
		{"too many trials", antiAlias + `, "montecarlo": {"trials": 5001}}`, "montecarlo.trials"},
		{"bad spec", `{"passband_hz": 1000, "stopband_hz": 500}`, "stopband_hz"},
		{"target without trials", antiAlias + `, "target_yield": 0.9}`, "montecarlo.trials"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := explore.NewPlan(context.Background(), []byte(tc.spec))
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "%v", err)
			require.Equal(t, tc.field, fe.Field)
		})
	}
	// A bound between the designs alone and the designs with their
	// trials: the trials are at fault. Below the designs alone: the
	// search is too wide.
	p0, err := explore.NewPlan(context.Background(), []byte(antiAlias+`}`))
	require.NoError(t, err)
	p, err := explore.NewPlan(context.Background(), []byte(antiAlias+`, "montecarlo": {"trials": 5000}}`))
	require.NoError(t, err)
	require.Greater(t, p.CostMs(), p0.CostMs())
	fe, ok := synth.IsFieldError(p.CheckCost((p0.CostMs() + p.CostMs()) / 2))
	require.True(t, ok)
	require.Equal(t, "montecarlo.trials", fe.Field)
	fe, ok = synth.IsFieldError(p.CheckCost(p0.CostMs() / 2))
	require.True(t, ok)
	require.Equal(t, "topology", fe.Field)
	require.NoError(t, p.CheckCost(p.CostMs()))
}

// TestExploreCancelled: a done context stops the run with its error.
func TestExploreCancelled(t *testing.T) {
	t.Parallel()
	p, err := explore.NewPlan(context.Background(), []byte(antiAlias+`, "montecarlo": {"trials": 2000}}`))
	require.NoError(t, err)
	ctx, cancel := context.WithCancel(context.Background())
	calls := 0
	_, err = p.Run(ctx, func(done, total int) {
		calls++
		if done >= 2 {
			cancel()
		}
	})
	require.ErrorIs(t, err, context.Canceled)
	require.Less(t, calls, p.Len())
}

// TestNarrowedByTheSpec: a spec that names its topology and resistor
// series is explored on those alone; one that gives no stopband from its
// order up.
func TestNarrowedByTheSpec(t *testing.T) {
	t.Parallel()
	res, err := explore.Explore(context.Background(), []byte(`{"passband_hz": 1000, "order": 3, "topology": "multiple-feedback", "resistor_series": "E48"}`))
	require.NoError(t, err)
	var orders []int
	for _, c := range res.Candidates {
		require.Equal(t, "multiple-feedback", c.Topology)
		require.Equal(t, "E48", c.ResistorSeries)
		require.Nil(t, c.Yield, "no Monte Carlo asked")
		orders = append(orders, c.Order)
	}
	slices.Sort(orders)
	require.Equal(t, 3, orders[0])
	require.Equal(t, 5, orders[len(orders)-1])
}

// TestExploreDifferentialConverter: for a differential converter input
// every candidate is built with topology fully-differential (the
// single-ended topologies would be refused), the approximations with
// jω-axis zeros among them (built single-ended and converted after the
// last section).
func TestExploreDifferentialConverter(t *testing.T) {
	t.Parallel()
	res, err := explore.Explore(context.Background(), []byte(`{"passband_hz": 1000, "passband_ripple_db": 1, "stopband_hz": 4000, "stopband_atten_db": 40,
	  "converter": {"bits": 16, "sample_rate_hz": 256000, "output_rate_hz": 4000, "full_scale_vpp": 4, "architecture": "sigma-delta", "input": "differential"}}`))
	require.NoError(t, err)
	require.NotEmpty(t, res.Candidates)
	elliptic := false
	for _, c := range res.Candidates {
		require.Equal(t, "fully-differential", c.Topology)
		elliptic = elliptic || c.Approximation == "elliptic"
	}
	require.True(t, elliptic, "an elliptic candidate is built")
}
