package web

import (
	"io"
	"log/slog"
	"net/http"
	"runtime"
	"strings"
	"time"

	"github.com/go-chi/chi/v5"
	"github.com/go-chi/chi/v5/middleware"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/web/export"
	"github.com/polewright/polewright/web/static"
)

// MaxBodyBytes is the largest request body accepted (64 KiB); a larger one
// is answered 413.
const MaxBodyBytes = 64 << 10

// Limits of the design routes, which spend CPU on every request. A body is
// read whole before the request waits for a worker, so a slow body holds
// its own connection only.
const (
	// DesignTimeout is the deadline of one design request: its wait for
	// the design (computed, or from the cache), plots and rendering; a
	// request that crosses it is answered 503.
	DesignTimeout = 10 * time.Second
	// BacklogTimeout is how long a request may wait for a free worker
	// before it is answered 503.
	BacklogTimeout = 10 * time.Second
	// Backlog is how many requests may wait for a worker; more are answered
	// 503 at once.
	Backlog = 512
)

// Plots draws a design's plots as SVG documents (an XML prolog, if any, is
// removed before the SVG is inlined into a page).
type Plots interface {
	// Bode writes the magnitude (with the mask) and phase plot.
	Bode(w io.Writer, d *synth.Design) error
	// GroupDelay writes the group delay plot.
	GroupDelay(w io.Writer, d *synth.Design) error
	// Step writes the step response plot.
	Step(w io.Writer, d *synth.Design) error
}

// NoisePlots is what a [Plots] may also draw: the output noise density.
// When Deps.Plots implements it, the result page shows the noise plot and
// offers it as the download noise-svg (the export kind, drawn as the
// page draws it).
type NoisePlots interface {
	// Noise writes the output noise density plot of d, which has
	// d.Noise.
	Noise(w io.Writer, d *synth.Design) error
}

// PassbandPlots is what a [Plots] may also draw: the magnitude over the
// passband against its limits. When Deps.Plots implements it, the result
// page shows that plot after the magnitude and phase plot; the download
// passband-svg is the page's plot, else [export.Write]'s.
type PassbandPlots interface {
	// Passband writes the passband plot of d.
	Passband(w io.Writer, d *synth.Design) error
}

// Schematics draws the circuit of one stage of a chain as an SVG document.
type Schematics interface {
	// Stage writes the schematic of ch.Stages[stage-1] (stage is 1-based),
	// labelled with the chain-wide designators.
	Stage(w io.Writer, ch circuit.Chain, stage int) error
}

// ReferenceSchematics is a [Schematics] that can label the ground symbols
// (with "ref" on a board with a supply, whose ground connections all go
// to the reference); the result page uses it when the design has a
// supply.
type ReferenceSchematics interface {
	StageOnReference(w io.Writer, ch circuit.Chain, stage int, label string) error
}

// ExportFunc writes design d as an export kind, as [export.Write] does.
type ExportFunc func(w io.Writer, d *synth.Design, kind string) error

// Deps are what the handler draws and exports with. A nil Plots or
// Schematics leaves plots or schematics out of the result page; a nil
// Export is [export.Write]. Workers bounds the design requests in
// progress at once (0: four per CPU). Hosts are the names (or addresses)
// the Host header may carry besides the loopback names localhost,
// 127.0.0.1 and [::1], which are always accepted; a port is ignored.
// A nil Synthesize is [synth.Synthesize]; the handler calls it once per
// design it does not hold in its cache (tests count the calls through it).
// MaxCostMs is the most CPU-milliseconds ([synth.EstimateCost]) one design
// request may cost (0: [DefaultMaxCostMs]; negative: no bound); a spec
// over it is refused with the error beside the field that dominates.
type Deps struct {
	Plots      Plots
	Schematics Schematics
	Export     ExportFunc
	Workers    int
	Hosts      []string
	Synthesize SynthesizeFunc
	MaxCostMs  float64
}

// handler carries the dependencies of the routes.
type handler struct {
	log    *slog.Logger
	deps   Deps
	routes chi.Routes   // the whole site, for the Allow header of a 405
	cache  *designCache // one computation per design, shared by every route
	// explores keeps the explorations (their figures only).
	explores *exploreCache
}

// New returns the workbench: the pages, the downloads, the JSON API and
// the static assets, behind the hardening middleware of the package
// comment. Requests are logged to log with their request id.
func New(log *slog.Logger, deps Deps) http.Handler {
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	if deps.Export == nil {
		deps.Export = export.Write
	}
	if deps.Workers <= 0 {
		deps.Workers = 4 * runtime.GOMAXPROCS(0)
	}
	if deps.MaxCostMs == 0 {
		deps.MaxCostMs = DefaultMaxCostMs
	}
	h := &handler{log: log, deps: deps,
		cache:    newDesignCache(deps.Synthesize, CacheMaxEntries, CacheMaxBytes, ProgressTimeout),
		explores: newExploreCache(ExploreCacheMaxEntries, ProgressTimeout)}

	cop := http.NewCrossOriginProtection()
	cop.SetDenyHandler(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h.fail(w, r, http.StatusForbidden, "cross-origin requests that change state are refused", "")
	}))

	r := chi.NewRouter()
	h.routes = r
	r.Use(securityHeaders, middleware.RequestID, h.logRequests, h.recoverPanics,
		h.checkHost(deps.Hosts), cop.Handler, middleware.GetHead)
	r.NotFound(func(w http.ResponseWriter, r *http.Request) {
		h.fail(w, r, http.StatusNotFound, "there is nothing at "+r.URL.Path, "")
	})
	r.MethodNotAllowed(func(w http.ResponseWriter, r *http.Request) {
		h.fail(w, r, http.StatusMethodNotAllowed, r.Method+" is not accepted at "+r.URL.Path, "")
	})

	// The body is read before a worker is taken; the GETs that compute are
	// refused to other sites before they cost anything; the spec's cost is
	// estimated (and one over the bound refused) before it takes a worker
	// of its lane.
	work := newWorkers(h, deps.Workers, Backlog, BacklogTimeout).handler
	heavy := chi.Chain(h.sameSiteOnly, h.readBodyFirst, h.admit, work, withDeadline(DesignTimeout))
	// The progress stream shares the workers but not DesignTimeout: it
	// bounds its run by ProgressTimeout itself.
	stream := chi.Chain(h.sameSiteOnly, h.readBodyFirst, h.admit, work)

	r.Get("/", h.home)
	r.Get("/favicon.ico", favicon)
	r.Get("/healthz", func(w http.ResponseWriter, _ *http.Request) {
		w.Header().Set("Content-Type", "text/plain; charset=utf-8")
		_, _ = io.WriteString(w, "ok\n")
	})
	assets := static.Handler()
	r.Get(static.Prefix+"*", func(w http.ResponseWriter, r *http.Request) {
		if !static.Has(strings.TrimPrefix(r.URL.Path, static.Prefix)) {
			h.fail(w, r, http.StatusNotFound, "there is nothing at "+r.URL.Path, "")
			return
		}
		assets.ServeHTTP(w, r)
	})
	r.With(heavy...).Get("/design", h.design)
	r.With(stream...).Get("/design/progress", h.designProgress)
	r.With(heavy...).Get("/download/{kind}", h.download)
	// An exploration is admitted by the cost of all its candidates.
	exploreHeavy := chi.Chain(h.sameSiteOnly, h.readBodyFirst, h.admitExplore, work, withDeadline(DesignTimeout))
	exploreStream := chi.Chain(h.sameSiteOnly, h.readBodyFirst, h.admitExplore, work)
	r.With(exploreHeavy...).Get("/explore", h.explorePage)
	r.With(exploreStream...).Get("/explore/progress", h.exploreProgress)
	r.Route("/api", func(r chi.Router) {
		r.With(heavy...).Post("/v1/design", h.apiDesign)
		r.With(heavy...).Post("/v1/export", h.apiExport)
		r.With(exploreHeavy...).Post("/v1/explore", h.apiExplore)
	})
	return r
}

// securityHeaders sets the headers every response carries. Inline style
// attributes are allowed because the SVG drawings use them; no inline
// script or style element is.
func securityHeaders(next http.Handler) http.Handler {
	const csp = "default-src 'self'; script-src 'self'; style-src 'self'; style-src-attr 'unsafe-inline'; " +
		"img-src 'self' data:; object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'"
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		hd := w.Header()
		hd.Set("Content-Security-Policy", csp)
		hd.Set("X-Content-Type-Options", "nosniff")
		hd.Set("Referrer-Policy", "no-referrer")
		hd.Set("X-Frame-Options", "DENY")
		hd.Set("Cross-Origin-Opener-Policy", "same-origin")
		next.ServeHTTP(w, r)
	})
}
