package proto_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
)

// phaseErrorRad returns Σ arg(jω − p) − τ·ω: the deviation of the
// prototype's phase lag from the pure delay τ, computed from the poles
// alone (each term is continuous in ω for a left-half-plane pole).
func phaseErrorRad(poles []complex128, tau, w float64) float64 {
	s := 0.0
	for _, p := range poles {
		s += cmplx.Phase(complex(0, w) - p)
	}
	return s - tau*w
}

// refineExtremum returns the extreme value of f in [a, b] (a maximum when
// max is set) by ternary search.
func refineExtremum(f func(float64) float64, a, b float64, max bool) float64 {
	sign := 1.0
	if !max {
		sign = -1
	}
	for range 100 {
		m1, m2 := a+(b-a)/3, b-(b-a)/3
		if sign*f(m1) < sign*f(m2) {
			a = m1
		} else {
			b = m2
		}
	}
	return f((a + b) / 2)
}

// TestLinearPhaseEquiripple checks the defining property of the
// linear-phase prototype on its own poles, independently of how they were
// found: over [0, band] the phase lag minus the pure delay stays within
// ±δ, and it has n interior extrema, alternating in sign, each ±δ.
func TestLinearPhaseEquiripple(t *testing.T) {
	t.Parallel()
	for _, deg := range []float64{proto.MinPhaseErrorDeg, 0.05, 0.2, 0.5, proto.MaxPhaseErrorDeg} {
		for n := 1; n <= proto.LinearPhaseMaxOrder; n++ {
			t.Run(fmt.Sprintf("deg=%g/n=%d", deg, n), func(t *testing.T) {
				t.Parallel()
				const ripple = 3.0102999566398121
				h, err := proto.Lowpass(proto.LinearPhase, n, ripple, 0, proto.PhaseErrorDeg(deg))
				require.NoError(t, err)
				tau, band, err := proto.LinearPhaseDelay(n, ripple, deg)
				require.NoError(t, err)
				delta := deg * math.Pi / 180
				f := func(w float64) float64 { return phaseErrorRad(h.Poles, tau, w) }
				const m = 4000
				step := band / m
				var ext []float64
				prev, dir := f(0), 0.0
				require.InDelta(t, 0, prev, 1e-15)
				for i := 1; i <= m; i++ {
					w := step * float64(i)
					e := f(w)
					require.LessOrEqual(t, math.Abs(e), delta*(1+1e-7), "ω=%g", w)
					d := e - prev
					if dir != 0 && d*dir < 0 {
						ext = append(ext, refineExtremum(f, w-2*step, w, dir > 0))
					}
					if d != 0 {
						dir = d
					}
					prev = e
				}
				require.InDelta(t, -delta, f(band), 1e-7*delta, "the band ends where the error leaves ±δ")
				require.Equal(t, n, len(ext), "number of extrema")
				for i, e := range ext {
					want := delta
					if (n-1-i)%2 == 1 {
						want = -delta
					}
					require.InDelta(t, want, e, 1e-7*delta, "extremum %d", i+1)
				}
			})
		}
	}
}

// TestLinearPhaseRange designs order 20 (and so, by the continuation, every
// lower order) across the accepted phase ripple, log-spaced, and checks
// the normalisation of each order: the exchange settles everywhere in
// [MinPhaseErrorDeg, MaxPhaseErrorDeg], and just outside it the argument
// is refused.
func TestLinearPhaseRange(t *testing.T) {
	t.Parallel()
	const steps = 24
	lo, hi := math.Log(proto.MinPhaseErrorDeg), math.Log(proto.MaxPhaseErrorDeg)
	for i := 0; i <= steps; i++ {
		deg := math.Exp(lo + (hi-lo)*float64(i)/steps)
		switch i { // exactly the ends, not their rounded logarithms
		case 0:
			deg = proto.MinPhaseErrorDeg
		case steps:
			deg = proto.MaxPhaseErrorDeg
		}
		t.Run(fmt.Sprintf("deg=%.4g", deg), func(t *testing.T) {
			t.Parallel()
			for n := 1; n <= proto.LinearPhaseMaxOrder; n++ {
				h, err := proto.Lowpass(proto.LinearPhase, n, 3.0102999566398121, 0, proto.PhaseErrorDeg(deg))
				require.NoError(t, err, "n=%d", n)
				require.InDelta(t, 3.0102999566398121, lossDB(h, 1), 1e-9, "n=%d", n)
				// The passband maximum is 1 (the gain is set at the
				// peak when the magnitude rises before it falls).
				top, at := 0.0, 0.0
				for k := 0; k <= 400; k++ {
					if m := h.MagnitudeAt(float64(k) / 400); m > top {
						top, at = m, float64(k)/400
					}
				}
				top = refineExtremum(h.MagnitudeAt, math.Max(0, at-1.0/400), math.Min(1, at+1.0/400), true)
				require.InDelta(t, 1, top, 1e-9, "n=%d", n)
			}
		})
	}
	for _, deg := range []float64{proto.MinPhaseErrorDeg * 0.999, proto.MaxPhaseErrorDeg * 1.001, 0, math.NaN()} {
		_, err := proto.Lowpass(proto.LinearPhase, 4, 3, 0, proto.PhaseErrorDeg(deg))
		require.ErrorIs(t, err, proto.ErrBadArgument, "deg=%g", deg)
	}
}
