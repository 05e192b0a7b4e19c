package web_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"html"
	"io"
	"log/slog"
	"net/http"
	"net/url"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/web"
	"github.com/polewright/polewright/web/draw"
	"github.com/polewright/polewright/web/export"
	"github.com/polewright/polewright/web/static"
)

func TestRoutes(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	circuitStatus := http.StatusNotImplemented // the status of a circuit export without the mapping
	if hasCircuit(t) {
		circuitStatus = http.StatusOK
	}
	big := `{"passband_hz": 1000, "order": 2, "gain_db": 0` + strings.Repeat(" ", web.MaxBodyBytes) + `}`
	tests := []struct {
		name       string
		method     string
		target     string
		body       string
		header     []string
		wantStatus int
		wantType   string // media type prefix
		wantField  string // for API errors: the field named
		contains   []string
		short      bool // the body is short: long input is cut
	}{
		{name: "home", method: "GET", target: "/", wantStatus: 200, wantType: "text/html",
			contains: []string{`data-testid="spec-form"`, `action="/design"`, `name="passband_hz"`, `name="opamp_ideal"`, `name="adc_bits"`, "low-voltage signal circuits"}},
		{name: "home prefilled", method: "GET", target: "/?passband_hz=1234", wantStatus: 200, wantType: "text/html",
			contains: []string{`value="1234"`}},
		{name: "home unknown parameter", method: "GET", target: "/?wobble=1", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="form-error"`, "wobble"}},
		{name: "design", method: "GET", target: "/design?" + vibrationQuery, wantStatus: 200, wantType: "text/html",
			contains: []string{`data-testid="result"`, `data-testid="stage-table"`, `data-testid="verdict"`, "Chebyshev I lowpass, order"}},
		// Butterworth order 2 at 4× the passband edge: 10·log10(1 + (10^0.1 − 1)·4⁴) ≈ 18.2 dB < 40 dB (closed form).
		{name: "design that misses", method: "GET", target: "/design?passband_hz=1000&stopband_hz=4000&order=2", wantStatus: 200, wantType: "text/html",
			contains: []string{"misses the stopband attenuation by 21.72 dB", `class="verdict bad"`, `data-testid="check-built-mask"`}},
		{name: "design band", method: "GET", target: "/design?" + bandQuery, wantStatus: 200, wantType: "text/html",
			contains: []string{"Chebyshev I bandpass"}},
		{name: "design bad field", method: "GET", target: "/design?passband_hz=1000&stopband_hz=800", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-stopband_hz"`, "must be above the passband edge for a lowpass"}},
		{name: "design missing passband", method: "GET", target: "/design?stopband_hz=800", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-passband_hz"`, "is required"}},
		{name: "design not a number", method: "GET", target: "/design?passband_hz=fast&stopband_hz=4000", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-passband_hz"`, "must be a number"}},
		{name: "design unknown parameter", method: "GET", target: "/design?passband_hz=1000&stopband_hz=4000&cutoff=3&zap=1", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="form-error"`, `unknown parameters &#34;cutoff&#34;, &#34;zap&#34;`}},
		{name: "design repeated parameter", method: "GET", target: "/design?passband_hz=1000&passband_hz=2000&stopband_hz=4000", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-passband_hz"`, "is given 2 times"}},
		{name: "design ideal op-amp with gbw", method: "GET", target: "/design?passband_hz=1000&stopband_hz=4000&opamp_ideal=1&opamp_gbw_hz=1e6", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-opamp_ideal"`}},
		{name: "design opamp gbw out of range", method: "GET", target: "/design?passband_hz=1000&stopband_hz=4000&opamp_gbw_hz=10", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-opamp_gbw_hz"`}},
		{name: "design POST", method: "POST", target: "/design", wantStatus: 405, wantType: "text/html"},
		{name: "download json", method: "GET", target: "/download/json?" + vibrationQuery, wantStatus: 200, wantType: "application/json",
			contains: []string{`"poles_rad_s"`}},
		{name: "download spice", method: "GET", target: "/download/spice?" + vibrationQuery, wantStatus: circuitStatus},
		{name: "download bom", method: "GET", target: "/download/bom?" + vibrationQuery, wantStatus: circuitStatus},
		{name: "download unknown kind", method: "GET", target: "/download/pdf?" + vibrationQuery, wantStatus: 404, wantType: "text/html"},
		{name: "download bad spec", method: "GET", target: "/download/json?passband_hz=-1", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-passband_hz"`}},
		{name: "api design", method: "POST", target: "/api/v1/design", body: smallSpec, wantStatus: 200, wantType: "application/json",
			contains: []string{`"order"`, `"poles_rad_s"`, `"zeros_rad_s"`, `"gain"`, `"sections"`, `"response"`, `"meets_mask"`}},
		{name: "api design bad field", method: "POST", target: "/api/v1/design", body: `{"passband_hz": 1000, "stopband_hz": 800}`,
			wantStatus: 400, wantType: "application/json", wantField: "stopband_hz"},
		{name: "api design unknown field", method: "POST", target: "/api/v1/design", body: `{"passband_hz": 1000, "order": 2, "wobble": 1}`,
			wantStatus: 400, wantType: "application/json", wantField: "wobble"},
		{name: "api design nested field", method: "POST", target: "/api/v1/design", body: `{"passband_hz": 1000, "order": 2, "opamp": {"gbw_hz": 1}}`,
			wantStatus: 400, wantType: "application/json", wantField: "opamp.gbw_hz"},
		{name: "api design equaliser out of reach", method: "POST", target: "/api/v1/design",
			body:       `{"approximation": "elliptic", "passband_hz": 1000, "order": 7, "stopband_atten_db": 60, "delay_equalizer": {"max_spread_pct": 0.1}}`,
			wantStatus: 400, wantType: "application/json", wantField: "delay_equalizer.max_spread_pct"},
		{name: "api design equaliser", method: "POST", target: "/api/v1/design",
			body:       `{"passband_hz": 1000, "order": 4, "delay_equalizer": {"max_spread_pct": 2}}`,
			wantStatus: 200, wantType: "application/json", contains: []string{`"kind":"allpass"`, `"topology":"allpass"`}},
		// Issue 9: strict input.
		{name: "api design duplicate key", method: "POST", target: "/api/v1/design", body: `{"passband_hz": 1000, "order": 2, "order": 3}`,
			wantStatus: 400, wantType: "application/json", wantField: "order", contains: []string{"given twice"}},
		{name: "api design case variant", method: "POST", target: "/api/v1/design", body: `{"passband_hz": 1000, "Passband_Hz": 2000, "order": 2}`,
			wantStatus: 400, wantType: "application/json", wantField: "Passband_Hz", contains: []string{"case-sensitive"}},
		{name: "api design quoted number", method: "POST", target: "/api/v1/design", body: `{"passband_hz": 1000, "order": "5"}`,
			wantStatus: 400, wantType: "application/json", wantField: "order", contains: []string{"quoted"}},
		{name: "api design long unknown key cut", method: "POST", target: "/api/v1/design", body: `{"passband_hz": 1000, "order": 2, "` + strings.Repeat("k", 60000) + `": 1}`,
			wantStatus: 400, wantType: "application/json", wantField: strings.Repeat("k", 40) + "…", short: true},
		{name: "design hexadecimal float", method: "GET", target: "/design?passband_hz=0x1p10&stopband_hz=4000", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-passband_hz"`}},
		{name: "design underscores", method: "GET", target: "/design?passband_hz=1_000&stopband_hz=4000", wantStatus: 400, wantType: "text/html",
			contains: []string{`data-testid="error-passband_hz"`}},
		{name: "api design malformed", method: "POST", target: "/api/v1/design", body: `{"passband_hz": `,
			wantStatus: 400, wantType: "application/json", wantField: "json"},
		{name: "api design empty", method: "POST", target: "/api/v1/design", wantStatus: 400, wantType: "application/json", wantField: "json"},
		{name: "api design too big", method: "POST", target: "/api/v1/design", body: big, wantStatus: 413, wantType: "application/json", wantField: "json"},
		{name: "api design GET", method: "GET", target: "/api/v1/design", wantStatus: 405, wantType: "application/json"},
		{name: "api unknown route", method: "GET", target: "/api/v1/nothing", wantStatus: 404, wantType: "application/json"},
		{name: "api unknown POST", method: "POST", target: "/api/v2/design", body: smallSpec, wantStatus: 404, wantType: "application/json"},
		{name: "api export json", method: "POST", target: "/api/v1/export?as=json", body: smallSpec, wantStatus: 200, wantType: "application/json",
			contains: []string{`"poles_rad_s"`}},
		{name: "api export spice", method: "POST", target: "/api/v1/export?as=spice", body: smallSpec, wantStatus: circuitStatus},
		{name: "api export bom", method: "POST", target: "/api/v1/export?as=bom", body: smallSpec, wantStatus: circuitStatus},
		{name: "api export unknown kind", method: "POST", target: "/api/v1/export?as=pdf", body: smallSpec,
			wantStatus: 400, wantType: "application/json", wantField: "as"},
		{name: "api export no kind", method: "POST", target: "/api/v1/export", body: smallSpec,
			wantStatus: 400, wantType: "application/json", wantField: "as"},
		{name: "api export unknown parameter", method: "POST", target: "/api/v1/export?as=json&x=1", body: smallSpec,
			wantStatus: 400, wantType: "application/json", wantField: "x"},
		{name: "api export bad spec", method: "POST", target: "/api/v1/export?as=json", body: `{"passband_hz": "fast"}`,
			wantStatus: 400, wantType: "application/json", wantField: "passband_hz"},
		{name: "api export too big", method: "POST", target: "/api/v1/export?as=json", body: big, wantStatus: 413, wantType: "application/json", wantField: "json"},
		{name: "api export GET", method: "GET", target: "/api/v1/export?as=json", wantStatus: 405, wantType: "application/json"},
		{name: "api cross-origin POST", method: "POST", target: "/api/v1/design", body: smallSpec, header: []string{"Sec-Fetch-Site", "cross-site"},
			wantStatus: 403, wantType: "application/json"},
		{name: "api same-origin POST", method: "POST", target: "/api/v1/design", body: smallSpec, header: []string{"Sec-Fetch-Site", "same-origin"},
			wantStatus: 200, wantType: "application/json"},
		{name: "style sheet", method: "GET", target: "/static/style.css", wantStatus: 200, wantType: "text/css"},
		{name: "script", method: "GET", target: "/static/app.js", wantStatus: 200, wantType: "text/javascript"},
		{name: "no static listing", method: "GET", target: "/static/", wantStatus: 404},
		{name: "no static file", method: "GET", target: "/static/secret.txt", wantStatus: 404},
		{name: "health", method: "GET", target: "/healthz", wantStatus: 200, wantType: "text/plain", contains: []string{"ok"}},
		{name: "page not found", method: "GET", target: "/nothing", wantStatus: 404, wantType: "text/html"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, tc.method, tc.target, tc.body, tc.header...)
			require.Equal(t, tc.wantStatus, rec.Code, rec.Body.String())
			if tc.wantType != "" {
				require.True(t, strings.HasPrefix(rec.Header().Get("Content-Type"), tc.wantType), "Content-Type %q", rec.Header().Get("Content-Type"))
			}
			if strings.HasPrefix(tc.target, "/api/") && rec.Code >= 400 {
				_, field := apiErr(t, rec.Body.Bytes())
				require.Equal(t, tc.wantField, field)
			} else {
				require.Empty(t, tc.wantField, "wantField is for API errors")
			}
			for _, s := range tc.contains {
				require.Contains(t, rec.Body.String(), s)
			}
			if tc.short {
				require.Less(t, rec.Body.Len(), 2000, "a long name is cut in the error")
			}
		})
	}
}

// TestExports checks every export kind through the API and the download
// route: the same bytes as export.Write (the plots: as package plotting
// draws them, which export.Write does too once it has them), with its
// media type. A kind this build cannot write yet is skipped with the
// reason.
func TestExports(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	spec, err := synth.ParseSpecBytes([]byte(smallSpec))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	plots := draw.Plots{}
	for _, kind := range export.Kinds {
		t.Run(kind, func(t *testing.T) {
			t.Parallel()
			var want bytes.Buffer
			if err := export.Write(&want, d, kind); err != nil {
				t.Skipf("export %s is not available in this build: %v", kind, err)
			}
			if export.IsSVG(kind) {
				require.Contains(t, want.String(), "<title>polewright: ", "every SVG export carries a title")
				require.Contains(t, want.String(), "<desc>spec: {", "and the spec")
			}
			var page bytes.Buffer
			var err error
			switch kind {
			case "bode-svg":
				err = plots.Bode(&page, d)
			case "passband-svg":
				err = plots.Passband(&page, d)
			case "delay-svg":
				err = plots.GroupDelay(&page, d)
			case "step-svg":
				err = plots.Step(&page, d)
			case "noise-svg":
				err = plots.Noise(&page, d)
			}
			require.NoError(t, err)
			if page.Len() > 0 {
				require.Equal(t, string(export.LabelSVG(page.Bytes(), d, kind)), want.String(), "the page's plot, labelled, is the CLI's export")
			}
			rec := do(t, h, "POST", "/api/v1/export?as="+kind, smallSpec)
			require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
			require.Equal(t, export.ContentType(kind), rec.Header().Get("Content-Type"))
			require.Equal(t, want.String(), rec.Body.String())

			rec = do(t, h, "GET", "/download/"+kind+"?passband_hz=1000&stopband_hz=4000&stopband_atten_db=40", "")
			require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
			require.Equal(t, export.ContentType(kind), rec.Header().Get("Content-Type"))
			require.Equal(t, fmt.Sprintf("attachment; filename=%q", export.DesignFileName(d, kind)), rec.Header().Get("Content-Disposition"))
			require.Equal(t, want.String(), rec.Body.String())
		})
	}
}

func TestSecurityHeaders(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	tests := []struct {
		name, method, target, body string
	}{
		{"home", "GET", "/", ""},
		{"design", "GET", "/design?" + vibrationQuery, ""},
		{"bad design", "GET", "/design?passband_hz=x", ""},
		{"api", "POST", "/api/v1/design", smallSpec},
		{"api error", "POST", "/api/v1/design", "{"},
		{"api not found", "GET", "/api/x", ""},
		{"static", "GET", "/static/style.css", ""},
		{"not found", "GET", "/x", ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, tc.method, tc.target, tc.body)
			hd := rec.Header()
			csp := hd.Get("Content-Security-Policy")
			require.Contains(t, csp, "default-src 'self'")
			require.Contains(t, csp, "frame-ancestors 'none'")
			require.Contains(t, csp, "script-src 'self'")
			require.NotContains(t, csp, "script-src 'self' 'unsafe-inline'")
			require.Equal(t, "nosniff", hd.Get("X-Content-Type-Options"))
			require.Equal(t, "no-referrer", hd.Get("Referrer-Policy"))
		})
	}
}

// TestNoInlineScript checks that the pages need nothing the CSP forbids:
// no inline script, no style element, the script loaded from the server.
func TestNoInlineScript(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	for _, target := range []string{"/", "/design?" + vibrationQuery, "/design?passband_hz=x"} {
		body := do(t, h, "GET", target, "").Body.String()
		for _, m := range regexp.MustCompile(`<script[^>]*>`).FindAllString(body, -1) {
			require.Regexp(t, `src="/static/app\.js\?v=[0-9a-f]+"`, m)
		}
		require.NotContains(t, body, "<style")
		require.NotRegexp(t, `\son[a-z]+=`, body, "no inline event handlers")
	}
}

// TestPermalinkRoundTrip submits the form as a browser would (every
// control, empty ones included), then checks that the result page's
// permalink and download links reproduce the same spec.
func TestPermalinkRoundTrip(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	tests := []struct {
		name string
		form url.Values
	}{
		{"vibration adc", url.Values{
			"response": {"lowpass"}, "approximation": {"chebyshev1"}, "passband_hz": {"20000"}, "stopband_hz": {"180000"},
			"passband_ripple_db": {"0.1"}, "stopband_atten_db": {"110.12"}, "order": {""}, "gain_db": {""},
			"topology": {"auto"}, "resistor_series": {"E96"}, "capacitor_series": {"E12"}, "values": {"series"},
			"opamp_gbw_hz": {"20e6"}, "opamp_dc_gain_db": {""}, "adc_rate_hz": {"200000"}, "adc_bits": {"18"}, "adc_band_hz": {"20000"},
		}},
		{"band edges and ideal op-amp", url.Values{
			"response": {"bandstop"}, "approximation": {"chebyshev2"}, "passband_hz": {"30, 80"}, "stopband_hz": {"47,53"},
			"passband_ripple_db": {"1"}, "stopband_atten_db": {"30"}, "order": {""}, "gain_db": {"6"},
			"topology": {"auto"}, "resistor_series": {"E24"}, "capacitor_series": {"E6"}, "values": {"exact"},
			"opamp_gbw_hz": {""}, "opamp_dc_gain_db": {""}, "opamp_ideal": {"1"}, "adc_rate_hz": {""}, "adc_bits": {""}, "adc_band_hz": {""},
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			first := followClean(t, h, "/design?"+tc.form.Encode())
			require.Equal(t, http.StatusOK, first.Code, first.Body.String())
			page := first.Body.String()
			wantSpec := specOf(t, page)

			var permalink string
			var downloads []string
			for _, l := range links(page) {
				switch {
				case strings.HasPrefix(l, "/design?"):
					permalink = l
				case strings.HasPrefix(l, "/download/"):
					downloads = append(downloads, l)
				}
			}
			require.NotEmpty(t, permalink)
			require.NotEmpty(t, downloads)

			again := do(t, h, "GET", permalink, "")
			require.Equal(t, http.StatusOK, again.Code)
			require.JSONEq(t, wantSpec, specOf(t, again.Body.String()), "the permalink reproduces the spec")
			require.Equal(t, permalink, permalinkOf(t, again.Body.String()), "the permalink is stable")

			for _, l := range downloads {
				u, err := url.Parse(l)
				require.NoError(t, err)
				if u.Path != "/download/json" {
					continue
				}
				rec := do(t, h, "GET", l, "")
				require.Equal(t, http.StatusOK, rec.Code)
				var d struct {
					Spec json.RawMessage `json:"spec"`
				}
				require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &d))
				require.JSONEq(t, wantSpec, string(d.Spec), "the JSON download is of the same spec")
			}
		})
	}
}

var specJSONRE = regexp.MustCompile(`(?s)<pre data-testid="spec-json">(.*?)</pre>`)

// specOf returns the spec JSON a result page shows.
func specOf(t *testing.T, page string) string {
	t.Helper()
	m := specJSONRE.FindStringSubmatch(page)
	require.NotNil(t, m, "the page shows its spec")
	return htmlUnescape(m[1])
}

func permalinkOf(t *testing.T, page string) string {
	t.Helper()
	for _, l := range links(page) {
		if strings.HasPrefix(l, "/design?") {
			return l
		}
	}
	t.Fatal("no permalink")
	return ""
}

// TestEscaping sends markup in every place a user string can reach the
// page and checks that it never comes back unescaped.
func TestEscaping(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	const evil = `<script>alert(1)</script>`
	e := url.QueryEscape(evil)
	tests := []struct {
		name, target string
	}{
		{"number field", "/design?passband_hz=" + e},
		{"band field", "/design?passband_hz=1000," + e},
		{"select field", "/design?passband_hz=1000&stopband_hz=4000&response=" + e},
		{"unknown parameter name", "/design?" + e + "=1"},
		{"valid spec, helper field", "/design?passband_hz=1000&stopband_hz=4000&adc_bits=" + e},
		{"home", "/?passband_hz=" + e},
		{"helper", "/?fill=1&adc_rate_hz=" + e},
		{"download", "/download/json?passband_hz=" + e},
		{"download kind", "/download/" + url.PathEscape(evil)},
		{"not found", "/" + url.PathEscape(evil)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, "GET", tc.target, "")
			body := rec.Body.String()
			require.NotContains(t, body, "<script>alert")
			require.NotContains(t, body, "alert(1)</script>")
		})
	}
	rec := do(t, h, "POST", "/api/v1/design", `{"passband_hz": "`+`<script>alert(1)</script>"}`)
	require.Equal(t, http.StatusBadRequest, rec.Code)
	require.NotContains(t, rec.Body.String(), "<script>")
}

// TestErrorBesideField checks that each bad field's message appears in
// that control's block of the form, in words rather than JSON names.
func TestErrorBesideField(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	tests := []struct {
		name, query, control string
		words                string
	}{
		{"stopband below passband", "passband_hz=1000&stopband_hz=800", "stopband_hz", "must be above the passband edge"},
		{"order too high", "passband_hz=1000&order=30", "order", "must be from 0 to 20"},
		{"needs order above 20", "passband_hz=1000&stopband_hz=1500&stopband_atten_db=80", "stopband_hz", "order 25"},
		{"ripple above attenuation", "passband_hz=1000&stopband_hz=4000&passband_ripple_db=50&stopband_atten_db=40", "passband_ripple_db", "must be below the stopband attenuation"},
		{"band for lowpass", "passband_hz=1000,2000&stopband_hz=4000", "passband_hz", "must be a single number"},
		{"single for bandpass", "response=bandpass&passband_hz=1000&stopband_hz=4000", "passband_hz", "[lo, hi] pair"},
		{"empty edge", "passband_hz=1000,&stopband_hz=4000", "passband_hz", "empty edge"},
		{"unknown approximation", "approximation=cauer&passband_hz=1000&stopband_hz=4000", "approximation", "must be one of"},
		{"gain out of range", "passband_hz=1000&stopband_hz=4000&gain_db=90", "gain_db", "must be from"},
		{"dc gain out of range", "passband_hz=1000&stopband_hz=4000&opamp_dc_gain_db=5", "opamp_dc_gain_db", "20 to 200 dB"},
		{"checkbox value", "passband_hz=1000&stopband_hz=4000&opamp_ideal=maybe", "opamp_ideal", "must be 1"},
		{"equaliser on a highpass", "response=highpass&passband_hz=1000&order=3&delay_equalizer_max_spread_pct=2", "delay_equalizer_max_spread_pct", "equalises a lowpass or bandpass"},
		{"equaliser out of reach", "approximation=elliptic&passband_hz=1000&order=7&stopband_atten_db=60&delay_equalizer_max_spread_pct=0.1", "delay_equalizer_max_spread_pct", "8 all-pass sections"},
		{"phase ripple out of range", "approximation=linear-phase&passband_hz=1000&order=4&phase_error_deg=5", "phase_error_deg", "0.01 to 2 degrees"},
		{"gaussian beyond its limit", "approximation=gaussian&passband_hz=1000&stopband_hz=2000&stopband_atten_db=30", "stopband_hz", "cannot be met by any order"},
	}
	block := func(page, control string) string {
		i := strings.Index(page, `data-field="`+control+`"`)
		if i < 0 {
			return ""
		}
		rest := page[i:]
		if j := strings.Index(rest[1:], `data-field="`); j >= 0 {
			rest = rest[:j+1]
		}
		return rest
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, "GET", "/design?"+tc.query, "")
			require.Equal(t, http.StatusBadRequest, rec.Code)
			b := htmlUnescape(block(rec.Body.String(), tc.control))
			require.Contains(t, b, `data-testid="error-`+tc.control+`"`)
			require.Contains(t, b, tc.words)
			require.Contains(t, b, `aria-invalid="true"`)
			msg := regexp.MustCompile(`data-testid="error-[a-z_]+">([^<]*)<`).FindStringSubmatch(b)
			require.NotNil(t, msg)
			require.NotRegexp(t, `\b[a-z]+_(hz|db)\b`, msg[1], "no JSON names in the message")
		})
	}
}

// TestConverterHelper checks the helper's arithmetic and its errors.
func TestConverterHelper(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	tests := []struct {
		name, query string
		status      int
		contains    []string
	}{
		// 200 kHz − 20 kHz = 180 kHz; 6.02·18 + 1.76 = 110.12 dB (common practice).
		{"18-bit 200 kHz", "fill=1&adc_rate_hz=200000&adc_bits=18&adc_band_hz=20000&passband_hz=&response=lowpass", 200,
			[]string{`name="stopband_hz" value="180000"`, `name="stopband_atten_db" value="110.12"`, `name="passband_hz" value="20000"`, "Filled:"}},
		// 48 kHz − 20 kHz = 28 kHz; 6.02·16 + 1.76 = 98.08 dB; the signal
		// band becomes the passband (the form's initial 1000 Hz, or any
		// other edge, would design for a band the converter does not
		// carry), and the rate and bits go into the converter fields.
		{"16-bit audio sets the passband and the converter", "fill=1&adc_rate_hz=48000&adc_bits=16&adc_band_hz=20000&passband_hz=1000", 200,
			[]string{`name="stopband_hz" value="28000"`, `name="stopband_atten_db" value="98.08"`, `name="passband_hz" value="20000"`,
				`name="converter_sample_rate_hz" value="48000"`, `name="converter_bits" value="16"`, "full scale too"}},
		{"band above half the rate", "fill=1&adc_rate_hz=48000&adc_bits=16&adc_band_hz=30000", 400,
			[]string{`data-testid="error-adc_band_hz"`, "half the sample rate"}},
		{"missing bits", "fill=1&adc_rate_hz=48000&adc_band_hz=20000", 400, []string{`data-testid="error-adc_bits"`}},
		{"fractional bits", "fill=1&adc_rate_hz=48000&adc_bits=12.5&adc_band_hz=20000", 400, []string{`data-testid="error-adc_bits"`}},
		{"not a lowpass", "fill=1&adc_rate_hz=48000&adc_bits=16&adc_band_hz=20000&response=highpass", 400, []string{`data-testid="error-response"`}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, "GET", "/?"+tc.query, "")
			require.Equal(t, tc.status, rec.Code)
			body := regexp.MustCompile(`\s+`).ReplaceAllString(rec.Body.String(), " ")
			for _, s := range tc.contains {
				require.Contains(t, strings.ReplaceAll(body, `" id="f-`, `"`), s)
			}
		})
	}
}

// panicPlots panics while drawing, to exercise the recovery middleware.
type panicPlots struct{}

func (panicPlots) Bode(io.Writer, *synth.Design) error       { panic("plot exploded: secret detail") }
func (panicPlots) GroupDelay(io.Writer, *synth.Design) error { return nil }
func (panicPlots) Step(io.Writer, *synth.Design) error       { return nil }

// panicExport panics, as a bug in a handler would.
func panicExport(io.Writer, *synth.Design, string) error { panic("export exploded: secret detail") }

// failingExport fails as an internal error would.
func failingExport(io.Writer, *synth.Design, string) error {
	return errors.New("disk on fire: secret detail")
}

func TestFailuresAreOpaque(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, method, target, body string
		deps                       web.Deps
		wantStatus                 int
		logged                     string
	}{
		{"panic in a handler", "GET", "/download/json?" + vibrationQuery, "", web.Deps{Export: panicExport}, 500, "panic"},
		{"panic in a drawing", "GET", "/design?" + vibrationQuery, "", web.Deps{Plots: panicPlots{}}, 200, "drawing panicked"},
		{"internal export error", "POST", "/api/v1/export?as=json", smallSpec, web.Deps{Export: failingExport}, 500, "disk on fire"},
		{"internal download error", "GET", "/download/json?" + vibrationQuery, "", web.Deps{Export: failingExport}, 500, "disk on fire"},
		{"no circuit", "POST", "/api/v1/export?as=spice", smallSpec,
			web.Deps{Export: func(io.Writer, *synth.Design, string) error { return synth.ErrNoCircuit }}, 501, "status=501"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			logs := &logBuffer{}
			h := web.New(slog.New(slog.NewTextHandler(logs, nil)), tc.deps)
			rec := do(t, h, tc.method, tc.target, tc.body)
			require.Equal(t, tc.wantStatus, rec.Code)
			require.NotContains(t, rec.Body.String(), "secret detail")
			require.NotContains(t, rec.Body.String(), "goroutine")
			require.NotContains(t, rec.Body.String(), ".go:")
			require.Contains(t, logs.String(), tc.logged)
			require.Contains(t, logs.String(), "request_id=")
		})
	}
}

// fakePlots writes tiny SVG documents with an XML prolog, as gonum/plot
// does; fakeSchematics likewise.
type fakePlots struct{}

const prolog = `<?xml version="1.0"?>` + "\n<!-- drawn -->\n"

func (fakePlots) Bode(w io.Writer, _ *synth.Design) error {
	_, err := io.WriteString(w, prolog+`<svg xmlns="http://www.w3.org/2000/svg" data-fake="bode"></svg>`)
	return err
}
func (fakePlots) GroupDelay(w io.Writer, _ *synth.Design) error {
	_, err := io.WriteString(w, prolog+`<svg xmlns="http://www.w3.org/2000/svg" data-fake="delay"></svg>`)
	return err
}
func (fakePlots) Step(io.Writer, *synth.Design) error { return errors.New("no step today") }

type fakeSchematics struct{}

func (fakeSchematics) Stage(w io.Writer, ch circuit.Chain, stage int) error {
	_, err := io.WriteString(w, prolog+`<svg xmlns="http://www.w3.org/2000/svg" data-fake="stage-`+ch.Ref(stage, "R1")+`"></svg>`)
	return err
}

// TestDrawingsInlined checks that plots and schematics are inlined without
// their prolog, that a failing plot is left out with a note, and that the
// page offers only the downloads it can serve.
func TestDrawingsInlined(t *testing.T) {
	t.Parallel()
	h := web.New(nil, web.Deps{Plots: fakePlots{}, Schematics: fakeSchematics{}})
	rec := do(t, h, "GET", "/design?"+vibrationQuery, "")
	require.Equal(t, http.StatusOK, rec.Code)
	body := rec.Body.String()
	require.Contains(t, body, `data-fake="bode"`)
	require.Contains(t, body, `data-fake="delay"`)
	require.NotContains(t, body, "<?xml")
	require.NotContains(t, body, "<!-- drawn -->")
	require.Contains(t, body, "Some plots could not be drawn")
	require.Contains(t, body, `href="/download/bode-svg?`)
	if hasCircuit(t) {
		require.Contains(t, body, `data-fake="stage-R101"`, "schematics get chain-wide designators")
		require.Contains(t, body, `href="/download/spice?`)
	} else {
		require.NotContains(t, body, `href="/download/spice?`)
	}

	bare := do(t, web.New(nil, web.Deps{}), "GET", "/design?"+vibrationQuery, "").Body.String()
	require.NotContains(t, bare, `href="/download/bode-svg?`, "no plot downloads without plots")
	require.Contains(t, bare, `href="/download/json?`)
}

// TestStageTableRows checks that the stage table has a row per section.
func TestStageTableRows(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	tests := []struct{ name, query, spec string }{
		{"vibration", vibrationQuery, `{"approximation":"chebyshev1","passband_hz":20000,"stopband_hz":180000,"passband_ripple_db":0.1,"stopband_atten_db":110.12}`},
		{"band", bandQuery, `{"response":"bandpass","approximation":"chebyshev1","passband_hz":[2000,40000],"stopband_hz":[400,200000],"passband_ripple_db":0.5,"stopband_atten_db":45}`},
		{"order 8", order8Query, `{"passband_hz":10000,"order":8,"stopband_hz":40000}`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			body := do(t, h, "GET", "/design?"+tc.query, "").Body.String()
			require.Equal(t, sectionCount(t, tc.spec), strings.Count(body, `data-testid="stage-row"`))
		})
	}
}

// TestPageDownloads checks that the result page offers every export kind
// as a download named after the design, and that each link serves that
// kind.
func TestPageDownloads(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	const query = "approximation=elliptic&passband_hz=20000&stopband_hz=28000&passband_ripple_db=0.1&stopband_atten_db=80"
	page := do(t, h, "GET", "/design?"+query, "").Body.String()
	spec, err := synth.ParseSpecBytes([]byte(`{"approximation": "elliptic", "passband_hz": 20000, "stopband_hz": 28000, "passband_ripple_db": 0.1, "stopband_atten_db": 80}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	for _, kind := range export.Kinds {
		t.Run(kind, func(t *testing.T) {
			t.Parallel()
			re := regexp.MustCompile(`<a href="(/download/` + regexp.QuoteMeta(kind) + `\?[^"]*)" download="([^"]*)" data-kind="` + regexp.QuoteMeta(kind) + `"`)
			m := re.FindStringSubmatch(page)
			require.NotNil(t, m, "the page offers %s", kind)
			require.Equal(t, export.DesignFileName(d, kind), m[2])
			rec := do(t, h, "GET", html.UnescapeString(m[1]), "")
			require.Equal(t, http.StatusOK, rec.Code)
			require.Equal(t, export.ContentType(kind), rec.Header().Get("Content-Type"))
		})
	}
}

// TestFaviconRoute checks that /favicon.ico serves the embedded icon.
func TestFaviconRoute(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	for _, method := range []string{"GET", "HEAD"} {
		rec := do(t, h, method, "/favicon.ico", "")
		require.Equal(t, http.StatusOK, rec.Code, method)
		require.Equal(t, "image/x-icon", rec.Header().Get("Content-Type"))
		require.Equal(t, strconv.Itoa(len(static.FaviconICO())), rec.Header().Get("Content-Length"))
		if method == "GET" {
			require.Equal(t, static.FaviconICO(), rec.Body.Bytes())
		}
	}
}

// TestPageCautions checks that the result page shows synth's safety
// cautions for the workbench issue's case, a 50 Hz mains notch at
// 100 Vpp, with synth's sentences, and none for a low-voltage lowpass.
func TestPageCautions(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	const spec = `{"response": "bandstop", "passband_hz": [40, 62], "stopband_hz": [48, 52], "passband_ripple_db": 3, "stopband_atten_db": 30,
		"gain_db": -20, "converter": {"bits": 16, "sample_rate_hz": 1000, "full_scale_vpp": 10}, "resistor_range_ohm": [1000, 10000000]}`
	s, err := synth.ParseSpecBytes([]byte(spec))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	page := do(t, h, "GET", "/design?response=bandstop&passband_hz=40,62&stopband_hz=48,52&passband_ripple_db=3&stopband_atten_db=30&gain_db=-20"+
		"&converter_bits=16&converter_sample_rate_hz=1000&converter_full_scale_vpp=10&resistor_range_ohm=1000,10000000", "").Body.String()
	found := 0
	for _, c := range d.Checks {
		if c.ID == synth.CheckSafetyVoltage || c.ID == synth.CheckSafetyMains {
			found++
			require.Contains(t, page, `data-testid="check-`+c.ID+`"`)
			require.Contains(t, page, html.EscapeString(c.Text))
		}
	}
	require.Equal(t, 2, found, "both cautions apply")
	plain := do(t, h, "GET", "/design?passband_hz=1000&stopband_hz=4000", "").Body.String()
	require.NotContains(t, plain, `data-testid="check-safety-`)
}
