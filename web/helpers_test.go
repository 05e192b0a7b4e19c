package web_test

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"net/url"
	"regexp"
	"strings"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web"
)

// Specs of our own scenarios, as queries and as JSON.
const (
	// An 18-bit vibration-monitoring converter sampling at 200 kHz with a
	// 20 kHz signal band: stopband at fs − fb = 180 kHz, 6.02·18 + 1.76 =
	// 110.12 dB down (common practice); a Chebyshev I keeps 0.1 dB ripple.
	vibrationQuery = "response=lowpass&approximation=chebyshev1&passband_hz=20000&stopband_hz=180000" +
		"&passband_ripple_db=0.1&stopband_atten_db=110.12&topology=auto&resistor_series=E96&capacitor_series=E12&values=series"
	// A 2–40 kHz hydrophone band, Chebyshev I bandpass.
	bandQuery = "response=bandpass&approximation=chebyshev1&passband_hz=2000,40000&stopband_hz=400,200000&passband_ripple_db=0.5&stopband_atten_db=45"
	// A small Butterworth lowpass, for the API.
	smallSpec = `{"passband_hz": 1000, "stopband_hz": 4000, "stopband_atten_db": 40}`
	// Order 8 Butterworth for the benchmarks and the page-time target.
	order8Query = "response=lowpass&approximation=butterworth&passband_hz=10000&order=8&stopband_hz=40000"
	// The elliptic-8 of synth's benchmarks (1 kHz, 1 dB ripple, 60 dB
	// down) with every panel of the page: a 16-bit converter at 48 kHz
	// (noise, settling to ½ LSB) and 200 Monte Carlo trials, for the
	// page-time target of a cached view.
	elliptic8Query = "response=lowpass&approximation=elliptic&passband_hz=1000&order=8&passband_ripple_db=1&stopband_atten_db=60" +
		"&converter_sample_rate_hz=48000&converter_bits=16&converter_full_scale_vpp=4&montecarlo_trials=200&montecarlo_seed=1"
)

// logBuffer collects the server's log for checks; safe for concurrent use.
type logBuffer struct {
	mu  sync.Mutex
	buf bytes.Buffer
}

func (l *logBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.buf.Write(p)
}

func (l *logBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.buf.String()
}

// newHandler returns the workbench with the real drawing dependencies and
// a log that the test can read.
func newHandler(t testing.TB) (http.Handler, *logBuffer) {
	t.Helper()
	logs := &logBuffer{}
	return web.New(slog.New(slog.NewTextHandler(logs, nil)), realDeps()), logs
}

// do sends one request to h and returns the recorded response.
func do(t testing.TB, h http.Handler, method, target, body string, header ...string) *httptest.ResponseRecorder {
	t.Helper()
	var r io.Reader
	if body != "" {
		r = strings.NewReader(body)
	}
	req := httptest.NewRequestWithContext(context.Background(), method, target, r)
	req.Host = "localhost"
	for i := 0; i+1 < len(header); i += 2 {
		if strings.EqualFold(header[i], "Host") {
			req.Host = header[i+1]
			continue
		}
		req.Header.Set(header[i], header[i+1])
	}
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	return rec
}

// apiErr decodes the API's error body.
func apiErr(t testing.TB, body []byte) (msg, field string) {
	t.Helper()
	var e struct {
		Error string `json:"error"`
		Field string `json:"field"`
	}
	require.NoError(t, json.Unmarshal(body, &e), "error body %q", body)
	require.NotEmpty(t, e.Error)
	return e.Error, e.Field
}

var hrefRE = regexp.MustCompile(`href="([^"]*)"`)

// links returns the href values of an HTML page, unescaped.
func links(page string) []string {
	var out []string
	for _, m := range hrefRE.FindAllStringSubmatch(page, -1) {
		out = append(out, htmlUnescape(m[1]))
	}
	return out
}

func htmlUnescape(s string) string {
	return strings.NewReplacer("&amp;", "&", "&lt;", "<", "&gt;", ">", "&#34;", `"`, "&#39;", "'", "&quot;", `"`).Replace(s)
}

// sectionCount is the number of sections synth designs for a spec query.
func sectionCount(t testing.TB, specJSON string) int {
	t.Helper()
	spec, err := synth.ParseSpecBytes([]byte(specJSON))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	return len(d.Sections)
}

// hasCircuit reports whether this build maps designs onto circuits.
func hasCircuit(t testing.TB) bool {
	t.Helper()
	spec, err := synth.ParseSpecBytes([]byte(smallSpec))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	_, err = d.Chain()
	return err == nil
}

// newRequest is httptest.NewRequest for a workbench on localhost (the
// host the handler accepts).
func newRequest(method, target string, body io.Reader) *http.Request {
	req := httptest.NewRequest(method, target, body)
	req.Host = "localhost"
	return req
}

// followClean requests a form submission's target (every field, most of
// them empty), checks that the workbench answers 303 with the permalink
// that carries no empty parameter, and returns the response to that.
func followClean(t testing.TB, h http.Handler, target string) *httptest.ResponseRecorder {
	t.Helper()
	rec := do(t, h, http.MethodGet, target, "")
	require.Equal(t, http.StatusSeeOther, rec.Code, rec.Body.String())
	loc := rec.Header().Get("Location")
	u, err := url.Parse(loc)
	require.NoError(t, err)
	for k, vs := range u.Query() {
		for _, v := range vs {
			require.NotEmpty(t, v, "parameter %s of %s", k, loc)
		}
	}
	return do(t, h, http.MethodGet, loc, "")
}
