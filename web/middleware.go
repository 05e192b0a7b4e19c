package web

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"log/slog"
	"net/http"
	"runtime/debug"
	"strings"
	"time"

	"github.com/go-chi/chi/v5/middleware"

	"github.com/polewright/polewright/web/components"
)

// logRequests logs one line per request: method, path, status, size,
// duration and the request id.
func (h *handler) logRequests(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		start := time.Now()
		ww := middleware.NewWrapResponseWriter(w, r.ProtoMajor)
		next.ServeHTTP(ww, r)
		status := ww.Status()
		if status == 0 {
			status = http.StatusOK
		}
		// A client that went away is no failure of the server's; a 503
		// (busy, or a design over its deadline) is a warning.
		gone := clientGone(r)
		level := slog.LevelInfo
		switch {
		case gone:
		case status == http.StatusServiceUnavailable:
			level = slog.LevelWarn
		case status >= 500:
			level = slog.LevelError
		}
		attrs := []slog.Attr{
			slog.String("method", r.Method),
			slog.String("path", r.URL.Path),
			slog.Int("status", status),
			slog.Int("bytes", ww.BytesWritten()),
			slog.Duration("duration", time.Since(start)),
			slog.String("request_id", middleware.GetReqID(r.Context())),
		}
		if gone {
			attrs = append(attrs, slog.Bool("client_gone", true))
		}
		h.log.LogAttrs(context.WithoutCancel(r.Context()), level, "request", attrs...)
	})
}

// recoverPanics answers a panic in a handler with a bare 500 and logs the
// panic with its stack; the client sees no detail. http.ErrAbortHandler is
// passed on, as net/http expects.
func (h *handler) recoverPanics(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		defer func() {
			rec := recover()
			if rec == nil {
				return
			}
			if rec == http.ErrAbortHandler {
				panic(rec)
			}
			h.log.LogAttrs(r.Context(), slog.LevelError, "panic",
				slog.Any("panic", rec),
				slog.String("stack", string(debug.Stack())),
				slog.String("path", r.URL.Path),
				slog.String("request_id", middleware.GetReqID(r.Context())),
			)
			h.fail(w, r, http.StatusInternalServerError, "internal error; it has been logged", "")
		}()
		next.ServeHTTP(w, r)
	})
}

// apiError is the JSON error body of the API; Field is "" when the error
// concerns no field of the spec.
type apiError struct {
	Error string `json:"error"`
	Field string `json:"field"`
}

// isAPI reports whether r is for the JSON API.
func isAPI(r *http.Request) bool {
	return r.URL.Path == "/api" || strings.HasPrefix(r.URL.Path, "/api/")
}

// fail answers an error: as {"error", "field"} JSON on the API, as a short
// HTML page elsewhere. A 503 carries Retry-After; a 405 carries Allow. The
// page is rendered even when the request's context is done (a crossed
// deadline is answered with it).
func (h *handler) fail(w http.ResponseWriter, r *http.Request, status int, msg, field string) {
	switch status {
	case http.StatusServiceUnavailable:
		w.Header().Set("Retry-After", retryAfter)
	case http.StatusMethodNotAllowed:
		if h.routes != nil {
			w.Header().Set("Allow", strings.Join(allowedMethods(h.routes, r.URL.Path), ", "))
		}
	}
	if isAPI(r) {
		writeJSONError(w, status, msg, field)
		return
	}
	var buf bytes.Buffer
	if err := components.Message(http.StatusText(status), msg).Render(context.WithoutCancel(r.Context()), &buf); err != nil {
		http.Error(w, http.StatusText(status), status)
		return
	}
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.WriteHeader(status)
	_, _ = w.Write(buf.Bytes())
}

func writeJSONError(w http.ResponseWriter, status int, msg, field string) {
	b, _ := json.Marshal(apiError{Error: msg, Field: field})
	w.Header().Set("Content-Type", "application/json")
	w.Header().Set("Cache-Control", "no-store")
	w.WriteHeader(status)
	_, _ = w.Write(append(b, '\n'))
}

// clientGone reports whether the client of r went away (its connection
// closed) before the answer was complete.
func clientGone(r *http.Request) bool {
	return errors.Is(r.Context().Err(), context.Canceled)
}
