package web

import (
	"net/url"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

func TestSpecJSON(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		query string
		want  string // the JSON object, by hand from the mapping rules in the package comment
		field string // the field of the error, when one is expected
	}{
		{name: "empty fields are absent", query: "passband_hz=1000&stopband_hz=&order=", want: `{"passband_hz":1000}`},
		{name: "band edges", query: "passband_hz=18000,%2022000", want: `{"passband_hz":[18000,22000]}`},
		{name: "op-amp object", query: "opamp_gbw_hz=20e6&opamp_dc_gain_db=110", want: `{"opamp":{"gbw_hz":20000000,"dc_gain_db":110}}`},
		{name: "ideal op-amp", query: "opamp_ideal=1", want: `{"opamp":{"ideal":true}}`},
		{name: "unticked", query: "opamp_ideal=0", want: `{"opamp":{"ideal":false}}`},
		{name: "choices pass as text", query: "response=BandPass&values=exact", want: `{"response":"BandPass","values":"exact"}`},
		// 4.7k = 4700 and 100n = 1e-7: the metric prefixes as decimal exponents.
		{name: "metric prefixes", query: "passband_hz=4.7k&capacitor_range_farad=100p,1u", want: `{"passband_hz":4700,"capacitor_range_farad":[1e-10,0.000001]}`},
		{name: "a window is always a pair", query: "resistor_range_ohm=1000", want: `{"resistor_range_ohm":[1000]}`},
		{name: "three edges go to synth", query: "passband_hz=1,2,3", want: `{"passband_hz":[1,2,3]}`},
		{name: "order as typed", query: "order=2.5", want: `{"order":2.5}`},
		{name: "verification objects", query: "tolerance_resistor_pct=0.1&tolerance_capacitor_pct=1&tolerance_distribution=gaussian&montecarlo_trials=1000&montecarlo_seed=7" +
			"&converter_bits=16&converter_sample_rate_hz=48k&converter_full_scale_vpp=4&opamp_noise_v_per_rthz=4n&opamp_noise_a_per_rthz=1p&opamp_slew_v_per_s=20M",
			want: `{"tolerance":{"resistor_pct":0.1,"capacitor_pct":1,"distribution":"gaussian"},"montecarlo":{"trials":1000,"seed":7},` +
				`"converter":{"bits":16,"sample_rate_hz":48000,"full_scale_vpp":4},"opamp":{"noise_v_per_rthz":4e-9,"noise_a_per_rthz":1e-12,"slew_v_per_s":20000000}}`},
		{name: "converter input fields flatten with _", query: "converter_architecture=sar&converter_input=single-ended&converter_sampling_capacitance_farad=30p&converter_acquisition_time_s=290n&converter_input_common_mode_v=2.5",
			want: `{"converter":{"architecture":"sar","sampling_capacitance_farad":3e-11,"acquisition_time_s":2.9e-7,"input_common_mode_v":2.5}}`},
		{name: "default converter choices alone are no converter", query: "converter_architecture=other&converter_input=single-ended", want: `{}`},
		{name: "sampling capacitor not a number", query: "converter_sampling_capacitance_farad=big", field: "converter.sampling_capacitance_farad"},
		{name: "delay equaliser flattens with _", query: "delay_equalizer_max_spread_pct=2", want: `{"delay_equalizer":{"max_spread_pct":2}}`},
		{name: "delay equaliser not a number", query: "delay_equalizer_max_spread_pct=flat", field: "delay_equalizer.max_spread_pct"},
		{name: "trials not a number", query: "montecarlo_trials=many", field: "montecarlo.trials"},
		{name: "not a number", query: "passband_hz=fast", field: "passband_hz"},
		{name: "infinity", query: "stopband_atten_db=Inf", field: "stopband_atten_db"},
		{name: "empty edge", query: "stopband_hz=100,", field: "stopband_hz"},
		{name: "nested field named as synth names it", query: "opamp_gbw_hz=x", field: "opamp.gbw_hz"},
		{name: "checkbox nonsense", query: "opamp_ideal=perhaps", field: "opamp.ideal"},
		// Issue 9: numbers in the JSON number syntax (RFC 8259 section 6),
		// with the form's metric prefixes; Go's extra syntax is refused.
		{name: "json number", query: "passband_hz=1024", want: `{"passband_hz":1024}`},
		{name: "json exponent", query: "passband_hz=1.024E3&gain_db=-0.5&stopband_atten_db=4e%2B1", want: `{"passband_hz":1024,"gain_db":-0.5,"stopband_atten_db":40}`},
		{name: "zero", query: "order=0", want: `{"order":0}`},
		{name: "prefix on a json number", query: "passband_hz=1.5k", want: `{"passband_hz":1500}`},
		{name: "hexadecimal float", query: "passband_hz=0x1p10", field: "passband_hz"},
		{name: "hexadecimal integer", query: "montecarlo_trials=0x10", field: "montecarlo.trials"},
		{name: "underscores", query: "passband_hz=1_000", field: "passband_hz"},
		{name: "underscores with a prefix", query: "passband_hz=1_0k", field: "passband_hz"},
		{name: "underscores in a band edge", query: "response=bandpass&passband_hz=1000,2_000", field: "passband_hz"},
		{name: "leading plus", query: "gain_db=%2B3", field: "gain_db"},
		{name: "leading point", query: "gain_db=.5", field: "gain_db"},
		{name: "trailing point", query: "gain_db=5.", field: "gain_db"},
		{name: "leading zero", query: "order=05", field: "order"},
		{name: "nan", query: "gain_db=NaN", field: "gain_db"},
		{name: "infinity spelt out", query: "gain_db=infinity", field: "gain_db"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			q, err := url.ParseQuery(tc.query)
			require.NoError(t, err)
			vals, err := readQuery(q)
			require.NoError(t, err)
			got, err := specJSON(vals)
			if tc.field != "" {
				fe, ok := synth.IsFieldError(err)
				require.True(t, ok, "want a field error, got %v", err)
				require.Equal(t, tc.field, fe.Field)
				return
			}
			require.NoError(t, err)
			require.JSONEq(t, tc.want, string(got))
		})
	}
}

func TestReadQuery(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, query, field string
	}{
		{"known", "passband_hz=1&adc_bits=3", ""},
		{"unknown", "passband_hz=1&zeta=2&alpha=1", "alpha"}, // the first unknown in sorted order
		{"repeated", "order=1&order=2", "order"},
		{"button only where tolerated", "fill=1", "fill"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			q, err := url.ParseQuery(tc.query)
			require.NoError(t, err)
			_, err = readQuery(q)
			if tc.field == "" {
				require.NoError(t, err)
				return
			}
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok)
			require.Equal(t, tc.field, fe.Field)
		})
	}
}

func TestCanonicalQuery(t *testing.T) {
	t.Parallel()
	vals := formValues{"stopband_hz": "4000", "passband_hz": " 1000 ", "order": "", "adc_bits": "16", "fill": "1", "response": "lowpass", "capacitor_range_farad": "100p,1u"}
	// Form order, empty values and the helper's button dropped, commas kept.
	require.Equal(t, "response=lowpass&passband_hz=1000&stopband_hz=4000&capacitor_range_farad=100p,1u&adc_bits=16", canonicalQuery(vals))
}

func TestPractitionerReason(t *testing.T) {
	t.Parallel()
	tests := []struct{ in, want string }{
		{"must be above passband_hz for a lowpass (got 800 <= 1000)", "must be above the passband edge for a lowpass (got 800 <= 1000)"},
		{"must be below stopband_atten_db (got 50 >= 40)", "must be below the stopband attenuation (got 50 >= 40)"},
		{"an ideal op-amp takes no gbw_hz or dc_gain_db", "an ideal op-amp takes no gain-bandwidth product or open-loop gain"},
		{"the edges in mask.design_passband_hz", "the edges in mask.design_passband_hz"}, // not a spec field: kept
		{"the lowest order that meets the mask", "the lowest order that meets the mask"},
		{"must be below montecarlo.trials", "must be below the number of trials"},
		{"needs bits, sample_rate_hz and full_scale_vpp", "needs bits, the converter's sample rate and the converter's full scale"},
		{"more than opamp.slew_v_per_s", "more than the op-amp's slew rate"},
		{"delay_equalizer.max_spread_pct: must be from 0.01 to 100 %", "the group-delay spread: must be from 0.01 to 100 %"},
	}
	for _, tc := range tests {
		require.Equal(t, tc.want, practitionerReason(tc.in))
	}
}

func TestFormat(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		got  string
		want string
	}{
		{"kHz", si(15915.494, "Hz", 4), "15.92 kHz"},
		{"rounds up a prefix", si(999.96, "Hz", 4), "1 kHz"},
		{"plain", si(47, "Ω", 3), "47 Ω"},
		{"nF", si(2.2e-8, "F", 4), "22 nF"},
		{"pF", si(3.3e-10, "F", 4), "330 pF"},
		{"negative", si(-0.0015, "V", 3), "−1.5 mV"},
		{"zero", si(0, "Hz", 3), "0 Hz"},
		{"MHz", si(1e7, "Hz", 3), "10 MHz"},
		{"db", db(-0.004, false), "0.00 dB"},
		{"signed db", db(3.216, true), "+3.22 dB"},
		{"negative db", db(-1.5, true), "−1.50 dB"},
		{"pct", pct(-0.00084), "−0.08 %"},
		{"plain number", plain(180000), "180000"},
		{"plain fraction", plain(110.12), "110.12"},
	}
	for _, tc := range tests {
		require.Equal(t, tc.want, tc.got, tc.name)
	}
}
