package web

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"strconv"
	"time"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/explore"
	"github.com/polewright/polewright/web/components"
)

// planKey carries an exploration's plan, made by admitExplore, in the
// request's context.
type planKey struct{}

// explorePlan reads the spec of an exploration request: the body on the
// API, the query elsewhere (vals are then its form values). The error is
// a *synth.FieldError for a spec at fault.
func explorePlan(r *http.Request) (formValues, *explore.Plan, error) {
	if p, ok := r.Context().Value(planKey{}).(*explore.Plan); ok {
		vals, _ := readQuery(r.URL.Query(), paramFill)
		return vals, p, nil
	}
	var data []byte
	var vals formValues
	if isAPI(r) {
		if r.Body == nil || r.Body == http.NoBody {
			return nil, nil, &synth.FieldError{Field: "json", Reason: "the spec is empty; expected a JSON object"}
		}
		body, err := io.ReadAll(r.Body)
		r.Body = io.NopCloser(bytes.NewReader(body))
		if err != nil {
			return nil, nil, &synth.FieldError{Field: "json", Reason: "the request body cannot be read"}
		}
		data = body
	} else {
		var err error
		if vals, err = readQuery(r.URL.Query(), paramFill); err != nil {
			return vals, nil, err
		}
		if data, err = specJSON(vals); err != nil {
			return vals, nil, err
		}
	}
	p, err := explore.NewPlan(r.Context(), data)
	return vals, p, err
}

// admitExplore is admit for the exploration routes: the plan is made
// (the spec parsed, the candidates enumerated) before a worker is taken,
// one that costs more than the server's bound is refused beside the field
// that dominates, and any other goes on with its cost (which picks its
// lane) and its plan in its context. A spec at fault goes on as a cheap
// request, whose handler answers the error.
func (h *handler) admitExplore(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		vals, plan, err := explorePlan(r)
		if err != nil {
			next.ServeHTTP(w, r)
			return
		}
		if maxMs := h.deps.MaxCostMs; maxMs > 0 {
			if err := plan.CheckCost(maxMs); err != nil {
				h.exploreSpecError(w, r, vals, err)
				return
			}
		}
		ctx := context.WithValue(r.Context(), costKey{}, plan.CostMs())
		ctx = context.WithValue(ctx, planKey{}, plan)
		next.ServeHTTP(w, r.WithContext(ctx))
	})
}

// exploreSpecError answers a spec at fault in the shape of the route:
// JSON {"error", "field"} on the API, an error event on the progress
// stream, the form with the error beside its field on the page.
func (h *handler) exploreSpecError(w http.ResponseWriter, r *http.Request, vals formValues, err error) {
	fe, _ := synth.IsFieldError(err)
	switch {
	case isAPI(r):
		writeJSONError(w, http.StatusBadRequest, fe.Error(), fe.Field)
	case r.URL.Path == "/explore/progress":
		ev := specError(vals, err)
		ev.URL = "/explore?" + canonicalQuery(vals)
		b, _ := json.Marshal(ev)
		w.Header().Set("Content-Type", "text/event-stream")
		w.Header().Set("Cache-Control", "no-store")
		w.WriteHeader(http.StatusOK)
		_, _ = fmt.Fprintf(w, "event: error\ndata: %s\n\n", b)
	default:
		h.render(w, r, http.StatusBadRequest, components.Home(buildForm(vals, placeError(vals, err)), "Correct the field marked below and explore again."))
	}
}

// exploreResult explores the spec of r (or takes the result from the
// cache). On failure it has answered and returns ok = false.
func (h *handler) exploreResult(w http.ResponseWriter, r *http.Request) (formValues, *explore.Result, bool) {
	vals, plan, err := explorePlan(r)
	var res *explore.Result
	if err == nil {
		res, err = h.explores.result(r.Context(), plan)
	}
	if err == nil {
		return vals, res, true
	}
	if _, ok := synth.IsFieldError(err); ok {
		h.exploreSpecError(w, r, vals, err)
		return nil, nil, false
	}
	h.synthFailed(w, r, err)
	return nil, nil, false
}

// apiExplore answers POST /api/v1/explore: spec JSON in, the exploration
// JSON out.
func (h *handler) apiExplore(w http.ResponseWriter, r *http.Request) {
	_, res, ok := h.exploreResult(w, r)
	if !ok {
		return
	}
	b, err := json.Marshal(res)
	if err != nil {
		h.internal(w, r, err)
		return
	}
	w.Header().Set("Content-Type", "application/json")
	w.Header().Set("Cache-Control", "no-store")
	_, _ = w.Write(append(b, '\n'))
}

// explorePage serves GET /explore?QUERY: the candidates of the spec in
// the query as a table, the Pareto front on a plot, each row linking to
// its design.
func (h *handler) explorePage(w http.ResponseWriter, r *http.Request) {
	vals, res, ok := h.exploreResult(w, r)
	if !ok {
		return
	}
	form := buildForm(vals, nil)
	form.ResetOnShow = true // the form holds the spec explored
	h.render(w, r, http.StatusOK, components.ExplorePage(form, exploreView(vals, res)))
}

// exploreProgress streams an exploration as server-sent events, as
// designProgress streams a design: "progress" ({"done","total"}
// candidates), then "done" with the page's address (the result is
// cached by then), or "error". A client that goes away stops the run,
// unless other requests wait for it.
func (h *handler) exploreProgress(w http.ResponseWriter, r *http.Request) {
	ctx, cancel := context.WithTimeout(r.Context(), ProgressTimeout)
	defer cancel()
	rc := http.NewResponseController(w)
	_ = rc.SetWriteDeadline(time.Now().Add(ProgressTimeout + 10*time.Second))
	vals, plan, err := explorePlan(r)
	if err != nil {
		h.exploreSpecError(w, r, vals, err)
		return
	}
	send := eventStream(w, rc)
	page := "/explore?" + canonicalQuery(vals)
	res, f := h.explores.join(ctx, plan)
	if res != nil {
		send("done", doneEvent{URL: page})
		return
	}
	h.followRun(ctx, r, send, followed{
		latest: f.latest, done: f.done, err: func() error { return f.err }, leave: func() { h.explores.leave(f) },
	}, vals, page, "the exploration took too long; try again with fewer trials, or name a topology or a resistor series", "exploration failed")
}

// exploreColumns are the table's figures, in order.
var exploreColumns = []struct {
	key, label string
	cell       func(c explore.Candidate) (text string, sort float64)
}{
	{"approximation", "Approximation", func(c explore.Candidate) (string, float64) { return approxNames[c.Approximation], 0 }},
	{"order", "Order", func(c explore.Candidate) (string, float64) { return strconv.Itoa(c.Order), float64(c.Order) }},
	{"topology", "Stages", func(c explore.Candidate) (string, float64) { return c.Topology, 0 }},
	{"resistor_series", "Resistors", func(c explore.Candidate) (string, float64) { return c.ResistorSeries, 0 }},
	{"design_margin", "Margin (dB)", func(c explore.Candidate) (string, float64) {
		return fmt.Sprintf("%.3g / %.3g", c.DesignMargin.PassbandDB, c.DesignMargin.StopbandDB), c.DesignMargin.PassbandDB
	}},
	{"built_meets_mask", "Built meets mask", func(c explore.Candidate) (string, float64) {
		if c.BuiltMeetsMask {
			return "yes", 1
		}
		return "no", 0
	}},
	{"yield", "Yield", func(c explore.Candidate) (string, float64) {
		if c.Yield == nil {
			return "—", -1
		}
		return fmt.Sprintf("%.1f %%", 100**c.Yield), *c.Yield
	}},
	{"opamps", "Op-amps", func(c explore.Candidate) (string, float64) { return strconv.Itoa(c.OpAmps), float64(c.OpAmps) }},
	{"passive_parts", "R and C", func(c explore.Candidate) (string, float64) {
		return strconv.Itoa(c.PassiveParts), float64(c.PassiveParts)
	}},
	{"gbw_needed_hz", "GBW needed", siCell("Hz")},
	{"slew_needed_v_per_s", "Slew needed", func(c explore.Candidate) (string, float64) { return siOr(c.SlewNeededVPerS, "V/s") }},
	{"sampled_rms_v", "Noise at converter", func(c explore.Candidate) (string, float64) { return siOr(c.SampledRMSV, "V rms") }},
	{"group_delay_spread_s", "Delay spread", func(c explore.Candidate) (string, float64) { return siOr(c.GroupDelaySpreadS, "s") }},
	{"settling_s", "Settling", func(c explore.Candidate) (string, float64) { return siOr(c.SettlingS, "s") }},
}

func siCell(unit string) func(c explore.Candidate) (string, float64) {
	return func(c explore.Candidate) (string, float64) { return siOr(c.GBWNeededHz, unit) }
}

// siOr formats an optional figure; a missing one sorts last.
func siOr(v *float64, unit string) (string, float64) {
	if v == nil {
		return "—", 1e300
	}
	return si(*v, unit, 3), *v
}

// exploreView is the page's view of res, whose spec the form values vals
// hold.
func exploreView(vals formValues, res *explore.Result) components.Explore {
	query := canonicalQuery(vals)
	v := components.Explore{
		Title:      fmt.Sprintf("%d candidates compared", len(res.Candidates)),
		Permalink:  "/explore?" + query,
		DesignLink: "/design?" + query,
		Reason:     res.Reason,
	}
	for i, o := range res.Objectives {
		if i > 0 {
			v.Objectives += ", "
		}
		v.Objectives += o.Field + " (" + o.Goal + ")"
	}
	v.Note = fmt.Sprintf("Each candidate is a whole design with its verification and %d Monte Carlo trials", res.TrialsPerCandidate)
	if res.TargetYield != nil {
		v.Note += fmt.Sprintf(" per margin tried; its design margin is the smallest on the ladder whose yield reaches the target %.3g", *res.TargetYield)
	}
	v.Note += ". A missing figure (—) counts as the worst."
	for _, c := range exploreColumns {
		v.Columns = append(v.Columns, components.ExploreColumn{Key: c.key, Label: c.label})
	}
	pareto := map[int]bool{}
	for _, i := range res.Pareto {
		pareto[i] = true
	}
	for i, c := range res.Candidates {
		row := components.ExploreRow{Index: i, Href: c.Permalink, Pareto: pareto[i], Recommended: i == res.Recommended}
		for _, col := range exploreColumns {
			text, sort := col.cell(c)
			key := strconv.FormatFloat(sort, 'g', -1, 64)
			switch col.key {
			case "approximation", "topology", "resistor_series":
				key = text // sorted as words
			}
			row.Cells = append(row.Cells, components.ExploreCell{Text: text, Sort: key})
		}
		v.Rows = append(v.Rows, row)
	}
	for _, s := range res.Skipped {
		what := approxNames[s.Approximation]
		if s.Order > 0 {
			what += fmt.Sprintf(" order %d, %s, %s", s.Order, s.Topology, s.ResistorSeries)
		}
		v.Skipped = append(v.Skipped, what+": "+s.Reason)
	}
	v.Plots = paretoPlots(res)
	return v
}
