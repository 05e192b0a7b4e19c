package noise

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

// The quadrature against closed forms: the resonance
// S(f) = 1/((1 − u²)² + (u/Q)²), u = f/f0, integrates over [0, ∞) to
// (π/2)·Q·f0 (from ∫₀^∞ |H(jω)|² dω = πω0Q/2 for
// H = ω0²/(s² + sω0/Q + ω0²), textbook); [0, 10⁴·f0] misses
// f0/(3·10¹²) of it. The Lorentzian 1/(1 + u²) integrates over [a, b] to
// f0·(atan(b/f0) − atan(a/f0)).
func TestIntegrateLog(t *testing.T) {
	t.Parallel()
	const f0 = 1234.5
	for _, q := range []float64{0.5, 0.7071, 2, 10, 50, 200} {
		for _, breaks := range [][]float64{{f0}, {f0 * 1.3}} {
			if q > 20 && breaks[0] != f0 {
				continue // a narrow peak needs its breakpoint
			}
			eval := func(f float64, per []float64) (float64, error) {
				u := f / f0
				s := 1 / ((1-u*u)*(1-u*u) + u*u/(q*q))
				per[0] += s / 4
				per[1] += 3 * s / 4
				return s, nil
			}
			got, per, err := integrateLog(0, 1e4*f0, breaks, 2, eval)
			require.NoError(t, err)
			want := math.Pi / 2 * q * f0
			require.InEpsilon(t, want, got, 1e-6, "Q = %v, breaks %v", q, breaks)
			require.InEpsilon(t, want/4, per[0], 1e-6)
			require.InEpsilon(t, 3*want/4, per[1], 1e-6)
		}
	}
	for _, band := range [][2]float64{{1, 10}, {10, 1e5}, {0, 1e7}, {2e3, 2.5e3}} {
		eval := func(f float64, per []float64) (float64, error) {
			u := f / f0
			return 1 / (1 + u*u), nil
		}
		got, _, err := integrateLog(band[0], band[1], []float64{f0}, 0, eval)
		require.NoError(t, err)
		want := f0 * (math.Atan(band[1]/f0) - math.Atan(band[0]/f0))
		require.InEpsilon(t, want, got, 1e-9, "band %v", band)
	}
}
