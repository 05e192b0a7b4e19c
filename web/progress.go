package web

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"sync"
	"time"

	"github.com/polewright/polewright/synth"
)

// Limits of the progress stream of a long Monte Carlo run.
const (
	// ProgressTimeout bounds one run streamed by GET /design/progress; it
	// replaces DesignTimeout for that route.
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
// page, or "error" with the message. Nothing is kept on the server: the
// browser loads the permalink, which designs again. A client that goes
// away cancels the request's context, and the run stops.
func (h *handler) designProgress(w http.ResponseWriter, r *http.Request) {
	ctx, cancel := context.WithTimeout(r.Context(), ProgressTimeout)
	defer cancel()
	rc := http.NewResponseController(w)
	// The server's write timeout is for pages; a stream lives as long as
	// its run (errors: the writer has no deadline to set).
	_ = rc.SetWriteDeadline(time.Now().Add(ProgressTimeout + 10*time.Second))

	hd := w.Header()
	hd.Set("Content-Type", "text/event-stream")
	hd.Set("Cache-Control", "no-store")
	hd.Set("X-Accel-Buffering", "no")
	w.WriteHeader(http.StatusOK)

	send := func(event string, data any) bool {
		b, err := json.Marshal(data)
		if err != nil {
			return false
		}
		if _, err := fmt.Fprintf(w, "event: %s\ndata: %s\n\n", event, b); err != nil {
			return false
		}
		return rc.Flush() == nil
	}

	vals, spec, err := parseQuery(r.URL.Query())
	if err != nil {
		send("error", specError(vals, err))
		return
	}

	// The run reports from its own goroutine; the handler's goroutine alone
	// writes, at most once per progressInterval.
	var (
		mu      sync.Mutex
		latest  progressEvent
		changed bool
	)
	pctx := synth.WithProgress(ctx, func(done, total int) {
		mu.Lock()
		latest, changed = progressEvent{Done: done, Total: total}, true
		mu.Unlock()
	})
	flushProgress := func() bool {
		mu.Lock()
		ev, ok := latest, changed
		changed = false
		mu.Unlock()
		return !ok || send("progress", ev)
	}

	type outcome struct {
		d   *synth.Design
		err error
	}
	res := make(chan outcome, 1)
	go func() {
		d, err := synth.Synthesize(pctx, spec)
		res <- outcome{d, err}
	}()

	tick := time.NewTicker(progressInterval)
	defer tick.Stop()
	for {
		select {
		case <-tick.C:
			if !flushProgress() {
				// The client is gone: stop the run and wait for it, so
				// that no work outlives the request.
				cancel()
				<-res
				return
			}
		case out := <-res:
			flushProgress()
			switch {
			case out.err == nil:
				send("done", doneEvent{URL: "/design?" + canonicalQuery(vals)})
			case errors.Is(out.err, context.Canceled) && r.Context().Err() != nil:
				// The client went away; nobody is listening.
			case errors.Is(out.err, context.DeadlineExceeded) || errors.Is(out.err, context.Canceled):
				send("error", errorEvent{Message: "the design took too long; try again with fewer trials or a lower order"})
			default:
				if _, ok := synth.IsFieldError(out.err); ok {
					send("error", specError(vals, out.err))
				} else {
					h.logWarn(r.Context(), "progress run failed", out.err)
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
