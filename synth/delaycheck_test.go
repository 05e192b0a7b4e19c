package synth_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestDelaySpreadCheck checks the delay-spread check and the design's
// delay_equalizer figures against the group delay computed here from the
// design's poles and zeros (τ(ω) = Σ_poles −σ/(σ² + (ω − ωp)²) −
// Σ_zeros −σz/(σz² + (ω − ωz)²), the derivative of the phase of a
// zero-pole product, written from its definition) on a dense linear grid
// of the passband from 0 Hz.
func TestDelaySpreadCheck(t *testing.T) {
	t.Parallel()
	for _, spec := range []string{
		`{"passband_hz": 1000, "order": 4, "delay_equalizer": {"max_spread_pct": 2}}`,
		`{"approximation": "chebyshev1", "passband_hz": 1000, "order": 5, "passband_ripple_db": 0.5, "delay_equalizer": {"max_spread_pct": 5}}`,
	} {
		d := boardDesignOf(t, spec)
		require.NotNil(t, d.DelayEqualizer)
		c, ok := checkOf(d, "delay-spread")
		require.True(t, ok)
		require.True(t, c.OK)
		tau := func(w float64) float64 {
			var s float64
			for _, p := range d.Poles {
				s += -p[0] / (p[0]*p[0] + (w-p[1])*(w-p[1]))
			}
			for _, z := range d.Zeros {
				s -= -z[0] / (z[0]*z[0] + (w-z[1])*(w-z[1]))
			}
			return s
		}
		lo, hi, sum := math.Inf(1), math.Inf(-1), 0.0
		const n = 20001
		for i := range n {
			v := tau(2 * math.Pi * d.Spec.PassbandHz[0] * float64(i) / (n - 1))
			lo, hi, sum = math.Min(lo, v), math.Max(hi, v), sum+v
		}
		spread := 100 * (hi - lo) / (sum / n)
		require.InDelta(t, spread, c.Figure, 0.01*spread+1e-3, spec)
		require.LessOrEqual(t, spread, d.Spec.DelayEqualizer.MaxSpreadPct*1.001, spec)
	}
}
