// Package web serves the polewright workbench: the spec form, the result
// page of a design and the JSON API of the project's INTERFACE.md.
//
// [New] returns the whole site as one [http.Handler]. Its routes are:
//
//	GET  /                       the spec form (with the converter helper)
//	GET  /design?QUERY           the result page of the spec in QUERY (a permalink)
//	GET  /download/KIND?QUERY    one export of that design as a file
//	POST /api/v1/design          spec JSON in, design JSON out
//	POST /api/v1/export?as=KIND  spec JSON in, the export out
//	GET  /static/...             the embedded style sheet and script
//	GET  /healthz                "ok", for probes
//
// # The spec in the URL
//
// QUERY carries the spec's fields by their JSON names (passband_hz=20000),
// band edges as "lo,hi" (passband_hz=18000,22000) and the op-amp object
// flattened (opamp_gbw_hz, opamp_dc_gain_db, opamp_ideal=1). An empty value
// means the field is absent. The handler turns the query into a JSON object
// and hands it to [synth.ParseSpecBytes], so the page validates exactly as
// the API does; a parameter that is neither a spec field nor one of the
// converter helper's (adc_rate_hz, adc_bits, adc_band_hz) is an error that
// names it. The server keeps no state between requests: a result page is
// reproduced by its URL alone.
//
// # Drawing
//
// Plots and stage schematics come through the small interfaces [Plots] and
// [Schematics] of [Deps], so that the handler does not depend on how they
// are drawn; a nil one leaves its part out of the page. The SVG they write
// is inlined into the page with its XML prolog removed.
//
// # Hardening
//
// Every response carries a Content-Security-Policy of default-src 'self'
// (no inline script; inline style attributes only, for the SVG drawings),
// frame-ancestors 'none', X-Content-Type-Options: nosniff and a
// Referrer-Policy. Panics are answered 500 with no detail and logged with
// their stack. Bodies are limited to [MaxBodyBytes]; the design routes are
// throttled and carry a deadline that [synth.Synthesize] observes; POSTs
// from other origins are refused by [http.CrossOriginProtection].
package web
