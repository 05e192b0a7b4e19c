package synth_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/proto"
)

// TestLinearPhaseDesignPhase checks a whole linear-phase lowpass design in
// hertz: from the design's own poles (poles_rad_s), its phase lag stays
// within ±phase_error_deg of a pure delay from DC up to the prototype's
// equiripple band edge, and touches the bound (the ripple is spent). The
// delay and the band come from the prototype scaled to passband_hz.
func TestLinearPhaseDesignPhase(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		order int
		deg   float64
	}{{3, 0.05}, {6, 0.5}, {10, 0.05}, {14, 1}} {
		t.Run(fmt.Sprintf("n=%d/deg=%g", c.order, c.deg), func(t *testing.T) {
			t.Parallel()
			const fp = 2000.0
			s := baseSpec(synth.Lowpass, "linear-phase")
			s.Order, s.PassbandHz, s.PassbandRippleDB, s.PhaseErrorDeg = c.order, []float64{fp}, synth.BesselDefaultRippleDB, c.deg
			d := synthesizeIdeal(t, s)
			tauProto, bandProto, err := proto.LinearPhaseDelay(c.order, synth.BesselDefaultRippleDB, c.deg)
			require.NoError(t, err)
			wp := 2 * math.Pi * fp
			tau, band := tauProto/wp, bandProto*wp // seconds, rad/s
			delta := c.deg * math.Pi / 180
			worst := 0.0
			for i := 0; i <= 2000; i++ {
				w := band * float64(i) / 2000
				lag := 0.0
				for _, p := range d.Poles {
					lag += cmplx.Phase(complex(0, w) - complex(p[0], p[1]))
				}
				e := lag - tau*w
				require.LessOrEqual(t, math.Abs(e), delta*(1+1e-6), "%.6g Hz", w/(2*math.Pi))
				worst = math.Max(worst, math.Abs(e))
			}
			require.Greater(t, worst, delta*0.99, "the ripple is used")
			require.True(t, d.MeetsMask)
		})
	}
}
