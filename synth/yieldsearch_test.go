package synth_test

import (
	"context"
	"encoding/json"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// TestTargetYieldSpec: target_yield is a share of boards and needs a
// Monte Carlo to measure it.
func TestTargetYieldSpec(t *testing.T) {
	t.Parallel()
	const base = `{"passband_hz": 1000, "stopband_hz": 3000, `
	for _, tc := range []struct {
		name, extra, field string
	}{
		{"above 1", `"montecarlo": {"trials": 100}, "target_yield": 1.5}`, "target_yield"},
		{"zero", `"montecarlo": {"trials": 100}, "target_yield": 0}`, "target_yield"},
		{"no trials", `"target_yield": 0.9}`, "montecarlo.trials"},
		{"ok", `"montecarlo": {"trials": 100}, "target_yield": 1}`, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := synth.ParseSpecBytes([]byte(base + tc.extra))
			if tc.field == "" {
				require.NoError(t, err)
				return
			}
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "%v", err)
			require.Equal(t, tc.field, fe.Field)
		})
	}
}

// TestTargetYieldDesign: a design with target_yield is the first margin of
// the ladder whose yield reaches the target (every earlier one's is
// below it), it is the design of its echoed spec's margin with no search,
// and its echoed spec designs the same board again.
func TestTargetYieldDesign(t *testing.T) {
	t.Parallel()
	const target = 0.7
	s, err := synth.ParseSpecBytes([]byte(`{"approximation": "chebyshev1", "passband_hz": 10000, "passband_ripple_db": 1, "order": 6,
		"stopband_hz": 20000, "stopband_atten_db": 30, "topology": "sallen-key", "opamp": {"gbw_hz": 5e6},
		"tolerance": {"resistor_pct": 1, "capacitor_pct": 2}, "montecarlo": {"trials": 300, "seed": 3}, "target_yield": 0.7}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	m := d.MarginSearch
	require.NotNil(t, m)
	require.True(t, m.Reached, m.Text)
	require.GreaterOrEqual(t, d.MonteCarlo.Yield, target)
	require.Equal(t, m.Yield, d.MonteCarlo.Yield)
	ladder := synth.MarginLadder(s)
	require.Equal(t, ladder[:len(m.Steps)], func() []synth.DesignMargin {
		var out []synth.DesignMargin
		for _, st := range m.Steps {
			out = append(out, st.DesignMargin)
		}
		return out
	}())
	for _, st := range m.Steps[:len(m.Steps)-1] {
		require.Less(t, *st.Yield, target)
	}
	require.Equal(t, m.DesignMargin, d.Spec.DesignMargin)
	require.Equal(t, target, *d.Spec.TargetYield)
	require.NotZero(t, d.Spec.DesignMargin.PassbandDB, "the case needs a margin")

	// The chosen margin without the search: the same board.
	plain := s
	plain.TargetYield, plain.DesignMargin = nil, m.DesignMargin
	p, err := synth.Synthesize(context.Background(), plain)
	require.NoError(t, err)
	require.Equal(t, d.MonteCarlo.Yield, p.MonteCarlo.Yield)
	require.Equal(t, d.Response.RealizedDB, p.Response.RealizedDB)

	// The echoed spec parses back and designs the same board.
	echo, err := json.Marshal(d.Spec)
	require.NoError(t, err)
	s2, err := synth.ParseSpecBytes(echo)
	require.NoError(t, err)
	d2, err := synth.Synthesize(context.Background(), s2)
	require.NoError(t, err)
	require.Equal(t, d.Spec.DesignMargin, d2.Spec.DesignMargin)
	require.Equal(t, d.MonteCarlo.Yield, d2.MonteCarlo.Yield)
	require.Len(t, d2.MarginSearch.Steps, 1)
}
