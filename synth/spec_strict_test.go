package synth_test

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// TestSpecEchoRoundTrips feeds every example's echoed design.spec back
// (issue 9): design it, take the JSON spec field of the design, parse it
// again, design again; the spec and the design JSON must be the same. A
// few specs of our own add what the examples lack: an ideal op-amp, a
// stopband derived from the converter, Bessel's default ripple.
func TestSpecEchoRoundTrips(t *testing.T) {
	t.Parallel()
	files, err := filepath.Glob("../testdata/examples/*.json")
	require.NoError(t, err)
	require.NotEmpty(t, files)
	specs := map[string][]byte{
		"ideal op-amp":              []byte(`{"passband_hz": 1000, "stopband_hz": 4000, "opamp": {"ideal": true}}`),
		"stopband from a converter": []byte(`{"passband_hz": 20000, "converter": {"bits": 16, "sample_rate_hz": 96000, "full_scale_vpp": 4}}`),
		"converter and own atten":   []byte(`{"passband_hz": 20000, "stopband_atten_db": 60, "converter": {"bits": 16, "sample_rate_hz": 96000, "full_scale_vpp": 4}}`),
		"bessel, order given":       []byte(`{"approximation": "bessel", "passband_hz": 5000, "order": 4, "gain_tolerance_db": 0.5, "montecarlo": {"trials": 50}}`),
	}
	for _, file := range files {
		data, err := os.ReadFile(file)
		require.NoError(t, err)
		specs[filepath.Base(file)] = data
	}
	for name, data := range specs {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			s, err := synth.ParseSpecBytes(data)
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			first, err := json.Marshal(d)
			require.NoError(t, err)
			var echo struct {
				Spec json.RawMessage `json:"spec"`
			}
			require.NoError(t, json.Unmarshal(first, &echo))
			s2, err := synth.ParseSpecBytes(echo.Spec)
			require.NoError(t, err, "the echoed spec %s", echo.Spec)
			require.Equal(t, s, s2)
			require.Equal(t, s.StopbandFromConverter(), s2.StopbandFromConverter())
			d2, err := synth.Synthesize(context.Background(), s2)
			require.NoError(t, err)
			second, err := json.Marshal(d2)
			require.NoError(t, err)
			require.JSONEq(t, string(first), string(second))
		})
	}
}

// TestSpecEchoIdealOpAmp: the echo of an ideal op-amp has no gbw_hz or
// dc_gain_db, and parses back to the same spec.
func TestSpecEchoIdealOpAmp(t *testing.T) {
	t.Parallel()
	for _, in := range []string{
		`{"passband_hz": 1000, "order": 2, "opamp": {"ideal": true}}`,
		`{"passband_hz": 1000, "order": 2, "opamp": {"ideal": true, "noise_v_per_rthz": 4e-9, "slew_v_per_s": 1e6}}`,
		`{"passband_hz": 1000, "order": 2, "opamp": {"ideal": false, "gbw_hz": 1e6}}`,
		`{"passband_hz": 1000, "order": 2}`,
	} {
		s, err := synth.ParseSpecBytes([]byte(in))
		require.NoError(t, err)
		echo, err := json.Marshal(s)
		require.NoError(t, err)
		var m struct {
			OpAmp map[string]any `json:"opamp"`
		}
		require.NoError(t, json.Unmarshal(echo, &m))
		if s.OpAmp.Ideal {
			require.NotContains(t, m.OpAmp, "gbw_hz")
			require.NotContains(t, m.OpAmp, "dc_gain_db")
		} else {
			require.Contains(t, m.OpAmp, "gbw_hz")
			require.Contains(t, m.OpAmp, "dc_gain_db")
		}
		s2, err := synth.ParseSpecBytes(echo)
		require.NoError(t, err, "echo %s", echo)
		require.Equal(t, s, s2)
	}
}

// TestSpecStrictInput: duplicate keys, case-variant keys, quoted numbers
// and long unknown names are field errors naming the field (issue 9);
// the rows beside each are just inside the rule and pass.
func TestSpecStrictInput(t *testing.T) {
	t.Parallel()
	const base = `"passband_hz": 1000, "order": 2`
	long := strings.Repeat("x", 500000)
	tests := []struct {
		name   string
		spec   string
		field  string // "" when the spec is accepted
		reason string
	}{
		{"distinct keys", `{` + base + `, "gain_db": 1}`, "", ""},
		{"duplicate key", `{` + base + `, "gain_db": 1, "gain_db": 2}`, "gain_db", "given twice"},
		{"duplicate passband", `{"passband_hz": 1000, "passband_hz": 2000, "order": 2}`, "passband_hz", "given twice"},
		{"duplicate nested", `{` + base + `, "opamp": {"gbw_hz": 1e6, "gbw_hz": 2e6}}`, "opamp.gbw_hz", "given twice"},
		{"duplicate in montecarlo", `{` + base + `, "montecarlo": {"trials": 1, "seed": 2, "trials": 3}}`, "montecarlo.trials", "given twice"},
		{"same key in two objects", `{` + base + `, "design_margin": {"passband_db": 0.1}, "tolerance": {"gbw_pct": 1}}`, "", ""},
		{"duplicate design margin", `{` + base + `, "design_margin": {"stopband_db": 1, "stopband_db": 1}}`, "design_margin.stopband_db", "given twice"},
		{"case variant", `{` + base + `, "Gain_db": 1}`, "Gain_db", `did you mean "gain_db"`},
		{"case variant overriding", `{"passband_hz": 1000, "Passband_Hz": 2000, "order": 2}`, "Passband_Hz", "case-sensitive"},
		{"case variant nested", `{` + base + `, "opamp": {"GBW_hz": 1e6}}`, "opamp.GBW_hz", `did you mean "gbw_hz"`},
		{"case variant object", `{` + base + `, "OpAmp": {"ideal": true}}`, "OpAmp", `did you mean "opamp"`},
		{"case variant converter", `{` + base + `, "converter": {"Bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 4}}`, "converter.Bits", "case-sensitive"},
		{"number order", `{"passband_hz": 1000, "order": 5}`, "", ""},
		{"quoted order", `{"passband_hz": 1000, "order": "5"}`, "order", "JSON number, not a quoted string"},
		{"quoted trials", `{` + base + `, "montecarlo": {"trials": "10"}}`, "montecarlo.trials", "quoted"},
		{"quoted seed", `{` + base + `, "montecarlo": {"seed": "7"}}`, "montecarlo.seed", "quoted"},
		{"quoted bits", `{` + base + `, "converter": {"bits": "16", "sample_rate_hz": 48000, "full_scale_vpp": 4}}`, "converter.bits", "quoted"},
		{"quoted gain", `{` + base + `, "gain_db": "3"}`, "gain_db", "quoted"},
		{"quoted passband", `{"passband_hz": "1000", "order": 2}`, "passband_hz", "quoted"},
		{"quoted band edge", `{"response": "bandpass", "passband_hz": [1000, "2000"], "order": 2}`, "passband_hz", "quoted"},
		{"quoted window edge", `{` + base + `, "resistor_range_ohm": ["1e3", 1e5]}`, "resistor_range_ohm", "quoted"},
		{"quoted margin", `{` + base + `, "design_margin": {"passband_db": "0.1"}}`, "design_margin.passband_db", "quoted"},
		{"null number is absent", `{` + base + `, "gain_db": null}`, "", ""},
		{"unknown key of 40", `{` + base + `, "` + strings.Repeat("y", 40) + `": 1}`, strings.Repeat("y", 40), "unknown field"},
		{"unknown key of 41 cut", `{` + base + `, "` + strings.Repeat("y", 41) + `": 1}`, strings.Repeat("y", 40) + "…", "unknown field"},
		{"huge unknown key cut", `{` + base + `, "` + long + `": 1}`, strings.Repeat("x", 40) + "…", "unknown field"},
		{"huge nested unknown key cut", `{` + base + `, "opamp": {"` + long + `": 1}}`, "opamp." + strings.Repeat("x", 40) + "…", "unknown field"},
		{"huge duplicate key cut", `{` + base + `, "` + long + `": 1, "` + long + `": 1}`, strings.Repeat("x", 40) + "…", "unknown field"},
		{"empty key", `{` + base + `, "": 1}`, `""`, "unknown field"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := synth.ParseSpecBytes([]byte(tc.spec))
			if tc.field == "" {
				require.NoError(t, err)
				return
			}
			fe, ok := synth.IsFieldError(err)
			require.True(t, ok, "error %v is not a FieldError", err)
			require.Equal(t, tc.field, fe.Field)
			require.Contains(t, fe.Reason, tc.reason)
			require.True(t, strings.HasPrefix(err.Error(), "spec: "+tc.field+": "), err.Error())
			require.Less(t, len(err.Error()), 1000, "the error is short")
		})
	}
}
