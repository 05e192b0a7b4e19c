package web

import (
	"context"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// TestWorkersBusy: when every worker is taken and the backlog is full or
// its wait runs out, the request is answered 503 with Retry-After, as JSON
// on the API and as the error page elsewhere.
func TestWorkersBusy(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		backlog int
		path    string
		json    bool
	}{
		{"backlog full, api", 0, "/api/v1/design", true},
		{"backlog full, page", 0, "/design", false},
		{"wait runs out, api", 4, "/api/v1/export", true},
		{"wait runs out, page", 4, "/design/progress", false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			h := &handler{log: slog.New(slog.DiscardHandler)}
			wk := newWorkers(h, 1, tc.backlog, 20*time.Millisecond)
			wk.slots <- struct{}{} // the one worker is busy
			ran := false
			next := wk.handler(http.HandlerFunc(func(http.ResponseWriter, *http.Request) { ran = true }))
			rec := httptest.NewRecorder()
			next.ServeHTTP(rec, httptest.NewRequest("POST", tc.path, nil))

			require.False(t, ran)
			require.Equal(t, http.StatusServiceUnavailable, rec.Code)
			require.Equal(t, "1", rec.Header().Get("Retry-After"))
			if tc.json {
				require.Equal(t, "application/json", rec.Header().Get("Content-Type"))
				require.Equal(t, "{\"error\":\"the workbench is busy; try again in a moment\",\"field\":\"\"}\n", rec.Body.String())
			} else {
				require.True(t, strings.HasPrefix(rec.Header().Get("Content-Type"), "text/html"))
				require.Contains(t, rec.Body.String(), "the workbench is busy")
			}
			require.Zero(t, wk.waiting.Load())

			<-wk.slots // free: the next request runs
			rec = httptest.NewRecorder()
			next.ServeHTTP(rec, httptest.NewRequest("POST", tc.path, nil))
			require.True(t, ran)
			require.Equal(t, http.StatusOK, rec.Code)
		})
	}
}

// TestWorkersLanes: a heavy request waits for the heavy lane while a
// cheap one runs at once, and the other way round.
func TestWorkersLanes(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		busy    string // the lane that is full
		costMs  float64
		wantRun bool
	}{
		{"heavy lane full, cheap runs", "heavy", 1, true},
		{"heavy lane full, heavy waits", "heavy", 10 * CheapCostMs, false},
		{"cheap lane full, heavy runs", "cheap", 10 * CheapCostMs, true},
		{"cheap lane full, cheap waits", "cheap", 0, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			h := &handler{log: slog.New(slog.DiscardHandler)}
			wk := newWorkers(h, 1, 0, 20*time.Millisecond)
			if tc.busy == "heavy" {
				wk.heavy <- struct{}{}
			} else {
				wk.slots <- struct{}{}
			}
			ran := false
			next := wk.handler(http.HandlerFunc(func(http.ResponseWriter, *http.Request) { ran = true }))
			req := httptest.NewRequest("POST", "/api/v1/design", nil)
			req = req.WithContext(context.WithValue(req.Context(), costKey{}, tc.costMs))
			rec := httptest.NewRecorder()
			next.ServeHTTP(rec, req)
			require.Equal(t, tc.wantRun, ran)
			if !tc.wantRun {
				require.Equal(t, http.StatusServiceUnavailable, rec.Code)
			}
		})
	}
}

// TestDeadlineByLane: a cheap request carries DesignTimeout, a heavy one
// HeavyDesignTimeout.
func TestDeadlineByLane(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name   string
		costMs float64
		want   time.Duration
	}{
		{"cheap", 1, DesignTimeout},
		{"heavy", 10 * CheapCostMs, HeavyDesignTimeout},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var got time.Duration
			next := withDeadline(DesignTimeout)(http.HandlerFunc(func(_ http.ResponseWriter, r *http.Request) {
				dl, ok := r.Context().Deadline()
				require.True(t, ok)
				got = time.Until(dl)
			}))
			req := httptest.NewRequest("POST", "/api/v1/design", nil)
			req = req.WithContext(context.WithValue(req.Context(), costKey{}, tc.costMs))
			next.ServeHTTP(httptest.NewRecorder(), req)
			require.InDelta(t, tc.want.Seconds(), got.Seconds(), 1)
		})
	}
}
