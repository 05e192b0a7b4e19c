package web_test

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web"
)

// heavyBase is the costliest shape of spec at the documented limits: an
// order-20 bandstop of notch stages under state-variable.
const heavyBase = `{"response": "bandstop", "approximation": "butterworth", "order": 20, "passband_hz": [900, 1100], "topology": "state-variable"`

// heavySpec is heavyBase with trials Monte Carlo trials.
func heavySpec(trials int) string {
	b, _ := json.Marshal(trials)
	return heavyBase + `, "montecarlo": {"trials": ` + string(b) + `, "seed": 1}}`
}

// TestCostRefused: a spec over the server's cost bound is refused at
// parse time with the error beside the field that dominates, naming the
// most trials that would pass, in the shape of each route.
func TestCostRefused(t *testing.T) {
	t.Parallel()
	h := web.New(nil, web.Deps{})
	query := "response=bandstop&approximation=butterworth&order=20&passband_hz=900,1100&topology=state-variable&montecarlo_trials=100000"
	for _, tc := range []struct {
		name, method, target, body string
		status                     int
		want                       []string
	}{
		{"api design", "POST", "/api/v1/design", heavySpec(synth.MaxTrials), 400,
			[]string{`"field":"montecarlo.trials"`, "at most", "trials for this design on this server"}},
		{"api export", "POST", "/api/v1/export?as=bom-csv", heavySpec(synth.MaxTrials), 400,
			[]string{`"field":"montecarlo.trials"`, "CPU-seconds"}},
		{"page", "GET", "/design?" + query, "", 400,
			[]string{`data-testid="error-montecarlo_trials"`, "trials for this design on this server"}},
		{"progress", "GET", "/design/progress?" + query, "", 200,
			[]string{"event: error", `"field":"montecarlo_trials"`, "at most"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			req := httptest.NewRequest(tc.method, tc.target, strings.NewReader(tc.body))
			req.Host = "localhost"
			rec := httptest.NewRecorder()
			start := time.Now()
			h.ServeHTTP(rec, req)
			require.Equal(t, tc.status, rec.Code, rec.Body.String())
			require.Less(t, time.Since(start), 2*time.Second, "refused before any design")
			for _, w := range tc.want {
				require.Contains(t, rec.Body.String(), w)
			}
		})
	}
}

// TestCostFairness sends heavy requests (the most trials the bound
// allows) that fill the heavy lane and its queue, then a cheap one: the
// cheap one is answered while the heavy ones still run. The heavy ones
// are then given up; the test is bounded by its context.
func TestCostFairness(t *testing.T) {
	t.Parallel()
	srv := httptest.NewServer(web.New(nil, web.Deps{Workers: 2})) // on 127.0.0.1
	defer srv.Close()
	spec, err := synth.ParseSpecBytes([]byte(heavySpec(1)))
	require.NoError(t, err)
	trials := synth.MaxTrialsWithin(spec, web.DefaultMaxCostMs)
	require.Positive(t, trials)

	ctx, cancel := context.WithTimeout(t.Context(), 30*time.Second)
	defer cancel()
	heavyCtx, stopHeavy := context.WithCancel(ctx)
	const heavy = 3
	var heavyDone atomic.Int32
	var wg sync.WaitGroup
	for range heavy {
		wg.Go(func() {
			defer heavyDone.Add(1)
			req, _ := http.NewRequestWithContext(heavyCtx, "POST", srv.URL+"/api/v1/design", strings.NewReader(heavySpec(trials)))
			req.Header.Set("Content-Type", "application/json")
			if res, err := http.DefaultClient.Do(req); err == nil {
				_, _ = io.Copy(io.Discard, res.Body)
				res.Body.Close()
			}
		})
	}
	time.Sleep(200 * time.Millisecond) // the heavy ones take their lane

	cheapCtx, cancelCheap := context.WithTimeout(ctx, 10*time.Second)
	defer cancelCheap()
	req, err := http.NewRequestWithContext(cheapCtx, "POST", srv.URL+"/api/v1/design", bytes.NewReader([]byte(smallSpec)))
	require.NoError(t, err)
	res, err := http.DefaultClient.Do(req)
	require.NoError(t, err)
	_, _ = io.Copy(io.Discard, res.Body)
	res.Body.Close()
	require.Equal(t, http.StatusOK, res.StatusCode)
	require.Zero(t, heavyDone.Load(), "the cheap request is answered while the heavy ones run")

	stopHeavy()
	wg.Wait()
}
