package web_test

import (
	"encoding/json"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestDifferentialExample takes the differential sigma-delta example
// (testdata/examples/geophone-differential-sigma-delta.json) through the
// API and the page: the API's sections are fully differential with the
// common-mode figure; the page offers the topology and the converter
// input, shows the common-mode check's sentence and draws each stage's
// two halves.
func TestDifferentialExample(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile(filepath.Join("..", "testdata", "examples", "geophone-differential-sigma-delta.json"))
	require.NoError(t, err)
	h, logs := newHandler(t)

	rec := do(t, h, "POST", "/api/v1/design", string(data))
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	var d struct {
		Sections []struct {
			Topology       string `json:"topology"`
			TopologyReason string `json:"topology_reason"`
		} `json:"sections"`
		MonteCarlo struct {
			CommonMode *struct {
				Points []struct {
					WorstDB float64 `json:"worst_db"`
				} `json:"points"`
			} `json:"common_mode"`
		} `json:"montecarlo"`
	}
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &d))
	require.NotEmpty(t, d.Sections)
	for _, s := range d.Sections {
		require.True(t, strings.HasPrefix(s.Topology, "fully-differential"), s.Topology)
	}
	require.Contains(t, d.Sections[0].TopologyReason, "converts the single-ended source")
	require.NotNil(t, d.MonteCarlo.CommonMode)

	var obj map[string]any
	require.NoError(t, json.Unmarshal(data, &obj))
	q := url.Values{}
	flatten(q, "", obj)
	rec = do(t, h, "GET", "/design?"+q.Encode(), "")
	require.Equal(t, http.StatusOK, rec.Code)
	page := rec.Body.String()
	for _, want := range []string{`<option value="fully-differential">`, `<option value="differential" selected>`, `data-testid="check-common-mode"`} {
		require.True(t, strings.Contains(page, want), "the page has %s", want)
	}
	require.Regexp(t, `rejection at worst|reject a common-mode input`, testid(page, "check-common-mode"))
	require.Equal(t, len(d.Sections), strings.Count(page, "half B, the mirror"))
	require.False(t, strings.Contains(page, "could not be drawn"))

	// A notch design for a differential converter is built single-ended
	// and converted after its last section; an unbuildable differential
	// SAR is still refused, naming the field.
	rec = do(t, h, "POST", "/api/v1/design", `{"response": "lowpass", "approximation": "elliptic", "order": 4, "passband_hz": 1000,
	  "stopband_atten_db": 40, "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 2, "input": "differential"}}`)
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	d.Sections = nil
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &d))
	require.Contains(t, d.Sections[len(d.Sections)-1].TopologyReason, "single-ended to differential conversion follows")
	rec = do(t, h, "POST", "/api/v1/design", `{"response": "lowpass", "approximation": "elliptic", "order": 4, "passband_hz": 1000,
	  "stopband_atten_db": 40, "converter": {"bits": 16, "sample_rate_hz": 1e6, "full_scale_vpp": 2, "input": "differential", "architecture": "sar"}}`)
	require.Equal(t, http.StatusBadRequest, rec.Code)
	var e struct{ Error, Field string }
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &e))
	require.Equal(t, "converter.input", e.Field)
	require.NotContains(t, logs.String(), "level=ERROR")
}

// TestConvertedDifferentialExample takes the elliptic differential
// sigma-delta example (testdata/examples/vibration-elliptic-differential-sigma-delta.json),
// whose notch sections have no fully differential form, through the API
// and the page: the sections are single-ended, the last one's reason
// names the conversion after it, the common-mode figure is of that
// conversion, and the page draws the last stage as the section above the
// conversion's two halves.
func TestConvertedDifferentialExample(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile(filepath.Join("..", "testdata", "examples", "vibration-elliptic-differential-sigma-delta.json"))
	require.NoError(t, err)
	h, logs := newHandler(t)

	rec := do(t, h, "POST", "/api/v1/design", string(data))
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	var d struct {
		Sections []struct {
			Topology       string `json:"topology"`
			TopologyReason string `json:"topology_reason"`
		} `json:"sections"`
		MonteCarlo struct {
			CommonMode *struct {
				Stage int `json:"stage"`
			} `json:"common_mode"`
		} `json:"montecarlo"`
	}
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &d))
	require.NotEmpty(t, d.Sections)
	for _, s := range d.Sections {
		require.False(t, strings.HasPrefix(s.Topology, "fully-differential"), s.Topology)
	}
	require.Contains(t, d.Sections[0].TopologyReason, "no fully differential form here")
	require.Contains(t, d.Sections[len(d.Sections)-1].TopologyReason, "single-ended to differential conversion follows")
	require.NotNil(t, d.MonteCarlo.CommonMode)
	require.Equal(t, len(d.Sections), d.MonteCarlo.CommonMode.Stage)

	var obj map[string]any
	require.NoError(t, json.Unmarshal(data, &obj))
	q := url.Values{}
	flatten(q, "", obj)
	rec = do(t, h, "GET", "/design?"+q.Encode(), "")
	require.Equal(t, http.StatusOK, rec.Code)
	page := rec.Body.String()
	require.Regexp(t, `matched halves of stage \d+&#39;s conversion|halves of stage \d+'s conversion`, testid(page, "check-common-mode"))
	require.Equal(t, 1, strings.Count(page, "half B, the mirror"))
	require.Contains(t, page, "stage, the single-ended section")
	require.Contains(t, page, "conversion to differential — half A: from section to ")
	require.False(t, strings.Contains(page, "could not be drawn"))
	require.NotContains(t, logs.String(), "level=ERROR")
}
