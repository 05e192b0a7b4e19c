package synth_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// TestTwoIntegratorGainTakenUp: in designs whose auto stages include
// two-integrator notches (gain a capacitor ratio), another stage takes up
// the difference, so with exact values and ideal op-amps the chain, by the
// circuit model's nodal analysis (circuit.Chain.TransferFunctions), is the
// design's ideal transfer function to 1e-9, and no node before the output
// peaks above it (PeakGainDB ≤ 0, the gain distribution's rule). The
// cases: the studio anti-alias filter (the notch's gain 3.8 dB up, taken
// up by the first-order stage before it), an elliptic-8 lowpass (the
// notch's gain put below its section's so that the state-variable stage
// after it takes it up) and an order-6 Chebyshev II bandstop (two
// notches on the loop, whose only taker is the one-op-amp notch between
// them).
func TestTwoIntegratorGainTakenUp(t *testing.T) {
	t.Parallel()
	studio := baseSpec(synth.Lowpass, "elliptic")
	studio.PassbandHz, studio.StopbandHz, studio.PassbandRippleDB, studio.StopbandAttenDB = []float64{20000}, []float64{172000}, 0.05, 100
	studio.Tolerance.ResistorPct, studio.Tolerance.CapacitorPct = 1, 5
	ell8 := baseSpec(synth.Lowpass, "elliptic")
	ell8.Order, ell8.PassbandHz = 8, []float64{1000}
	bs := baseSpec(synth.Bandstop, "chebyshev2")
	bs.Order, bs.PassbandHz = 3, []float64{300, 3000}
	for _, tc := range []struct {
		name string
		s    synth.Spec
	}{{"studio", studio}, {"elliptic-8", ell8}, {"bandstop-6", bs}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := tc.s
			s.Values, s.OpAmp.Ideal = "exact", true
			d := synthesize(t, s)
			tin := 0
			for _, sec := range d.Sections {
				if sec.Topology == "two-integrator-notch" {
					tin++
					require.Contains(t, sec.TopologyReason, "takes up the difference")
				}
				require.LessOrEqual(t, sec.PeakGainDB, 1e-6)
			}
			require.Positive(t, tin, "a two-integrator notch in the design")
			ch, err := d.Chain()
			require.NoError(t, err)
			ch.Model = circuit.Model{Ideal: true}
			tfs, err := ch.TransferFunctions()
			require.NoError(t, err)
			h := d.TransferFunction()
			worst := 0.0
			for _, f := range d.Response.FreqHz {
				want := h.AtOmega(2 * math.Pi * f)
				if cmplx.Abs(want) < 1e-6*d.Gain {
					continue
				}
				worst = max(worst, cmplx.Abs(tfs.AtHz(f)-want)/cmplx.Abs(want))
			}
			t.Logf("%s: %d two-integrator notches, largest relative difference %.3g", tc.name, tin, worst)
			require.Less(t, worst, 1e-9)
		})
	}
}
