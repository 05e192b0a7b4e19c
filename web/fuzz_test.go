package web_test

import (
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"net/url"
	"strings"
	"testing"

	"github.com/polewright/polewright/web"
)

// FuzzRequests sends arbitrary bodies to the JSON API (the design, and
// the export as an arbitrary KIND) and arbitrary queries to the result
// page (a permalink): whatever arrives, the answer
// is a design (200), a refusal with the reason beside a field (400, JSON
// with "error" and "field" for the API), a body too large (413) or a
// busy server (503), and for the page a redirect (303) from a form's
// empty fields to the clean permalink, which then answers so; never a
// server error, and never a panic (the handler's recovery would answer
// 500). The cost bound is lowered so
// that an admitted design stays quick.
//
//	go test -run XXX -fuzz FuzzRequests -fuzztime 5000x ./web
func FuzzRequests(f *testing.F) {
	for _, s := range []string{
		`{"passband_hz": 1000, "stopband_hz": 3000}`,
		`{"response": "bandpass", "passband_hz": [900, 1100], "stopband_hz": [700, 1400], "approximation": "elliptic"}`,
		`{"response": "bandstop", "passband_hz": [500, 2000], "stopband_hz": [800, 1250], "topology": "one-amp-notch"}`,
		`{"passband_hz": 1000, "order": 4, "opamp": {"gbw_hz": 1e5, "output_resistance_ohm": 300}, "supply": {"positive_v": 5}}`,
		`{"passband_hz": 1000, "approximation": "linear-phase", "order": 6, "delay_equalizer": {"max_spread_pct": 2}}`,
		`{"passband_hz": -1}`, `{"passband_hz": 1e400}`, `{"order": 99, "passband_hz": 1000}`, `[]`, `{`, ``, `null`,
		`{"passband_hz": 1000, "stopband_hz": 3000, "montecarlo": {"trials": 50, "seed": 3}}`,
	} {
		for _, kind := range []string{"spice", "bom", "json", "bode-svg", "delay-svg", "step-svg", "report", "nope"} {
			f.Add(s, "passband_hz=1000&stopband_hz=3000", kind)
		}
	}
	f.Add(`{}`, "response=bandpass&passband_hz=900,1100&stopband_hz=700,1400&approximation=chebyshev2", "spice")
	f.Add(`{}`, "passband_hz=1000&order=3&opamp_gbw_hz=1e5&topology=multiple-feedback", "bom")
	f.Add(`{}`, "passband_hz=1000,&order=%zz&gain_db=NaN", "")
	h := web.New(nil, web.Deps{MaxCostMs: 200})
	f.Fuzz(func(t *testing.T, body, query, kind string) {
		ok := map[int]bool{http.StatusOK: true, http.StatusBadRequest: true, http.StatusRequestEntityTooLarge: true, http.StatusServiceUnavailable: true}
		req := httptest.NewRequest(http.MethodPost, "/api/v1/design", strings.NewReader(body))
		req.Host = "localhost"
		req.Header.Set("Content-Type", "application/json")
		rec := httptest.NewRecorder()
		h.ServeHTTP(rec, req)
		if !ok[rec.Code] {
			t.Fatalf("POST %q: status %d: %s", body, rec.Code, rec.Body.String())
		}
		refusal(t, "POST "+body, rec)
		if rec.Code == http.StatusOK && !json.Valid(rec.Body.Bytes()) {
			t.Fatalf("POST %q: the design is not JSON", body)
		}
		// The export of the same body, as KIND.
		req = httptest.NewRequest(http.MethodPost, "/api/v1/export?"+url.Values{"as": {kind}}.Encode(), strings.NewReader(body))
		req.Host = "localhost"
		req.Header.Set("Content-Type", "application/json")
		rec = httptest.NewRecorder()
		h.ServeHTTP(rec, req)
		if !ok[rec.Code] {
			t.Fatalf("POST export as %q %q: status %d: %s", kind, body, rec.Code, rec.Body.String())
		}
		refusal(t, "POST export as "+kind+" "+body, rec)
		vals, err := url.ParseQuery(query)
		if err != nil {
			return // not a query a browser sends
		}
		query = vals.Encode() // as a browser sends it: escaped
		req = httptest.NewRequest(http.MethodGet, "/design?"+query, nil)
		req.Host = "localhost"
		rec = httptest.NewRecorder()
		h.ServeHTTP(rec, req)
		if rec.Code == http.StatusSeeOther {
			// A form's empty fields: the clean permalink, which is
			// answered without a second redirect.
			loc := rec.Header().Get("Location")
			if !strings.HasPrefix(loc, "/design?") {
				t.Fatalf("GET /design?%s: redirected to %q", query, loc)
			}
			req = httptest.NewRequest(http.MethodGet, loc, nil)
			req.Host = "localhost"
			rec = httptest.NewRecorder()
			h.ServeHTTP(rec, req)
		}
		if !ok[rec.Code] {
			t.Fatalf("GET /design?%s: status %d", query, rec.Code)
		}
	})
}

// refusal fails the test when rec is a 400 without the JSON error and
// field the API promises.
func refusal(t *testing.T, what string, rec *httptest.ResponseRecorder) {
	t.Helper()
	if rec.Code != http.StatusBadRequest {
		return
	}
	var e struct {
		Error *string `json:"error"`
		Field *string `json:"field"`
	}
	if err := json.Unmarshal(rec.Body.Bytes(), &e); err != nil || e.Error == nil || e.Field == nil || *e.Error == "" {
		t.Fatalf("%q: a 400 without error and field: %s", what, rec.Body.String())
	}
}
