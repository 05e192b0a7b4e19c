// Package web serves the polewright workbench: the spec form, the result
// page of a design and the JSON API of the project's INTERFACE.md.
//
// [New] returns the whole site as one [http.Handler]. Its routes are:
//
//	GET  /                       the spec form (with the converter helper)
//	GET  /design?QUERY           the result page of the spec in QUERY (a permalink)
//	GET  /design/progress?QUERY  the same design as server-sent events (progress, then done or error)
//	GET  /download/KIND?QUERY    one export of that design as a file named after it
//	POST /api/v1/design          spec JSON in, design JSON out
//	POST /api/v1/export?as=KIND  spec JSON in, the export out
//	GET  /explore?QUERY          every candidate filter for the spec, compared (package synth/explore)
//	GET  /explore/progress?QUERY the same exploration as server-sent events (candidates done)
//	POST /api/v1/explore         spec JSON in, the exploration JSON out
//	GET  /static/...             the embedded style sheet and script
//	GET  /healthz                "ok", for probes
//	GET  /favicon.ico            the workbench's icon
//
// Every GET route answers HEAD as well; a method a path does not take is
// answered 405 with Allow naming those it does.
//
// # The spec in the URL
//
// QUERY carries the spec's fields by their JSON names (passband_hz=20000),
// band edges as "lo,hi" (passband_hz=18000,22000) and the nested objects
// flattened with underscores: the op-amp (opamp_gbw_hz, opamp_dc_gain_db,
// opamp_ideal=1, opamp_noise_v_per_rthz, opamp_noise_a_per_rthz,
// opamp_slew_v_per_s), the tolerances (tolerance_resistor_pct,
// tolerance_capacitor_pct, tolerance_distribution, tolerance_gbw_pct), the Monte Carlo
// (montecarlo_trials, montecarlo_seed) and the converter
// (converter_bits, converter_sample_rate_hz, converter_full_scale_vpp:
// all three or none). An empty value means the field is absent, so that
// the page runs no Monte Carlo unless trials are given (at most
// [synth.MaxTrials]). A number is written in the JSON number syntax
// (RFC 8259: no hexadecimal, underscores, leading "+" or "."), and may end
// in a metric prefix (4.7k, 10n, 20M). An error in a nested field ("montecarlo.trials") is shown beside
// its flattened control. The handler turns the query into a JSON object
// and hands it to [synth.ParseSpecBytes], so the page validates exactly as
// the API does; a parameter that is neither a spec field nor one of the
// converter helper's (adc_rate_hz, adc_bits, adc_band_hz) is an error that
// names it. The server keeps no state between requests that a user
// depends on: a result page is reproduced by its URL alone (the cache of
// the section Caching only saves computing it again).
//
// # Will it work on the bench
//
// The result page's bench panel shows what synth's verification fills:
// the yield of the Monte Carlo with its trial count and seed, the spread
// of each stage's f0 and Q (beside the first-order prediction from the
// sensitivities), histograms of the loss at the band edges against the
// mask's limit, the output noise against the converter's LSB/√12 with the
// noise density plot and the largest contributors, the step figures with
// the settling time to ±½ LSB (±0.1 % without a converter), and the slew
// rate needed. Under each stage of the stage table are its most sensitive
// parts and the tolerances they need. When the form asks for more trials
// than the page calls slow, the page's script follows the run on GET
// /design/progress: a text/event-stream of "progress" events
// ({"done":N,"total":T}, at most ten a second), then "done" with the
// permalink ({"url":"/design?QUERY"}), which the browser loads (served
// from the cache, without designing again), or "error" ({"message", and
// for a spec at fault "field" and "url"}). The stream waits up to
// [ProgressTimeout] rather than [DesignTimeout]. Its Cancel button closes
// the stream; when no other request waits for the same design, the run in
// synth is then cancelled, as it is whenever its clients go away.
//
// # Caching
//
// Each design is computed once: a bounded in-memory cache keyed by the
// canonical spec (the JSON of the parsed spec, every default filled in)
// feeds the result page, the downloads, the API's design and exports and
// the progress stream, so that a permalink, a download and a POST of the
// same spec share one computation, and a long Monte Carlo streamed by
// /design/progress is on the page as soon as its stream ends "done" (the
// design is stored before that event is sent). The cache keeps at most
// [CacheMaxEntries] designs and about [CacheMaxBytes] of them (each
// estimated by the memory it holds), and evicts the least recently used
// beyond either bound; a design larger than the byte bound alone is not
// kept. Errors are not kept (a failed or cancelled design is computed
// again on the next request); the designs are shared and never changed
// after synthesis. Nothing else is stored (package plotting remembers,
// besides, a little of what it computed for the last designs it drew; see
// its documentation).
//
// Requests for a spec whose design is being computed wait for that one
// computation instead of starting their own. The computation runs on a
// context of its own, bounded by [ProgressTimeout]: a waiter whose deadline
// passes or whose client goes away gives up alone, and the computation
// goes on for the others; when its last waiter gives up, it is cancelled,
// and that waiter's request ends when the computation has stopped (no work
// outlives the requests that asked for it). [Deps].Synthesize replaces
// [synth.Synthesize], so that tests can count the computations.
//
// # Drawing
//
// Plots and stage schematics come through the small interfaces [Plots] and
// [Schematics] of [Deps], so that the handler does not depend on how they
// are drawn; a nil one leaves its part out of the page. The SVG they write
// is inlined into the page with its XML prolog removed. A Plots that also
// implements [NoisePlots] draws the noise density plot, which the page
// shows and offers as GET /download/noise-svg; one that implements
// [PassbandPlots] draws the passband plot (passband-svg), shown after the
// magnitude and phase plot. A downloaded SVG carries
// a <title> and the spec ([export.LabelSVG]) and every download is named
// after the design ([export.DesignFileName]).
//
// # Hardening
//
// Every response carries a Content-Security-Policy of default-src 'self'
// (no inline script; inline style attributes only, for the SVG drawings),
// frame-ancestors 'none', X-Content-Type-Options: nosniff and a
// Referrer-Policy. Panics are answered 500 with no detail and logged with
// their stack.
//
// The Host header must name the workbench: localhost, 127.0.0.1 or [::1]
// (any port), or one of [Deps].Hosts (the command adds the -addr host and
// each -host name); any other is answered 421, so that a page whose name
// an attacker rebinds to 127.0.0.1 cannot drive it. POSTs from other
// origins are refused (403) by [http.CrossOriginProtection], and so are
// the GETs that compute (/design, /design/progress, /download/...) when
// the browser marks them Sec-Fetch-Site: cross-site (same-origin,
// same-site, none and no header pass).
//
// The design routes read the whole body (at most [MaxBodyBytes], else 413)
// before they wait for one of [Deps].Workers, so that a slow body holds
// its own connection only; at most [Backlog] requests wait, each at most
// [BacklogTimeout]. A request carries a deadline of [DesignTimeout],
// which bounds its wait for the design (see Caching) and its drawing; one
// that crosses it is answered 503. Every refusal has the shape of its route: JSON
// {"error", "field"} on /api (field "" when no spec field is at fault),
// the error page elsewhere; a 503 carries Retry-After. The request log
// line is an ERROR for a 500 only: a 503 is a WARN, and a client that went
// away before its answer is INFO (client_gone=true).
//
// # Admission by cost
//
// The bound on a design request is its cost, not only its time. Before a
// request takes a worker its spec is parsed and [synth.EstimateCost]
// estimates the CPU-milliseconds it will spend, from the spec alone (the
// order, the stages and their parts, notch stages being the dearest, and
// trials × stages × parts² × frequency points for the Monte Carlo). A spec
// over [Deps].MaxCostMs ([DefaultMaxCostMs], 5 CPU-seconds) is refused at
// once, 400, with the error beside the field that dominates the cost:
// montecarlo.trials with the most trials that would pass ("at most N
// trials for this design on this server"), else order (stopband_hz when
// the mask sets the order). On /api it is {"error", "field"}, on the
// pages the form with the message beside the control, on the progress
// stream an "error" event. The command-line tool has no such bound: only
// INTERFACE.md's limits (synth.MaxTrials).
//
// The workers are shared in two lanes by cost rather than per client:
// a request estimated under [CheapCostMs] takes one of [Deps].Workers, any
// dearer one one of the heavy lane's max(1, Workers/8) (one per two CPUs
// at the default), and the lanes are separate, so heavy requests can
// never hold the workers cheap ones need, and can take at most a bounded
// share of the CPU (a Monte Carlo runs on every CPU). Per-client queues
// were not chosen: the client's address is one for every user behind a
// proxy or on the same machine (and for the load check), and a client
// that sends only cheap requests needs no protection from itself; the
// lanes protect cheap requests from heavy ones whoever sends them. A heavy
// request waits for its lane like any other (at most [BacklogTimeout],
// then 503 with Retry-After), which costs the server nothing, and once
// running carries a deadline of [HeavyDesignTimeout] instead of
// [DesignTimeout]: its cost is bounded by admission, and under a full
// load of cheap requests its lane's share of the CPU needs longer than
// DesignTimeout for a request at the bound, which would otherwise end in
// "took too long" after spending the CPU.
//
// # Exploring alternatives
//
// The exploration routes go through the same hardening, workers and
// lanes; their admission (admitExplore) makes the plan first (the spec
// parsed, the candidates enumerated: [explore.NewPlan]) and bounds the sum
// of [synth.EstimateCost] over the candidates by [Deps].MaxCostMs, with
// the error beside montecarlo.trials (the most trials per candidate that
// fit) or topology (narrow the search). Results are cached by the plan's
// key like designs ([ExploreCacheMaxEntries]), one run shared by
// concurrent requests, cancelled when the last one leaves. The page's
// table is plain HTML (each row links to its candidate's permalink);
// with the script a heading sorts by its column. The plots mark the
// Pareto set and the recommendation that synth/explore computed.
package web
