package web

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"time"

	"github.com/polewright/polewright/synth"
)

// Limits of the progress stream of a long Monte Carlo run.
const (
	// ProgressTimeout bounds every computation of a design (whichever
	// request started it) and the wait of GET /design/progress, which
	// DesignTimeout does not bound.
	ProgressTimeout = 2 * time.Minute
	// progressInterval is the least time between two progress events.
	progressInterval = 100 * time.Millisecond
)

// progressEvent is the data of an "event: progress".
type progressEvent struct {
	Done  int `json:"done"`
	Total int `json:"total"`
}

// doneEvent is the data of an "event: done": the result page's permalink,
// which the browser then loads.
type doneEvent struct {
	URL string `json:"url"`
}

// errorEvent is the data of an "event: error". URL is set when the spec is
// at fault: the permalink then answers the form with the error beside its
// field.
type errorEvent struct {
	Message string `json:"message"`
	Field   string `json:"field,omitempty"`
	URL     string `json:"url,omitempty"`
}

// designProgress streams the synthesis of the spec in the query as
// server-sent events: "progress" ({"done","total"}, at most ten a second)
// while the Monte Carlo runs, then "done" with the permalink of the result
// page, or "error" with the message. The design is the cache's: a stored
// one is done at once, a run in progress is joined, and the finished run's
// design is stored before "done" is sent, so that the permalink the
// browser then loads is served without designing again. A client that
// goes away stops the run, unless other requests wait for it.
func (h *handler) designProgress(w http.ResponseWriter, r *http.Request) {
	ctx, cancel := context.WithTimeout(r.Context(), ProgressTimeout)
	defer cancel()
	rc := http.NewResponseController(w)
	// The server's write timeout is for pages; a stream lives as long as
	// its run (errors: the writer has no deadline to set).
	_ = rc.SetWriteDeadline(time.Now().Add(ProgressTimeout + 10*time.Second))

	send := eventStream(w, rc)

	vals, spec, err := parseQuery(r.URL.Query())
	if err != nil {
		send("error", specError(vals, err))
		return
	}

	// The run is the cache's flight for the spec (or the stored design):
	// it reports from its own goroutine, and the handler's goroutine alone
	// writes, at most once per progressInterval.
	d, f := h.cache.join(ctx, spec)
	if d != nil {
		send("done", doneEvent{URL: "/design?" + canonicalQuery(vals)})
		return
	}
	h.followRun(ctx, r, send, followed{
		latest: f.latest, done: f.done, err: func() error { return f.err }, leave: func() { h.cache.leave(f) },
	}, vals, "/design?"+canonicalQuery(vals), "the design took too long; try again with fewer trials or a lower order", "progress run failed")
}

// eventStream answers w with a server-sent event stream and returns the
// function that sends one event (its data as JSON), false once the
// client is gone.
func eventStream(w http.ResponseWriter, rc *http.ResponseController) func(event string, data any) bool {
	hd := w.Header()
	hd.Set("Content-Type", "text/event-stream")
	hd.Set("Cache-Control", "no-store")
	hd.Set("X-Accel-Buffering", "no")
	w.WriteHeader(http.StatusOK)
	return func(event string, data any) bool {
		b, err := json.Marshal(data)
		if err != nil {
			return false
		}
		if _, err := fmt.Fprintf(w, "event: %s\ndata: %s\n\n", event, b); err != nil {
			return false
		}
		return rc.Flush() == nil
	}
}

// followed is a run in progress that a stream follows: its latest
// progress and sequence number, the channel closed when it ends, its
// error then, and how the request leaves it.
type followed struct {
	latest func() (progressEvent, int)
	done   <-chan struct{}
	err    func() error
	leave  func()
}

// followRun streams run's progress ("progress", at most once per
// progressInterval, only when it moved) until it ends, then "done" with
// url, or "error": tooLong when it ran out of time, the spec's error
// event (its address url) for a spec at fault, else an internal error
// logged as what. A client that goes away leaves the run, which stops
// unless other requests wait for it (leave waits for it to stop, so that
// no work outlives the requests that asked for it).
func (h *handler) followRun(ctx context.Context, r *http.Request, send func(string, any) bool, run followed, vals formValues, url, tooLong, what string) {
	seen := 0
	flushProgress := func() bool {
		ev, seq := run.latest()
		if seq == seen {
			return true
		}
		seen = seq
		return send("progress", ev)
	}
	tick := time.NewTicker(progressInterval)
	defer tick.Stop()
	for {
		select {
		case <-tick.C:
			if !flushProgress() {
				run.leave()
				return
			}
		case <-ctx.Done():
			run.leave()
			if r.Context().Err() == nil {
				send("error", errorEvent{Message: tooLong})
			}
			return
		case <-run.done:
			run.leave()
			flushProgress()
			switch err := run.err(); {
			case err == nil:
				send("done", doneEvent{URL: url})
			case errors.Is(err, context.Canceled) && r.Context().Err() != nil:
				// The client went away; nobody is listening.
			case errors.Is(err, context.DeadlineExceeded) || errors.Is(err, context.Canceled):
				send("error", errorEvent{Message: tooLong})
			default:
				if _, ok := synth.IsFieldError(err); ok {
					ev := specError(vals, err)
					ev.URL = url
					send("error", ev)
				} else {
					h.logWarn(r.Context(), what, err)
					send("error", errorEvent{Message: "internal error; it has been logged"})
				}
			}
			return
		}
	}
}

// specError is the error event of a spec at fault: the message the form
// would show, the control it belongs to and the permalink that shows it
// there.
func specError(vals formValues, err error) errorEvent {
	msgs := placeError(vals, err)
	ev := errorEvent{URL: "/design?" + canonicalQuery(vals)}
	for name, msg := range msgs {
		ev.Field, ev.Message = name, msg
		break
	}
	if ev.Field != "" {
		if f, ok := lookupField(ev.Field); ok {
			ev.Message = f.Label + ": " + ev.Message
		}
	}
	return ev
}
