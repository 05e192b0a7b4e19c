package web_test

import (
	"bufio"
	"context"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// sseEvent is one server-sent event as read off a stream.
type sseEvent struct {
	Name, Data string
}

// readEvents splits a text/event-stream body into its events.
func readEvents(t *testing.T, body string) []sseEvent {
	t.Helper()
	var evs []sseEvent
	var cur sseEvent
	sc := bufio.NewScanner(strings.NewReader(body))
	for sc.Scan() {
		line := sc.Text()
		switch {
		case line == "":
			if cur.Name != "" || cur.Data != "" {
				evs = append(evs, cur)
			}
			cur = sseEvent{}
		case strings.HasPrefix(line, "event: "):
			cur.Name = strings.TrimPrefix(line, "event: ")
		case strings.HasPrefix(line, "data: "):
			cur.Data = strings.TrimPrefix(line, "data: ")
		}
	}
	require.NoError(t, sc.Err())
	return evs
}

// TestDesignProgressStreams follows a 3000-trial run: progress events with
// increasing counts up to the total, then done with the permalink, which
// shows the same run.
func TestDesignProgressStreams(t *testing.T) {
	h, _ := newHandler(t)
	srv := httptest.NewServer(h)
	defer srv.Close()

	resp, err := srv.Client().Get(srv.URL + "/design/progress?" + vibrationQuery + "&montecarlo_trials=3000&montecarlo_seed=7")
	require.NoError(t, err)
	defer resp.Body.Close()
	require.Equal(t, http.StatusOK, resp.StatusCode)
	require.Equal(t, "text/event-stream", resp.Header.Get("Content-Type"))
	require.Equal(t, "no-store", resp.Header.Get("Cache-Control"))
	var body strings.Builder
	_, err = bufio.NewReader(resp.Body).WriteTo(&body)
	require.NoError(t, err)

	evs := readEvents(t, body.String())
	require.GreaterOrEqual(t, len(evs), 2, body.String())
	last := 0
	for _, ev := range evs[:len(evs)-1] {
		require.Equal(t, "progress", ev.Name)
		var p struct{ Done, Total int }
		require.NoError(t, json.Unmarshal([]byte(ev.Data), &p))
		require.Equal(t, 3000, p.Total)
		require.Greater(t, p.Done, last)
		last = p.Done
	}
	require.Equal(t, 3000, last, "the last progress event is the whole run")

	done := evs[len(evs)-1]
	require.Equal(t, "done", done.Name)
	var d struct{ URL string }
	require.NoError(t, json.Unmarshal([]byte(done.Data), &d))
	require.True(t, strings.HasPrefix(d.URL, "/design?"), d.URL)
	require.Contains(t, d.URL, "montecarlo_trials=3000")
	require.Contains(t, d.URL, "montecarlo_seed=7")
	require.Contains(t, d.URL, "passband_hz=20000")

	page, err := srv.Client().Get(srv.URL + d.URL)
	require.NoError(t, err)
	defer page.Body.Close()
	require.Equal(t, http.StatusOK, page.StatusCode)
	var html strings.Builder
	_, err = bufio.NewReader(page.Body).WriteTo(&html)
	require.NoError(t, err)
	require.Contains(t, html.String(), "of 3000 trials meet the mask")
}

// TestDesignProgressSpecError answers a bad spec on the stream itself (200,
// one error event), with the message, its field and the permalink that
// shows it beside the field.
func TestDesignProgressSpecError(t *testing.T) {
	h, _ := newHandler(t)
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, newRequest("GET", "/design/progress?passband_hz=1000&stopband_hz=800&montecarlo_trials=30000", nil))
	require.Equal(t, http.StatusOK, rec.Code)
	require.Equal(t, "text/event-stream", rec.Header().Get("Content-Type"))
	evs := readEvents(t, rec.Body.String())
	require.Len(t, evs, 1, rec.Body.String())
	require.Equal(t, "error", evs[0].Name)
	var e struct{ Message, Field, URL string }
	require.NoError(t, json.Unmarshal([]byte(evs[0].Data), &e))
	require.Contains(t, e.Message, "must be above the passband edge for a lowpass")
	require.Equal(t, "stopband_hz", e.Field)
	require.Equal(t, "/design?passband_hz=1000&stopband_hz=800&montecarlo_trials=30000", e.URL)
}

// TestDesignProgressCancel: a client that goes away stops the run at once.
func TestDesignProgressCancel(t *testing.T) {
	h, _ := newHandler(t)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	req := newRequest("GET", "/design/progress?"+vibrationQuery+"&montecarlo_trials=100000", nil).WithContext(ctx)
	rec := httptest.NewRecorder()
	returned := make(chan time.Duration, 1)
	go func() {
		start := time.Now()
		h.ServeHTTP(rec, req)
		returned <- time.Since(start)
	}()
	time.Sleep(50 * time.Millisecond)
	cancelled := time.Now()
	cancel()
	select {
	case took := <-returned:
		require.Less(t, time.Since(cancelled), time.Second)
		t.Logf("handler returned %v after it started, %v after the cancel", took, time.Since(cancelled))
	case <-time.After(time.Second):
		t.Fatal("the handler went on for more than a second after the client went away")
	}
	require.NotContains(t, rec.Body.String(), "event: done", "the run was cut short")
}
