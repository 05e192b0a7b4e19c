package web

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"time"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/components"
)

// Admission by cost (see the package comment).
const (
	// DefaultMaxCostMs is the default of [Deps].MaxCostMs: the most
	// CPU-milliseconds ([synth.EstimateCost]) one request may cost.
	DefaultMaxCostMs = 5000
	// CheapCostMs is the estimate under which a request runs in the cheap
	// lane of the workers; one at or over it runs in the heavy lane.
	CheapCostMs = 250
	// HeavyDesignTimeout replaces DesignTimeout for a request of the
	// heavy lane.
	HeavyDesignTimeout = 20 * time.Second
)

// costKey carries a request's estimated cost in its context.
type costKey struct{}

// requestCost is the estimated CPU-milliseconds of the request of ctx; 0
// when none was estimated (a spec that does not parse: its error is
// cheap).
func requestCost(ctx context.Context) float64 {
	c, _ := ctx.Value(costKey{}).(float64)
	return c
}

// admit parses the spec of a design request before it takes a worker and
// estimates its cost: a spec over the server's bound is refused (400, the
// error beside the field that dominates the cost), any other goes on with
// its cost in its context, which picks its lane of the workers. A spec
// that does not parse goes on as a cheap request; its handler answers the
// error as always.
func (h *handler) admit(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		vals, spec, err := peekSpec(r)
		if err != nil {
			next.ServeHTTP(w, r)
			return
		}
		if maxMs := h.deps.MaxCostMs; maxMs > 0 {
			if err := synth.CheckCost(spec, maxMs); err != nil {
				h.refuseCost(w, r, vals, err)
				return
			}
		}
		ctx := context.WithValue(r.Context(), costKey{}, synth.EstimateCost(spec))
		next.ServeHTTP(w, r.WithContext(ctx))
	})
}

// peekSpec parses the spec of r, from the body on the API (which it puts
// back for the handler) and from the query elsewhere.
func peekSpec(r *http.Request) (formValues, synth.Spec, error) {
	if !isAPI(r) {
		return parseQuery(r.URL.Query())
	}
	if r.Body == nil || r.Body == http.NoBody {
		return nil, synth.Spec{}, fmt.Errorf("no body")
	}
	body, err := io.ReadAll(r.Body)
	r.Body = io.NopCloser(bytes.NewReader(body))
	if err != nil {
		return nil, synth.Spec{}, err
	}
	spec, err := synth.ParseSpecBytes(body)
	return nil, spec, err
}

// refuseCost answers a spec over the cost bound in the shape of its route:
// JSON {"error", "field"} on the API, an error event on the progress
// stream, the form with the error beside its field elsewhere.
func (h *handler) refuseCost(w http.ResponseWriter, r *http.Request, vals formValues, err error) {
	fe, _ := synth.IsFieldError(err)
	switch {
	case isAPI(r):
		writeJSONError(w, http.StatusBadRequest, fe.Error(), fe.Field)
	case r.URL.Path == "/design/progress":
		b, _ := json.Marshal(specError(vals, err))
		w.Header().Set("Content-Type", "text/event-stream")
		w.Header().Set("Cache-Control", "no-store")
		w.WriteHeader(http.StatusOK)
		_, _ = fmt.Fprintf(w, "event: error\ndata: %s\n\n", b)
	default:
		h.render(w, r, http.StatusBadRequest, components.Home(buildForm(vals, placeError(vals, err)), "Correct the field marked below and design again."))
	}
}
