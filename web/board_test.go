package web_test

import (
	"encoding/json"
	"net/http"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestBoardOnThePageAndTheAPI checks that a single-supply design carries
// the board figures from the API and the page alike: the swing of every
// section and the DC error in the JSON, the "On its rails" panel with a
// row per op-amp node, the swing check in the checks list (synth's words),
// the reference on the schematics, and the supply fields in the form.
func TestBoardOnThePageAndTheAPI(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	spec := `{"approximation": "butterworth", "passband_hz": 1000, "stopband_hz": 4000, "stopband_atten_db": 40,
	  "topology": "sallen-key", "supply": {"positive_v": 5}, "signal_vpp": 4,
	  "opamp": {"gbw_hz": 1e6, "offset_v": 1e-3, "bias_a": 100e-9, "output_headroom_v": 0.1, "output_resistance_ohm": 50}}`
	rec := do(t, h, http.MethodPost, "/api/v1/design", spec, "Content-Type", "application/json")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	var d struct {
		Sections []struct {
			Swing struct {
				Nodes []struct {
					Node  string     `json:"node"`
					PeakV [2]float64 `json:"peak_v"`
				} `json:"nodes"`
				HeadroomV *float64 `json:"headroom_v"`
			} `json:"swing"`
		} `json:"sections"`
		DC *struct {
			OutputOffsetV float64 `json:"output_offset_v"`
		} `json:"dc"`
		Checks []struct {
			ID   string `json:"id"`
			Text string `json:"text"`
		} `json:"checks"`
	}
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &d))
	require.NotNil(t, d.DC)
	require.NotZero(t, d.DC.OutputOffsetV)
	rows := 0
	for _, s := range d.Sections {
		require.NotNil(t, s.Swing.HeadroomV)
		rows += len(s.Swing.Nodes)
	}
	require.Positive(t, rows)
	var swingText string
	for _, c := range d.Checks {
		if c.ID == "swing" {
			swingText = c.Text
		}
	}
	require.NotEmpty(t, swingText)

	q := "/design?passband_hz=1000&stopband_hz=4000&topology=sallen-key&supply_positive_v=5&signal_vpp=4" +
		"&opamp_gbw_hz=1e6&opamp_offset_v=1m&opamp_bias_a=100n&opamp_output_headroom_v=0.1&opamp_output_resistance_ohm=50"
	rec = do(t, h, http.MethodGet, q, "")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	page := rec.Body.String()
	require.Contains(t, page, `data-testid="board"`)
	table := page[strings.Index(page, `data-testid="swing-table"`):]
	table = table[:strings.Index(table, "</table>")]
	require.Equal(t, rows, strings.Count(table, "<tr")-1, "one row per node, after the header")
	require.Contains(t, htmlUnescape(page), swingText, "the page shows synth's sentence")
	require.Contains(t, page, `class="label ground-label"`, "the schematics show the reference")
	require.Contains(t, page, `name="supply_positive_v"`)
}
