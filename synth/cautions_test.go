package synth_test

import (
	"context"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// cautionsOf designs spec and returns its safety cautions by id.
func cautionsOf(t *testing.T, spec string) (*synth.Design, map[string]synth.Check) {
	t.Helper()
	s, err := synth.ParseSpecBytes([]byte(spec))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	out := map[string]synth.Check{}
	for _, c := range d.Checks {
		if strings.HasPrefix(c.ID, "safety-") {
			require.False(t, c.OK, "a caution is never OK")
			require.Equal(t, synth.SeverityWarning, c.Severity)
			require.Contains(t, c.Text, "local electrical codes")
			require.Contains(t, c.Text, "licensed or qualified professional")
			out[c.ID] = c
		}
	}
	return d, out
}

// TestVoltageCaution checks the caution at its threshold, 30 Vpp (±15 V
// rails, common practice), just inside and just outside, at the output
// and at the input of an attenuating filter: input swing = full scale /
// 10^(gain/20) (closed form).
func TestVoltageCaution(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name                 string
		fullScaleVpp, gainDB float64
		wantVpp              float64 // 0: no caution
	}{
		{"output just inside", 29.9, 0, 0},
		{"output just outside", 30.1, 0, 30.1},
		// 10 / 10^(−9/20) = 28.18 Vpp; 10 / 10^(−10/20) = 31.62 Vpp.
		{"input just inside", 10, -9, 0},
		{"input just outside", 10, -10, 10 / math.Pow(10, -10.0/20)},
		// The case: 100 Vpp at the input.
		{"100 Vpp at the input", 1, -40, 100},
		{"no converter, no level", 0, -40, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			conv := ""
			if tc.fullScaleVpp > 0 {
				conv = fmt.Sprintf(`, "converter": {"bits": 12, "sample_rate_hz": 100000, "full_scale_vpp": %g}`, tc.fullScaleVpp)
			}
			d, got := cautionsOf(t, fmt.Sprintf(`{"order": 2, "passband_hz": 1000, "gain_db": %g%s}`, tc.gainDB, conv))
			c, ok := got[synth.CheckSafetyVoltage]
			if tc.wantVpp == 0 {
				require.False(t, ok, "no caution: %+v", c)
				return
			}
			require.True(t, ok)
			require.InEpsilon(t, tc.wantVpp, c.Figure, 1e-9)
			require.Equal(t, float64(synth.LowVoltageRailsVpp), c.Limit)
			require.Equal(t, "Vpp", c.Unit)
			vpp, _, _, ok := d.SignalSwingVpp()
			require.True(t, ok)
			require.Equal(t, c.Figure, vpp)
		})
	}
}

// TestSignalSwingStagePeak checks that a stage whose output peaks above
// the passband gain sets the swing: full scale · 10^(peak/20). The
// headroom ordering keeps every peak at or below 0 dB in the designs
// synth makes, so the peak is set by hand: 20·log10 2 dB doubles the
// swing (closed form).
func TestSignalSwingStagePeak(t *testing.T) {
	t.Parallel()
	d, _ := cautionsOf(t, `{"approximation": "chebyshev1", "order": 6, "passband_hz": 1000, "passband_ripple_db": 3,
		"converter": {"bits": 12, "sample_rate_hz": 100000, "full_scale_vpp": 20}}`)
	vpp, _, at, ok := d.SignalSwingVpp()
	require.True(t, ok)
	require.Equal(t, 20.0, vpp, "no stage peaks above the output")
	require.Zero(t, at)

	peaked := *d
	peaked.Sections = append([]synth.Section(nil), d.Sections...)
	peaked.Sections[1].PeakGainDB = 20 * math.Log10(2)
	vpp, where, at, ok := peaked.SignalSwingVpp()
	require.True(t, ok)
	require.InEpsilon(t, 40, vpp, 1e-12)
	require.Equal(t, 2, at)
	require.Contains(t, where, "stage 2")
}

// TestMainsCaution checks which stopped bands hold 50 Hz, 60 Hz or a
// harmonic up to the 40th (IEC 61000-3-2's range, typed from memory):
// the band edges just around each, the 40th harmonic of 60 Hz (2400 Hz)
// and the 41st (2460 Hz, no caution), and no caution for a lowpass.
func TestMainsCaution(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		stopHz [2]float64
		want   []float64
	}{
		{"50 Hz", [2]float64{48, 52}, []float64{50}},
		{"60 Hz", [2]float64{57, 63}, []float64{60}},
		{"between 50 and 60", [2]float64{50.5, 59.5}, nil},
		{"100 Hz, second of 50", [2]float64{95, 105}, []float64{100}},
		{"100 and 120 Hz", [2]float64{90, 130}, []float64{100, 120}},
		{"40th of 60", [2]float64{2395, 2405}, []float64{2400}},
		{"41st of 60", [2]float64{2455, 2465}, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			lo, hi := tc.stopHz[0], tc.stopHz[1]
			spec := fmt.Sprintf(`{"response": "bandstop", "passband_hz": [%g, %g], "stopband_hz": [%g, %g], "passband_ripple_db": 3, "stopband_atten_db": 20,
				"resistor_range_ohm": [1000, 10000000]}`, lo*0.8, hi*1.25, lo, hi)
			d, got := cautionsOf(t, spec)
			require.Equal(t, tc.want, d.MainsInStopband())
			c, ok := got[synth.CheckSafetyMains]
			require.Equal(t, tc.want != nil, ok)
			if ok {
				require.Equal(t, tc.want[0], c.Figure)
				require.Equal(t, "Hz", c.Unit)
			}
		})
	}
	d, got := cautionsOf(t, `{"passband_hz": 45, "stopband_hz": 50, "approximation": "elliptic", "stopband_atten_db": 40,
		"resistor_range_ohm": [1000, 10000000]}`)
	require.Nil(t, d.MainsInStopband(), "a lowpass removes no band")
	require.NotContains(t, got, synth.CheckSafetyMains)
}
