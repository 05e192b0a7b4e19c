package web_test

import (
	"context"
	"encoding/json"
	"log/slog"
	"net/http"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/explore"
	"github.com/polewright/polewright/web"
)

// exploreQuery is a small exploration: the order-2 lowpass on one
// topology and series, 5 approximations × orders 2–4, 50 trials each.
const (
	exploreQuery = "passband_hz=1000&order=2&topology=sallen-key&resistor_series=E96&montecarlo_trials=50&montecarlo_seed=2"
	exploreSpec  = `{"passband_hz": 1000, "order": 2, "topology": "sallen-key", "resistor_series": "E96", "montecarlo": {"trials": 50, "seed": 2}}`
)

type exploreJSON struct {
	Candidates []struct {
		Approximation string   `json:"approximation"`
		Order         int      `json:"order"`
		Yield         *float64 `json:"yield"`
		Permalink     string   `json:"permalink"`
	} `json:"candidates"`
	Pareto      []int `json:"pareto"`
	Recommended int   `json:"recommended"`
	Reason      string
	Objectives  []struct{ Field, Goal string } `json:"objectives"`
	Skipped     []struct{ Reason string }      `json:"skipped"`
}

// TestExploreAPI: the contract's fields, the page's table with a link to
// every candidate's permalink, and the progress stream, on one spec.
func TestExploreAPI(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	rec := do(t, h, "POST", "/api/v1/explore", exploreSpec, "Content-Type", "application/json")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Equal(t, "application/json", rec.Header().Get("Content-Type"))
	var res exploreJSON
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &res))
	// 8 approximations × orders 2, 3, 4: the Chebyshev II and elliptic
	// ones have notch sections, which Sallen-Key cannot build.
	require.Len(t, res.Candidates, 18)
	require.Len(t, res.Skipped, 6)
	require.Contains(t, res.Pareto, res.Recommended)
	require.NotEmpty(t, res.Reason)
	require.NotEmpty(t, res.Objectives)
	for _, c := range res.Candidates {
		require.True(t, strings.HasPrefix(c.Permalink, "/design?"), c.Permalink)
		require.NotNil(t, c.Yield)
	}

	page := do(t, h, "GET", "/explore?"+exploreQuery, "")
	require.Equal(t, http.StatusOK, page.Code)
	body := page.Body.String()
	require.Contains(t, body, `data-testid="candidates"`)
	require.Contains(t, body, `data-testid="plot-front-yield"`)
	require.Contains(t, body, htmlEscape(res.Reason))
	hrefs := links(body)
	for _, c := range res.Candidates {
		require.Contains(t, hrefs, c.Permalink)
	}
	// Every row's link designs: the first one's page answers.
	require.Equal(t, http.StatusOK, do(t, h, "GET", res.Candidates[0].Permalink, "").Code)

	stream := do(t, h, "GET", "/explore/progress?"+exploreQuery, "")
	require.Equal(t, http.StatusOK, stream.Code)
	require.Equal(t, "text/event-stream", stream.Header().Get("Content-Type"))
	evs := readEvents(t, stream.Body.String())
	require.NotEmpty(t, evs)
	last := evs[len(evs)-1]
	require.Equal(t, "done", last.Name, stream.Body.String())
	require.Contains(t, last.Data, `"/explore?`)
}

func htmlEscape(s string) string {
	return strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&#34;", "'", "&#39;").Replace(s)
}

// TestExploreRefusals: a spec at fault and one over the cost bound are
// answered beside the field, in the shape of each route.
func TestExploreRefusals(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	// A bound between the designs alone and the designs with their
	// trials.
	const heavy = `{"passband_hz": 1000, "order": 4, "montecarlo": {"trials": 5000}}`
	p0, err := explore.NewPlan(context.Background(), []byte(`{"passband_hz": 1000, "order": 4}`))
	require.NoError(t, err)
	p, err := explore.NewPlan(context.Background(), []byte(heavy))
	require.NoError(t, err)
	tight := web.New(slog.New(slog.DiscardHandler), web.Deps{MaxCostMs: (p0.CostMs() + p.CostMs()) / 2})
	for _, tc := range []struct {
		name   string
		h      http.Handler
		body   string
		status int
		field  string
	}{
		{"bad spec", h, `{"passband_hz": 1000, "stopband_hz": 500}`, http.StatusBadRequest, "stopband_hz"},
		{"unknown field", h, `{"passband_hz": 1000, "order": 2, "wobble": 1}`, http.StatusBadRequest, "wobble"},
		{"too many trials", h, `{"passband_hz": 1000, "order": 2, "montecarlo": {"trials": 6000}}`, http.StatusBadRequest, "montecarlo.trials"},
		{"over the server's bound", tight, heavy, http.StatusBadRequest, "montecarlo.trials"},
		{"too large", h, `{"passband_hz": 1000, "x": "` + strings.Repeat("a", web.MaxBodyBytes) + `"}`, http.StatusRequestEntityTooLarge, "json"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, tc.h, "POST", "/api/v1/explore", tc.body, "Content-Type", "application/json")
			require.Equal(t, tc.status, rec.Code, rec.Body.String())
			_, field := apiErr(t, rec.Body.Bytes())
			require.Equal(t, tc.field, field)
		})
	}
	page := do(t, h, "GET", "/explore?passband_hz=1000&stopband_hz=500", "")
	require.Equal(t, http.StatusBadRequest, page.Code)
	require.Contains(t, page.Body.String(), `data-testid="spec-form"`)
	stream := do(t, tight, "GET", "/explore/progress?passband_hz=1000&order=4&montecarlo_trials=5000", "")
	evs := readEvents(t, stream.Body.String())
	require.Len(t, evs, 1)
	require.Equal(t, "error", evs[0].Name)
	require.Contains(t, evs[0].Data, "trials")
}

// TestExploreCrossSite: the exploration routes compute, so another site's
// page cannot start them (403), as for /design.
func TestExploreCrossSite(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	for _, target := range []string{"/explore?" + exploreQuery, "/explore/progress?" + exploreQuery} {
		rec := do(t, h, "GET", target, "", "Sec-Fetch-Site", "cross-site")
		require.Equal(t, http.StatusForbidden, rec.Code, target)
	}
}

// TestDesignPageSaysTheChosenMargin: a design with target_yield says on
// its page which margin it chose and why (the sentence synth wrote).
func TestDesignPageSaysTheChosenMargin(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	rec := do(t, h, "GET", "/design?passband_hz=1000&stopband_hz=3000&order=4&montecarlo_trials=100&montecarlo_seed=1&target_yield=0.5", "")
	require.Equal(t, http.StatusOK, rec.Code)
	require.Contains(t, rec.Body.String(), "Target yield 0.5")
	api := do(t, h, "POST", "/api/v1/design", `{"passband_hz": 1000, "stopband_hz": 3000, "order": 4, "montecarlo": {"trials": 100, "seed": 1}, "target_yield": 0.5}`,
		"Content-Type", "application/json")
	require.Equal(t, http.StatusOK, api.Code)
	var d struct {
		MarginSearch struct {
			TargetYield float64 `json:"target_yield"`
			Text        string  `json:"text"`
		} `json:"margin_search"`
	}
	require.NoError(t, json.Unmarshal(api.Body.Bytes(), &d))
	require.Equal(t, 0.5, d.MarginSearch.TargetYield)
	require.Contains(t, rec.Body.String(), htmlEscape(d.MarginSearch.Text))
}
