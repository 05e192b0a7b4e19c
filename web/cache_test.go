package web_test

import (
	"context"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync"
	"sync/atomic"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web"
)

// countingDeps are the real drawing dependencies with a synthesis that
// counts its calls.
func countingDeps(calls *atomic.Int64) web.Deps {
	deps := realDeps()
	deps.Synthesize = func(ctx context.Context, spec synth.Spec) (*synth.Design, error) {
		calls.Add(1)
		return synth.Synthesize(ctx, spec)
	}
	return deps
}

// get fetches url from srv and returns the status and body.
func get(t *testing.T, srv *httptest.Server, url string) (int, string) {
	t.Helper()
	resp, err := srv.Client().Get(srv.URL + url)
	require.NoError(t, err)
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	require.NoError(t, err)
	return resp.StatusCode, string(b)
}

// TestCacheRoundTrip follows the browser after a Monte Carlo with
// progress: the stream designs, and the permalink it ends with, the
// downloads, the API with the echoed spec and the stream again are served
// from the one computation.
func TestCacheRoundTrip(t *testing.T) {
	t.Parallel()
	var calls atomic.Int64
	srv := httptest.NewServer(web.New(nil, countingDeps(&calls)))
	t.Cleanup(srv.Close)
	query := vibrationQuery + "&montecarlo_trials=500&montecarlo_seed=3"

	status, body := get(t, srv, "/design/progress?"+query)
	require.Equal(t, http.StatusOK, status)
	evs := readEvents(t, body)
	require.NotEmpty(t, evs)
	done := evs[len(evs)-1]
	require.Equal(t, "done", done.Name, body)
	var ev struct{ URL string }
	require.NoError(t, json.Unmarshal([]byte(done.Data), &ev))
	require.Equal(t, int64(1), calls.Load())

	status, page := get(t, srv, ev.URL)
	require.Equal(t, http.StatusOK, status, page)
	require.Contains(t, page, "500")

	kinds := []string{"json", "bode-svg", "noise-svg"}
	if hasCircuit(t) {
		kinds = append(kinds, "bom", "spice")
	}
	var designJSON string
	for _, kind := range kinds {
		status, b := get(t, srv, "/download/"+kind+"?"+strings.TrimPrefix(ev.URL, "/design?"))
		require.Equal(t, http.StatusOK, status, "%s: %s", kind, b)
		if kind == "json" {
			designJSON = b
		}
	}

	// The API with the spec the design echoes is the same design.
	var echo struct {
		Spec json.RawMessage `json:"spec"`
	}
	require.NoError(t, json.Unmarshal([]byte(designJSON), &echo))
	resp, err := srv.Client().Post(srv.URL+"/api/v1/design", "application/json", strings.NewReader(string(echo.Spec)))
	require.NoError(t, err)
	_, err = io.Copy(io.Discard, resp.Body)
	require.NoError(t, err)
	require.NoError(t, resp.Body.Close())
	require.Equal(t, http.StatusOK, resp.StatusCode)

	// The stream of a stored design is done at once.
	status, body = get(t, srv, "/design/progress?"+query)
	require.Equal(t, http.StatusOK, status)
	evs = readEvents(t, body)
	require.Len(t, evs, 1, body)
	require.Equal(t, "done", evs[0].Name)

	require.Equal(t, int64(1), calls.Load(), "one computation for the stream, the page, the downloads and the API")

	// Another spec is another computation.
	status, _ = get(t, srv, "/design?"+vibrationQuery)
	require.Equal(t, http.StatusOK, status)
	require.Equal(t, int64(2), calls.Load())
}

// TestCacheConcurrentRequests: identical requests at once (pages,
// downloads, progress streams, and all of them mixed) compute once and
// share the design, which none of them changes (-race); every stream ends
// done.
func TestCacheConcurrentRequests(t *testing.T) {
	t.Parallel()
	const n = 8
	const mc = "&montecarlo_trials=200"
	tests := []struct {
		name    string
		targets []string // request i asks for targets[i%len(targets)]
	}{
		{"downloads", []string{"/download/json?" + vibrationQuery + mc}},
		{"pages", []string{"/design?" + vibrationQuery + mc}},
		{"progress streams", []string{"/design/progress?" + vibrationQuery + "&montecarlo_trials=2000"}},
		{"mixed", []string{
			"/design?" + vibrationQuery + mc, "/download/bode-svg?" + vibrationQuery + mc,
			"/download/noise-svg?" + vibrationQuery + mc, "/design/progress?" + vibrationQuery + mc,
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			targets := tc.targets
			if tc.name == "mixed" && hasCircuit(t) {
				targets = append(targets, "/download/bom?"+vibrationQuery+mc, "/download/spice?"+vibrationQuery+mc)
			}
			var calls atomic.Int64
			h := web.New(nil, countingDeps(&calls))
			recs := make([]*httptest.ResponseRecorder, n)
			var wg sync.WaitGroup
			for i := range n {
				wg.Go(func() {
					recs[i] = httptest.NewRecorder()
					h.ServeHTTP(recs[i], newRequest("GET", targets[i%len(targets)], nil))
				})
			}
			wg.Wait()
			for i, rec := range recs {
				require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
				if strings.HasPrefix(targets[i%len(targets)], "/design/progress") {
					evs := readEvents(t, rec.Body.String())
					require.NotEmpty(t, evs)
					require.Equal(t, "done", evs[len(evs)-1].Name, rec.Body.String())
				}
			}
			require.Equal(t, int64(1), calls.Load())
		})
	}
}
