package web

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/explore"
)

// post sends body to path on h and decodes the JSON answer.
func post(t *testing.T, h http.Handler, path string, body []byte) (int, map[string]any) {
	t.Helper()
	req := httptest.NewRequest(http.MethodPost, "http://localhost"+path, bytes.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	var out map[string]any
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &out), rec.Body.String())
	return rec.Code, out
}

// designFigures reads a candidate's figures from design JSON d as
// INTERFACE.md names its fields: counts over the sections, the largest
// op-amp needs, the noise, step and Monte Carlo figures, and the group
// delay's spread over the passband from response.group_delay_s (a
// lowpass's from 0 Hz, an open band up to 100 × its edge).
func designFigures(t *testing.T, d map[string]any) map[string]any {
	spec := d["spec"].(map[string]any)
	out := map[string]any{
		"approximation": spec["approximation"], "order": d["order"], "topology": spec["topology"],
		"resistor_series": spec["resistor_series"], "design_margin": spec["design_margin"],
		"meets_mask": d["meets_mask"], "built_meets_mask": d["built"].(map[string]any)["meets_mask"],
		"yield": nil, "sampled_rms_v": nil, "settling_s": d["step"].(map[string]any)["settling_s"],
	}
	if mc, ok := d["montecarlo"].(map[string]any); ok {
		out["yield"] = mc["yield"]
	}
	if n, ok := d["noise"].(map[string]any); ok {
		out["sampled_rms_v"] = n["sampled_rms_v"]
	}
	opamps, parts := 0.0, 0.0
	var gbw, slew any
	for _, s := range d["sections"].([]any) {
		sec := s.(map[string]any)
		opamps += float64(len(sec["opamps"].([]any)))
		parts += float64(len(sec["components"].([]any)))
		needs := sec["opamp_needs"].(map[string]any)
		if g, ok := needs["gbw_hz"].(float64); ok && (gbw == nil || g > gbw.(float64)) {
			gbw = g
		}
		if v, ok := needs["slew_v_per_s"].(float64); ok && (slew == nil || v > slew.(float64)) {
			slew = v
		}
	}
	out["opamps"], out["passive_parts"], out["gbw_needed_hz"], out["slew_needed_v_per_s"] = opamps, parts, gbw, slew

	var pass []float64
	switch p := spec["passband_hz"].(type) {
	case []any:
		for _, v := range p {
			pass = append(pass, v.(float64))
		}
	case float64:
		pass = []float64{p}
	}
	in := func(f float64) bool {
		switch spec["response"] {
		case "highpass":
			return f >= pass[0] && f <= 100*pass[0]
		case "bandpass":
			return f >= pass[0] && f <= pass[1]
		case "bandstop":
			return f <= pass[0] || (f >= pass[1] && f <= 100*pass[1])
		}
		return f <= pass[0]
	}
	resp := d["response"].(map[string]any)
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, f := range resp["freq_hz"].([]any) {
		if in(f.(float64)) {
			g := resp["group_delay_s"].([]any)[i].(float64)
			lo, hi = math.Min(lo, g), math.Max(hi, g)
		}
	}
	out["group_delay_spread_s"] = hi - lo
	return out
}

// TestExplorePermalinksDesignTheSame: every candidate of two example
// specs, explored through POST /api/v1/explore, has the figures that the
// design of its permalink (the page's query read as the page reads it,
// sent to POST /api/v1/design) gives, field for field and exactly.
func TestExplorePermalinksDesignTheSame(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("designs every candidate twice: a few seconds")
	}
	for _, name := range []string{"loadcell-bridge.json", "tilt-rejection-highpass.json"} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			spec, err := os.ReadFile(filepath.Join("..", "testdata", "examples", name))
			require.NoError(t, err)
			h := New(nil, Deps{MaxCostMs: -1})
			code, res := post(t, h, "/api/v1/explore", spec)
			require.Equal(t, http.StatusOK, code, res)
			cands := res["candidates"].([]any)
			require.GreaterOrEqual(t, len(cands), 9)
			for i, c := range cands {
				cand := c.(map[string]any)
				u, err := url.Parse(cand["permalink"].(string))
				require.NoError(t, err)
				require.Equal(t, "/design", u.Path)
				vals, _, err := parseQuery(u.Query())
				require.NoError(t, err, "candidate %d: the page refuses its permalink", i)
				body, err := specJSON(vals)
				require.NoError(t, err)
				code, d := post(t, h, "/api/v1/design", body)
				require.Equal(t, http.StatusOK, code, d)
				for field, want := range designFigures(t, d) {
					require.Equal(t, want, cand[field], "candidate %d (%s order %v): %s", i, cand["approximation"], cand["order"], field)
				}
			}
		})
	}
}

// TestExploreCacheCancel: the exploration a request started stops when
// its only waiter leaves (leave returns once the run has stopped), is not
// kept, and the next request runs it again; a finished one is kept and
// shared.
func TestExploreCacheCancel(t *testing.T) {
	t.Parallel()
	c := newExploreCache(4, ProgressTimeout)
	plan, err := explore.NewPlan(context.Background(), []byte(`{"passband_hz": 1000, "stopband_hz": 1500, "stopband_atten_db": 60, "montecarlo": {"trials": 5000}}`))
	require.NoError(t, err)
	res, f := c.join(context.Background(), plan)
	require.Nil(t, res)
	c.leave(f)
	require.True(t, f.finished())
	require.ErrorIs(t, f.err, context.Canceled)
	c.mu.Lock()
	require.Empty(t, c.entries)
	require.Empty(t, c.inflight)
	c.mu.Unlock()

	small, err := explore.NewPlan(context.Background(), []byte(`{"passband_hz": 1000, "order": 2, "topology": "sallen-key", "resistor_series": "E96"}`))
	require.NoError(t, err)
	first, err := c.result(context.Background(), small)
	require.NoError(t, err)
	again, err := c.result(context.Background(), small)
	require.NoError(t, err)
	require.Same(t, first, again, "the second request is served from the cache")
}

// TestExploreQueryIsThePagesQuery: explore.Query flattens every kind of
// spec field (nested objects with "_", band edges and windows as "lo,hi",
// true as 1, strings, numbers as written) so that the page reads it back
// to the same spec as the JSON.
func TestExploreQueryIsThePagesQuery(t *testing.T) {
	t.Parallel()
	for _, spec := range []string{
		`{"response": "bandpass", "approximation": "chebyshev1", "passband_hz": [2000, 40000], "stopband_hz": [400, 200000],
		  "passband_ripple_db": 0.5, "stopband_atten_db": 45, "gain_db": 6, "gain_tolerance_db": 1,
		  "topology": "multiple-feedback", "resistor_series": "E48", "capacitor_series": "E6", "values": "series",
		  "resistor_range_ohm": [2000, 100000], "capacitor_range_farad": [1e-10, 1e-6],
		  "opamp": {"gbw_hz": 2e7, "dc_gain_db": 110, "noise_v_per_rthz": 4e-9, "noise_a_per_rthz": 1e-12, "slew_v_per_s": 2e7},
		  "tolerance": {"resistor_pct": 0.5, "capacitor_pct": 2, "distribution": "gaussian", "gbw_pct": 10},
		  "montecarlo": {"trials": 300, "seed": 4}, "target_yield": 0.9,
		  "converter": {"bits": 16, "sample_rate_hz": 500000, "full_scale_vpp": 4, "output_rate_hz": 250000, "alias_atten_db": 80},
		  "design_margin": {"passband_db": 0.1, "stopband_db": 2}}`,
		`{"passband_hz": 1000, "order": 4, "opamp": {"ideal": true}, "tolerance": {"resistor_pct": 0}}`,
		`{"passband_hz": 20000, "converter": {"bits": 16, "sample_rate_hz": 192000, "full_scale_vpp": 4}}`,
	} {
		want, err := synth.ParseSpecBytes([]byte(spec))
		require.NoError(t, err)
		dec := json.NewDecoder(strings.NewReader(spec))
		dec.UseNumber()
		var raw map[string]any
		require.NoError(t, dec.Decode(&raw))
		q, err := url.ParseQuery(explore.Query(raw))
		require.NoError(t, err)
		_, got, err := parseQuery(q)
		require.NoError(t, err, explore.Query(raw))
		require.Equal(t, want, got)
	}
}
