package noise_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
)

// TestFlickerIntegral checks the 1/f noise against its closed form: an
// ideal unity follower (no resistor, gain 1 at every frequency) passes the
// op-amp's voltage noise en²·(1 + fc/f) unchanged, whose integral over
// [f1, f2] is en²·((f2 − f1) + fc·ln(f2/f1)) (the 1/f integral, written
// here from the density's definition). A band from 0 Hz starts at the
// flicker limit, 0.01 Hz by default.
func TestFlickerIntegral(t *testing.T) {
	t.Parallel()
	follower := circuit.Chain{Model: circuit.Model{Ideal: true}, Stages: []circuit.Stage{{
		Topology: "follower",
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: circuit.In, Minus: "out", Out: "out"}},
		Out:      "out",
	}}}
	const en = 10e-9
	for _, tc := range []struct {
		name           string
		cornerHz       float64
		loHz, hiHz     float64
		fromHz, wantLo float64 // fromHz: the option; wantLo: where the integral starts
	}{
		{"white", 0, 0, 1000, 0, 0},
		{"corner 100 Hz, 1 Hz to 1 kHz", 100, 1, 1000, 0, 1},
		{"corner 3 kHz from 0 Hz", 3000, 0, 20000, 0, noise.DefaultFlickerFromHz},
		{"corner 10 Hz from 0 Hz, 0.1 Hz limit", 10, 0, 5, 0.1, 0.1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			on := noise.OpAmpNoise{VoltageVPerRtHz: en, CornerHz: tc.cornerHz, FlickerFromHz: tc.fromHz}
			grid := []float64{1, 10, 100, 1000}
			r, err := noise.Output(follower, on, 300, grid, [2]float64{tc.loHz, tc.hiHz})
			require.NoError(t, err)
			want := en * en * (tc.hiHz - tc.wantLo)
			if tc.cornerHz > 0 {
				want += en * en * tc.cornerHz * math.Log(tc.hiHz/tc.wantLo)
			}
			require.InDelta(t, 1, r.OutputRMSV*r.OutputRMSV/want, 1e-6)
			for i, f := range grid {
				require.InDelta(t, en*math.Sqrt(1+tc.cornerHz/f), r.OutputVPerRtHz[i], 1e-9*en, "density at %g Hz", f)
			}
		})
	}
}
