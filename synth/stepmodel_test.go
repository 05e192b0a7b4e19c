package synth_test

import (
	"context"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// TestStepModelCheck checks when the step-model verdict appears: where
// the step takes the stages' loading to first order and the estimate of
// what that leaves out is above synth.StepModelLimitPct of the step (a
// multiple-feedback highpass chain with 200 Ω on a 1 MHz op-amp, whose
// step ngspice puts 0.6 V from the design's on a 2 V step:
// cmd/polewright TestStepLoadingAgainstNgspice), and not where first
// order is close (an elliptic on one-op-amp notches, 50 Ω on 10 MHz,
// within 0.2 % of ngspice there) or there is no loading (no output
// resistance). Scenarios of our own.
func TestStepModelCheck(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name, spec string
		want       bool
	}{
		{"multiple-feedback highpass chain, 200 Ω on 1 MHz", `{"response": "highpass", "approximation": "butterworth", "passband_hz": 1000,
		  "stopband_hz": 300, "stopband_atten_db": 60, "topology": "multiple-feedback", "opamp": {"gbw_hz": 1e6, "output_resistance_ohm": 200},
		  "supply": {"positive_v": 10, "negative_v": -10, "reference_v": 0}, "signal_vpp": 2}`, true},
		{"elliptic on one-op-amp notches, 50 Ω on 10 MHz", `{"approximation": "elliptic", "order": 8, "passband_hz": 10000,
		  "passband_ripple_db": 1, "stopband_atten_db": 60, "supply": {"positive_v": 15, "negative_v": -15, "reference_v": 0}, "signal_vpp": 3,
		  "opamp": {"gbw_hz": 10e6, "input_capacitance_farad": 3e-12, "output_resistance_ohm": 50}}`, false},
		{"the same highpass without output resistance", `{"response": "highpass", "approximation": "butterworth", "passband_hz": 1000,
		  "stopband_hz": 300, "stopband_atten_db": 60, "topology": "multiple-feedback", "opamp": {"gbw_hz": 1e6},
		  "supply": {"positive_v": 10, "negative_v": -10, "reference_v": 0}, "signal_vpp": 2}`, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			got, ok := checkOf(d, synth.CheckStepModel)
			if !tc.want {
				require.False(t, ok, "no step-model check")
				return
			}
			require.True(t, ok, "a step-model check")
			require.False(t, got.OK)
			require.Equal(t, synth.SeverityWarning, got.Severity)
			require.Equal(t, "%", got.Unit)
			require.Greater(t, got.Figure, float64(synth.StepModelLimitPct))
			require.Contains(t, got.Text, ".tran")
		})
	}
}
