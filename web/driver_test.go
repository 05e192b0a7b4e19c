package web_test

import (
	"encoding/json"
	"net/http"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestDriverOnThePageAndTheAPI: a SAR design carries its driver in the
// API's JSON and on the page alike: the "Into the converter" panel with
// synth's reason, the driver checks in synth's words, the driver's parts
// on the last stage's schematic, the converter's new fields on the form;
// a differential SAR (whose driver would be single-ended) is refused with
// HTTP 400 naming converter.input.
func TestDriverOnThePageAndTheAPI(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	spec := `{"approximation": "butterworth", "passband_hz": 20000, "passband_ripple_db": 0.1, "topology": "sallen-key",
	  "converter": {"bits": 16, "sample_rate_hz": 1000000, "full_scale_vpp": 4.096, "alias_atten_db": 80,
	                "architecture": "sar", "sampling_capacitance_farad": 30e-12, "acquisition_time_s": 290e-9},
	  "opamp": {"gbw_hz": 50e6, "output_resistance_ohm": 40}}`
	rec := do(t, h, http.MethodPost, "/api/v1/design", spec, "Content-Type", "application/json")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	var d struct {
		Driver *struct {
			Components []struct {
				Ref string `json:"ref"`
			} `json:"components"`
			Reason string `json:"reason"`
		} `json:"driver"`
		Checks []struct {
			ID   string `json:"id"`
			Text string `json:"text"`
		} `json:"checks"`
	}
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &d))
	require.NotNil(t, d.Driver)
	require.Len(t, d.Driver.Components, 2)
	texts := map[string]string{}
	for _, c := range d.Checks {
		texts[c.ID] = c.Text
	}
	require.NotEmpty(t, texts["driver-settling"])
	require.NotEmpty(t, texts["driver-stability"])

	q := "/design?approximation=butterworth&passband_hz=20000&passband_ripple_db=0.1&topology=sallen-key" +
		"&converter_bits=16&converter_sample_rate_hz=1M&converter_full_scale_vpp=4.096&converter_alias_atten_db=80" +
		"&converter_architecture=sar&converter_sampling_capacitance_farad=30p&converter_acquisition_time_s=290n" +
		"&opamp_gbw_hz=50M&opamp_output_resistance_ohm=40"
	rec = do(t, h, http.MethodGet, q, "")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	page := htmlUnescape(rec.Body.String())
	require.Contains(t, page, `data-testid="driver"`)
	require.Contains(t, page, d.Driver.Reason)
	require.Contains(t, page, texts["driver-settling"])
	require.Contains(t, page, texts["driver-stability"])
	for _, c := range d.Driver.Components {
		require.Contains(t, page, ">"+c.Ref+"<", "the schematic draws %s", c.Ref)
	}
	for _, name := range []string{"converter_architecture", "converter_input", "converter_sampling_capacitance_farad", "converter_acquisition_time_s", "converter_input_common_mode_v"} {
		require.Contains(t, page, `name="`+name+`"`)
	}

	rec = do(t, h, http.MethodPost, "/api/v1/design", `{"passband_hz": 20000, "converter": {"bits": 16, "sample_rate_hz": 1000000, "full_scale_vpp": 4, "input": "differential",
		  "architecture": "sar", "sampling_capacitance_farad": 30e-12, "acquisition_time_s": 290e-9}}`,
		"Content-Type", "application/json")
	require.Equal(t, http.StatusBadRequest, rec.Code)
	var e struct{ Error, Field string }
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &e))
	require.Equal(t, "converter.input", e.Field)
}
