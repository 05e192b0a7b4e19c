package synth_test

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// TestConverterInputFields: the converter's architecture, input,
// sampling capacitor, acquisition time and common mode (INTERFACE.md,
// "The converter's input") are parsed and each bad value is refused with
// an error naming its field.
func TestConverterInputFields(t *testing.T) {
	t.Parallel()
	conv := func(extra string) string {
		return `{"passband_hz": 20000, "converter": {"bits": 16, "sample_rate_hz": 1000000, "full_scale_vpp": 4` + extra + `}}`
	}
	s, err := synth.ParseSpecBytes([]byte(conv(`, "architecture": "sar", "sampling_capacitance_farad": 30e-12, "acquisition_time_s": 290e-9, "input_common_mode_v": 2.5`)))
	require.NoError(t, err)
	require.Equal(t, "sar", s.Converter.Architecture)
	require.True(t, s.Converter.IsSAR())
	require.Equal(t, 30e-12, s.Converter.SamplingCapacitanceFarad)
	require.Equal(t, 290e-9, s.Converter.AcquisitionTimeS)
	require.Equal(t, 2.5, *s.Converter.InputCommonModeV)
	s, err = synth.ParseSpecBytes([]byte(conv(`, "architecture": "Sigma-Delta", "input": "single-ended"`)))
	require.NoError(t, err)
	require.Equal(t, "sigma-delta", s.Converter.Architecture)
	require.False(t, s.Converter.IsSAR())
	s, err = synth.ParseSpecBytes([]byte(conv(``)))
	require.NoError(t, err)
	require.False(t, s.Converter.IsSAR(), "the default architecture is other")
	require.False(t, s.Differential())
	s, err = synth.ParseSpecBytes([]byte(conv(`, "architecture": "sigma-delta", "input": "differential"`)))
	require.NoError(t, err)
	require.True(t, s.Differential(), "auto builds fully differential for a differential converter")

	for _, tc := range []struct{ name, spec, field, reason string }{
		{"unknown architecture", conv(`, "architecture": "flash"`), "converter.architecture", "one of"},
		{"architecture a number", conv(`, "architecture": 3`), "converter.architecture", ""},
		{"unknown input", conv(`, "input": "balanced"`), "converter.input", "one of"},
		{"differential sar", conv(`, "input": "differential", "architecture": "sar", "sampling_capacitance_farad": 30e-12, "acquisition_time_s": 290e-9`), "converter.input", "driver RC is single-ended"},
		{"differential with a single-ended topology", `{"passband_hz": 20000, "topology": "sallen-key", "converter": {"bits": 16, "sample_rate_hz": 1000000, "full_scale_vpp": 4, "input": "differential"}}`, "topology", "use fully-differential or auto"},
		{"sar without sampling capacitor", conv(`, "architecture": "sar", "acquisition_time_s": 290e-9`), "converter.sampling_capacitance_farad", "needed for a sar"},
		{"sar without acquisition time", conv(`, "architecture": "sar", "sampling_capacitance_farad": 30e-12`), "converter.acquisition_time_s", "needed for a sar"},
		{"sampling capacitor zero", conv(`, "sampling_capacitance_farad": 0`), "converter.sampling_capacitance_farad", "above 0"},
		{"sampling capacitor huge", conv(`, "sampling_capacitance_farad": 1e-3`), "converter.sampling_capacitance_farad", "0.1 pF to 1 µF"},
		{"sampling capacitor quoted", conv(`, "sampling_capacitance_farad": "30p"`), "converter.sampling_capacitance_farad", "quoted"},
		{"acquisition negative", conv(`, "acquisition_time_s": -1e-6`), "converter.acquisition_time_s", "above 0"},
		{"acquisition past the sample period", conv(`, "acquisition_time_s": 2e-6`), "converter.acquisition_time_s", "one sample period"},
		{"common mode off the rails", `{"passband_hz": 20000, "supply": {"positive_v": 5, "negative_v": 0}, "converter": {"bits": 16, "sample_rate_hz": 1000000, "full_scale_vpp": 4, "input_common_mode_v": 7}}`, "converter.input_common_mode_v", "between the rails"},
		{"common mode huge", conv(`, "input_common_mode_v": 1e3`), "converter.input_common_mode_v", "±100 V"},
		{"unknown converter field", conv(`, "sampling_cap": 1e-12`), "converter.sampling_cap", "unknown field"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.Error(t, err)
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "error %v is not a FieldError", err)
			require.Equal(t, tc.field, fe.Field, "error: %v", err)
			require.Contains(t, fe.Reason, tc.reason)
			require.True(t, strings.HasPrefix(err.Error(), "spec: "+tc.field+": "), err.Error())
		})
	}
}
