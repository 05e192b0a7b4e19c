package synth_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"
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
			tin, taken := 0, 0
			for _, sec := range d.Sections {
				if sec.Topology == "two-integrator-notch" {
					tin++
					// A notch whose capacitor ratio is its gain (to
					// rounding) has no difference to take up.
					if strings.Contains(sec.TopologyReason, "dB from the section's") {
						taken++
						require.Contains(t, sec.TopologyReason, "takes up the difference")
					} else {
						require.NotContains(t, sec.TopologyReason, "takes up")
					}
				}
				require.LessOrEqual(t, sec.PeakGainDB, 1e-6)
			}
			require.Positive(t, tin, "a two-integrator notch in the design")
			require.Positive(t, taken, "a gain taken up")
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

// TestUntakenTwoIntegratorGain: an order-6 Chebyshev II bandstop (700 Hz
// to 1.4 kHz) whose three sections auto first puts on the two-integrator
// loop. The middle one's gain, a capacitor ratio (0.45 dB off), has no
// other stage to take it up (its neighbours are two-integrator notches
// too) and is beyond maxUntakenGainDB (0.25 dB), so it is built as a
// state-variable stage and says why; the last notch's gain is then taken
// up by that stage. Every stage that keeps a gain error untaken says so.
func TestUntakenTwoIntegratorGain(t *testing.T) {
	t.Parallel()
	s := baseSpec(synth.Bandstop, "chebyshev2")
	s.Order, s.PassbandHz = 3, []float64{700, 1400}
	d := synthesize(t, s)
	tops := make([]string, len(d.Sections))
	for i, sec := range d.Sections {
		tops[i] = sec.Topology
	}
	require.Equal(t, []string{"two-integrator-notch", "state-variable", "two-integrator-notch"}, tops)
	reason := d.Sections[1].TopologyReason
	const lead = "but no stage can take up its gain, a capacitor ratio "
	i := strings.Index(reason, lead)
	require.GreaterOrEqual(t, i, 0, reason)
	var offDB float64
	_, err := fmt.Sscanf(reason[i+len(lead):], "%g dB off", &offDB)
	require.NoError(t, err)
	require.Greater(t, math.Abs(offDB), 0.25, "beyond maxUntakenGainDB")
	require.Contains(t, d.Sections[1].TopologyReason, "to take up stage 3's")
	require.Contains(t, d.Sections[2].TopologyReason, "stage 2 takes up the difference")
}
