package synth_test

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

func TestParseSpecDefaults(t *testing.T) {
	t.Parallel()
	// Defaults as INTERFACE.md's spec table states them.
	s, err := synth.ParseSpecBytes([]byte(`{"passband_hz": 1000, "stopband_hz": 3000}`))
	require.NoError(t, err)
	require.Equal(t, synth.Lowpass, s.Response)
	require.Equal(t, "butterworth", s.Approximation)
	require.Equal(t, []float64{1000}, s.PassbandHz)
	require.Equal(t, []float64{3000}, s.StopbandHz)
	require.InDelta(t, 1.0, s.PassbandRippleDB, 0)
	require.InDelta(t, 40.0, s.StopbandAttenDB, 0)
	require.Equal(t, 0, s.Order)
	require.InDelta(t, 0.0, s.GainDB, 0)
	require.Equal(t, "auto", s.Topology)
	require.Equal(t, "E96", s.ResistorSeries)
	require.Equal(t, "E12", s.CapacitorSeries)
	// The op-amp's noise and slew defaults: INTERFACE.md's verification fields.
	require.Equal(t, synth.OpAmp{GBWHz: 10e6, DCGainDB: 100, NoiseVPerRtHz: 10e-9, NoiseAPerRtHz: 1e-12, SlewVPerS: 10e6}, s.OpAmp)
	// Tolerance defaults (INTERFACE.md): the resistor series' usual tolerance
	// (E96: 1 %, IEC 60063's pairing) and 5 % for capacitors.
	require.Equal(t, synth.Tolerance{ResistorPct: 1, CapacitorPct: 5, Distribution: "uniform"}, s.Tolerance)
	require.Equal(t, synth.MonteCarlo{Seed: 1}, s.MonteCarlo)
	require.Nil(t, s.Converter)
	require.Equal(t, "series", s.Values)

	// Bessel's default Amax is 10·log10(2) dB, its −3 dB point (INTERFACE.md).
	b, err := synth.ParseSpecBytes([]byte(`{"approximation": "bessel", "passband_hz": 1000, "order": 4}`))
	require.NoError(t, err)
	require.InDelta(t, 3.0102999566398121, b.PassbandRippleDB, 1e-15)

	v, err := synth.ParseSpecBytes([]byte(`{"passband_hz": 1000, "order": 2, "tolerance": {"resistor_pct": 0.1, "distribution": "gaussian"},
		"montecarlo": {"trials": 500, "seed": 7}, "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 4},
		"opamp": {"ideal": true, "noise_v_per_rthz": 4e-9}}`))
	require.NoError(t, err)
	require.Equal(t, synth.Tolerance{ResistorPct: 0.1, CapacitorPct: 5, Distribution: "gaussian"}, v.Tolerance)
	require.Equal(t, synth.MonteCarlo{Trials: 500, Seed: 7}, v.MonteCarlo)
	// output_rate_hz defaults to sample_rate_hz; alias_atten_db to 6.02·16 + 1.76
	// = 98.08 dB (INTERFACE.md, common practice).
	require.Equal(t, &synth.Converter{Bits: 16, SampleRateHz: 48000, FullScaleVpp: 4, OutputRateHz: 48000, AliasAttenDB: 6.02*16 + 1.76}, v.Converter)
	require.Equal(t, synth.OpAmp{Ideal: true, NoiseVPerRtHz: 4e-9, NoiseAPerRtHz: 1e-12, SlewVPerS: 10e6}, v.OpAmp)

	bp, err := synth.ParseSpecBytes([]byte(`{"response": "bandpass", "passband_hz": [900, 1100], "stopband_hz": [500, 2000],
		"opamp": {"ideal": true}, "values": "exact", "resistor_series": "e24"}`))
	require.NoError(t, err)
	require.Equal(t, []float64{900, 1100}, bp.PassbandHz)
	require.True(t, bp.OpAmp.Ideal)
	require.Equal(t, "E24", bp.ResistorSeries)
}

func TestParseSpecErrors(t *testing.T) {
	t.Parallel()
	// Each row: a bad spec, the field the error must name, and a fragment
	// of the reason. The rules are those of INTERFACE.md and issue 2.
	tests := []struct {
		name   string
		spec   string
		field  string
		reason string
	}{
		{"empty", ``, "json", "empty"},
		{"blank", "  \n", "json", "empty"},
		{"not an object", `[1, 2]`, "json", "object"},
		{"malformed", `{"passband_hz": 1000,`, "json", ""},
		{"trailing data", `{"passband_hz": 1000, "order": 3} {}`, "json", "after"},
		{"unknown field", `{"passband_hz": 1000, "order": 3, "cutoff": 5}`, "cutoff", "unknown field"},
		{"missing passband", `{"stopband_hz": 1000}`, "passband_hz", "required"},
		{"null passband", `{"passband_hz": null, "order": 2}`, "passband_hz", "required"},
		{"passband string", `{"passband_hz": "1k", "order": 2}`, "passband_hz", "number"},
		{"negative passband", `{"passband_hz": -1, "order": 2}`, "passband_hz", "1 mHz"},
		{"passband too high", `{"passband_hz": 2e8, "order": 2}`, "passband_hz", "100 MHz"},
		{"passband too low", `{"passband_hz": 1e-4, "order": 2}`, "passband_hz", "1 mHz"},
		{"pair for lowpass", `{"passband_hz": [1, 2], "order": 2}`, "passband_hz", "single number"},
		{"single for bandpass", `{"response": "bandpass", "passband_hz": 1000, "order": 2}`, "passband_hz", "[lo, hi]"},
		{"band edges unordered", `{"response": "bandpass", "passband_hz": [2000, 1000], "order": 2}`, "passband_hz", "lo must be below hi"},
		{"no stopband, no order", `{"passband_hz": 1000}`, "stopband_hz", "required unless order"},
		{"lowpass stopband below", `{"passband_hz": 1000, "stopband_hz": 800}`, "stopband_hz", "must be above passband_hz for a lowpass (got 800 <= 1000)"},
		{"highpass stopband above", `{"response": "highpass", "passband_hz": 1000, "stopband_hz": 1200}`, "stopband_hz", "below passband_hz"},
		{"bandpass stop inside", `{"response": "bandpass", "passband_hz": [1000, 2000], "stopband_hz": [1100, 3000]}`, "stopband_hz", "lower edge"},
		{"bandpass stop hi inside", `{"response": "bandpass", "passband_hz": [1000, 2000], "stopband_hz": [500, 1900]}`, "stopband_hz", "upper edge"},
		{"bandstop stop outside", `{"response": "bandstop", "passband_hz": [1000, 2000], "stopband_hz": [900, 1500]}`, "stopband_hz", "lower edge"},
		{"bandstop stop hi outside", `{"response": "bandstop", "passband_hz": [1000, 2000], "stopband_hz": [1200, 2100]}`, "stopband_hz", "upper edge"},
		{"ripple zero", `{"passband_hz": 1000, "order": 2, "passband_ripple_db": 0}`, "passband_ripple_db", "above 0"},
		{"ripple above atten", `{"passband_hz": 1000, "stopband_hz": 2000, "passband_ripple_db": 50, "stopband_atten_db": 40}`, "passband_ripple_db", "below stopband_atten_db"},
		{"atten too high", `{"passband_hz": 1000, "stopband_hz": 2000, "stopband_atten_db": 250}`, "stopband_atten_db", "200"},
		{"order fraction", `{"passband_hz": 1000, "order": 2.5}`, "order", "whole number"},
		{"order negative", `{"passband_hz": 1000, "order": -1}`, "order", "0 to 20"},
		{"order too high", `{"passband_hz": 1000, "order": 21}`, "order", "0 to 20"},
		{"gain too high", `{"passband_hz": 1000, "order": 2, "gain_db": 61}`, "gain_db", "-40 to +60"},
		{"gain too low", `{"passband_hz": 1000, "order": 2, "gain_db": -41}`, "gain_db", "-40 to +60"},
		{"bad response", `{"response": "allpass", "passband_hz": 1000, "order": 2}`, "response", "one of"},
		{"bad approximation", `{"approximation": "gauss", "passband_hz": 1000, "order": 2}`, "approximation", "one of"},
		{"bad topology", `{"topology": "ladder", "passband_hz": 1000, "order": 2}`, "topology", "one of"},
		{"bad series", `{"resistor_series": "E7", "passband_hz": 1000, "order": 2}`, "resistor_series", "one of"},
		{"bad cap series", `{"capacitor_series": 12, "passband_hz": 1000, "order": 2}`, "capacitor_series", "string"},
		{"bad values", `{"values": "rounded", "passband_hz": 1000, "order": 2}`, "values", "one of"},
		{"gbw zero", `{"passband_hz": 1000, "order": 2, "opamp": {"gbw_hz": 0}}`, "opamp.gbw_hz", "1 kHz"},
		{"dc gain low", `{"passband_hz": 1000, "order": 2, "opamp": {"dc_gain_db": 3}}`, "opamp.dc_gain_db", "20 to 200"},
		{"opamp unknown", `{"passband_hz": 1000, "order": 2, "opamp": {"slew": 3}}`, "opamp.slew", "unknown field"},
		{"ideal with gbw", `{"passband_hz": 1000, "order": 2, "opamp": {"ideal": true, "gbw_hz": 1e6}}`, "opamp.ideal", "ideal"},
		{"tolerance unknown", `{"passband_hz": 1000, "order": 2, "tolerance": {"inductor_pct": 5}}`, "tolerance.inductor_pct", "unknown field"},
		{"tolerance negative", `{"passband_hz": 1000, "order": 2, "tolerance": {"resistor_pct": -1}}`, "tolerance.resistor_pct", "0 to 50"},
		{"gbw spread", `{"passband_hz": 1000, "order": 2, "tolerance": {"gbw_pct": 80}}`, "tolerance.gbw_pct", "0 to 50"},
		{"tolerance distribution", `{"passband_hz": 1000, "order": 2, "tolerance": {"distribution": "triangular"}}`, "tolerance.distribution", "one of"},
		{"too many trials", `{"passband_hz": 1000, "order": 2, "montecarlo": {"trials": 100001}}`, "montecarlo.trials", "at most 100000"},
		{"supply without positive", `{"passband_hz": 1000, "order": 2, "supply": {"negative_v": 0}}`, "supply.positive_v", "required"},
		{"supply inverted", `{"passband_hz": 1000, "order": 2, "supply": {"positive_v": 0, "negative_v": 5}}`, "supply.positive_v", "above negative_v"},
		{"reference outside", `{"passband_hz": 1000, "order": 2, "supply": {"positive_v": 5, "reference_v": 6}}`, "supply.reference_v", "between the rails"},
		{"rail too high", `{"passband_hz": 1000, "order": 2, "supply": {"positive_v": 400}}`, "supply.positive_v", "±100 V"},
		{"supply unknown", `{"passband_hz": 1000, "order": 2, "supply": {"ground_v": 0}}`, "supply.ground_v", "unknown field"},
		{"signal zero", `{"passband_hz": 1000, "order": 2, "signal_vpp": 0}`, "signal_vpp", "above 0"},
		{"headroom eats the swing", `{"passband_hz": 1000, "order": 2, "supply": {"positive_v": 3.3}, "opamp": {"output_headroom_v": 1.7}}`, "opamp.output_headroom_v", "no output swing"},
		{"input headroom eats the range", `{"passband_hz": 1000, "order": 2, "supply": {"positive_v": 3.3}, "opamp": {"input_headroom_v": 2}}`, "opamp.input_headroom_v", "no input range"},
		{"offset too large", `{"passband_hz": 1000, "order": 2, "opamp": {"offset_v": 0.5}}`, "opamp.offset_v", "±0.1 V"},
		{"bias too large", `{"passband_hz": 1000, "order": 2, "opamp": {"bias_a": -0.01}}`, "opamp.bias_a", "±0.001 A"},
		{"input capacitance negative", `{"passband_hz": 1000, "order": 2, "opamp": {"input_capacitance_farad": -1e-12}}`, "opamp.input_capacitance_farad", "from 0"},
		{"output resistance huge", `{"passband_hz": 1000, "order": 2, "opamp": {"output_resistance_ohm": 1e6}}`, "opamp.output_resistance_ohm", "10000"},
		{"noise corner negative", `{"passband_hz": 1000, "order": 2, "opamp": {"noise_corner_hz": -5}}`, "opamp.noise_corner_hz", "from 0"},
		{"fractional trials", `{"passband_hz": 1000, "order": 2, "montecarlo": {"trials": 2.5}}`, "montecarlo.trials", "whole number"},
		{"converter incomplete", `{"passband_hz": 1000, "order": 2, "converter": {"bits": 16}}`, "converter", "needs bits"},
		{"converter bits", `{"passband_hz": 1000, "order": 2, "converter": {"bits": 40, "sample_rate_hz": 48000, "full_scale_vpp": 4}}`, "converter.bits", "1 to 32"},
		{"opamp noise", `{"passband_hz": 1000, "order": 2, "opamp": {"noise_v_per_rthz": -1e-9}}`, "opamp.noise_v_per_rthz", "from 0"},
		{"opamp slew", `{"passband_hz": 1000, "order": 2, "opamp": {"slew_v_per_s": 0}}`, "opamp.slew_v_per_s", "above 0"},
		{"huge number", `{"passband_hz": 1e400, "order": 2}`, "passband_hz", ""},
		{"resistor window single", `{"passband_hz": 1000, "order": 2, "resistor_range_ohm": [1000]}`, "resistor_range_ohm", "[lo, hi]"},
		{"resistor window narrow", `{"passband_hz": 1000, "order": 2, "resistor_range_ohm": [1000, 2000]}`, "resistor_range_ohm", "10 times"},
		{"resistor window reversed", `{"passband_hz": 1000, "order": 2, "resistor_range_ohm": [1e5, 1e3]}`, "resistor_range_ohm", "10 times"},
		{"capacitor window huge", `{"passband_hz": 1000, "order": 2, "capacitor_range_farad": [1e-9, 10]}`, "capacitor_range_farad", "0.1 F"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.Error(t, err)
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "error %v is not a FieldError", err)
			require.Equal(t, tc.field, fe.Field, "error: %v", err)
			require.Contains(t, fe.Reason, tc.reason)
			require.True(t, strings.HasPrefix(err.Error(), "spec: "+tc.field+": "), err.Error())
			require.NotContains(t, err.Error(), "\n")
		})
	}
}

func TestParseSpecOversized(t *testing.T) {
	t.Parallel()
	big := `{"passband_hz": 1000, "order": 2` + strings.Repeat(" ", synth.MaxSpecBytes) + `}`
	_, err := synth.ParseSpec(strings.NewReader(big))
	fe, ok := synth.IsFieldError(err)
	require.True(t, ok)
	require.Equal(t, "json", fe.Field)
	require.Contains(t, fe.Reason, "1 MiB")
}
