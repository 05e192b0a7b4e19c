package web_test

import (
	"bufio"
	"context"
	"errors"
	"io"
	"log/slog"
	"net"
	"net/http"
	"net/http/httptest"
	"os"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web"
)

// cheapQuery is a design that costs little: order 2, no Monte Carlo.
const cheapQuery = "passband_hz=1000&stopband_hz=4000&order=2"

// errorPage is what the error page of a refusal contains.
const errorPage = "Back to the spec form"

// requirePage checks that rec is the HTML error page with status.
func requirePage(t *testing.T, rec *httptest.ResponseRecorder, status int) {
	t.Helper()
	require.Equal(t, status, rec.Code, rec.Body.String())
	require.True(t, strings.HasPrefix(rec.Header().Get("Content-Type"), "text/html"), rec.Header().Get("Content-Type"))
	require.Contains(t, rec.Body.String(), errorPage)
}

// requireJSONError checks that rec is the API's JSON error with status
// and field.
func requireJSONError(t *testing.T, rec *httptest.ResponseRecorder, status int, field string) {
	t.Helper()
	require.Equal(t, status, rec.Code, rec.Body.String())
	require.Equal(t, "application/json", rec.Header().Get("Content-Type"))
	require.Contains(t, rec.Body.String(), `"field":`)
	_, f := apiErr(t, rec.Body.Bytes())
	require.Equal(t, field, f)
}

func TestHostAllowList(t *testing.T) {
	t.Parallel()
	h := web.New(nil, web.Deps{Hosts: []string{"bench.lan", "10.0.0.7"}})
	tests := []struct {
		name, method, target, body, host string
		ok                               bool
	}{
		{"localhost", "GET", "/healthz", "", "localhost", true},
		{"localhost with port", "GET", "/healthz", "", "localhost:8080", true},
		{"localhost upper case, trailing dot", "GET", "/healthz", "", "LOCALHOST.:8080", true},
		{"127.0.0.1 with port", "GET", "/healthz", "", "127.0.0.1:55555", true},
		{"::1", "GET", "/healthz", "", "[::1]:8080", true},
		{"an added name", "GET", "/healthz", "", "bench.lan:8080", true},
		{"an added address", "GET", "/healthz", "", "10.0.0.7", true},
		{"a rebinding name", "GET", "/", "", "attacker.example:8080", false},
		{"a name that ends like an added one", "GET", "/healthz", "", "evil.bench.lan", false},
		{"no host", "GET", "/healthz", "", "", false},
		{"a rebinding name on the API", "POST", "/api/v1/design", smallSpec, "attacker.example", false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, tc.method, tc.target, tc.body, "Host", tc.host)
			if tc.ok {
				require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
				return
			}
			if strings.HasPrefix(tc.target, "/api/") {
				requireJSONError(t, rec, http.StatusMisdirectedRequest, "")
				return
			}
			requirePage(t, rec, http.StatusMisdirectedRequest)
		})
	}
}

func TestSecFetchSite(t *testing.T) {
	t.Parallel()
	h := web.New(nil, web.Deps{})
	tests := []struct {
		target, site string
		want         int
	}{
		{"/design?" + cheapQuery, "cross-site", http.StatusForbidden},
		{"/design/progress?" + cheapQuery, "cross-site", http.StatusForbidden},
		{"/download/json?" + cheapQuery, "cross-site", http.StatusForbidden},
		{"/design?" + cheapQuery, "same-origin", http.StatusOK},
		{"/design?" + cheapQuery, "same-site", http.StatusOK},
		{"/design?" + cheapQuery, "none", http.StatusOK},
		{"/design?" + cheapQuery, "", http.StatusOK},
		{"/design/progress?" + cheapQuery, "same-origin", http.StatusOK},
		{"/", "cross-site", http.StatusOK}, // the blank form computes nothing
	}
	for _, tc := range tests {
		t.Run(tc.target+" "+tc.site, func(t *testing.T) {
			t.Parallel()
			var header []string
			if tc.site != "" {
				header = []string{"Sec-Fetch-Site", tc.site}
			}
			rec := do(t, h, "GET", tc.target, "", header...)
			if tc.want == http.StatusForbidden {
				requirePage(t, rec, tc.want)
				return
			}
			require.Equal(t, tc.want, rec.Code, rec.Body.String())
		})
	}
}

func TestHeadAndAllow(t *testing.T) {
	t.Parallel()
	h := web.New(nil, web.Deps{})
	tests := []struct {
		method, target string
		want           int
		allow          string // for 405
	}{
		{"HEAD", "/", http.StatusOK, ""},
		{"HEAD", "/healthz", http.StatusOK, ""},
		{"HEAD", "/static/style.css", http.StatusOK, ""},
		{"HEAD", "/design?" + cheapQuery, http.StatusOK, ""},
		{"HEAD", "/static/nothing.txt", http.StatusNotFound, ""},
		{"GET", "/static/nothing.txt", http.StatusNotFound, ""},
		{"POST", "/", http.StatusMethodNotAllowed, "GET, HEAD"},
		{"POST", "/design", http.StatusMethodNotAllowed, "GET, HEAD"},
		{"PUT", "/static/style.css", http.StatusMethodNotAllowed, "GET, HEAD"},
		{"DELETE", "/static/app.js", http.StatusMethodNotAllowed, "GET, HEAD"},
		{"GET", "/api/v1/design", http.StatusMethodNotAllowed, "POST"},
		{"HEAD", "/api/v1/export", http.StatusMethodNotAllowed, "POST"},
	}
	for _, tc := range tests {
		t.Run(tc.method+" "+tc.target, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, tc.method, tc.target, "")
			require.Equal(t, tc.want, rec.Code, rec.Body.String())
			if tc.method == "HEAD" && tc.want == http.StatusOK {
				get := do(t, h, "GET", tc.target, "")
				require.Equal(t, get.Header().Get("Content-Type"), rec.Header().Get("Content-Type"))
			}
			if tc.want == http.StatusNotFound && tc.method == "GET" {
				requirePage(t, rec, tc.want)
			}
			if tc.want != http.StatusMethodNotAllowed {
				return
			}
			require.Equal(t, tc.allow, rec.Header().Get("Allow"))
			if strings.HasPrefix(tc.target, "/api/") {
				requireJSONError(t, rec, tc.want, "")
			} else {
				requirePage(t, rec, tc.want)
			}
		})
	}
}

// slowPlots draws after wait, and calls during (with the request's
// cancel function) first.
type slowPlots struct {
	wait   time.Duration
	during func()
}

func (p slowPlots) Bode(w io.Writer, _ *synth.Design) error {
	if p.during != nil {
		p.during()
	}
	time.Sleep(p.wait)
	_, err := io.WriteString(w, `<svg xmlns="http://www.w3.org/2000/svg"></svg>`)
	return err
}
func (p slowPlots) GroupDelay(w io.Writer, d *synth.Design) error { return p.Bode(w, d) }
func (p slowPlots) Step(w io.Writer, d *synth.Design) error       { return p.Bode(w, d) }

// TestDeadlineWhileDrawing: a request whose deadline passes while its plots
// are drawn is answered 503 (with Retry-After, in the route's shape) and
// logged as a warning; a client that goes away meanwhile is not an ERROR.
func TestDeadlineWhileDrawing(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, method, target, body string
		cancel                     bool // the client goes away (else the deadline passes)
	}{
		{"page deadline", "GET", "/design?" + cheapQuery, "", false},
		{"download deadline", "GET", "/download/bode-svg?" + cheapQuery, "", false},
		{"api export deadline", "POST", "/api/v1/export?as=bode-svg", smallSpec, false},
		{"page client gone", "GET", "/design?" + cheapQuery, "", true},
		{"api client gone", "POST", "/api/v1/export?as=bode-svg", smallSpec, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			// Generous: the design itself takes milliseconds, the deadline
			// passes while the first plot is drawn.
			ctx, cancel := context.WithTimeout(context.Background(), 500*time.Millisecond)
			defer cancel()
			plots := slowPlots{wait: time.Second}
			if tc.cancel {
				plots = slowPlots{wait: 50 * time.Millisecond, during: cancel}
			}
			logs := &logBuffer{}
			h := web.New(slog.New(slog.NewTextHandler(logs, nil)), web.Deps{Plots: plots})
			var body io.Reader
			if tc.body != "" {
				body = strings.NewReader(tc.body)
			}
			req := httptest.NewRequestWithContext(ctx, tc.method, tc.target, body)
			req.Host = "localhost"
			rec := httptest.NewRecorder()
			h.ServeHTTP(rec, req)

			require.Equal(t, http.StatusServiceUnavailable, rec.Code, rec.Body.String())
			require.NotEmpty(t, rec.Header().Get("Retry-After"))
			if strings.HasPrefix(tc.target, "/api/") {
				requireJSONError(t, rec, http.StatusServiceUnavailable, "")
			} else {
				requirePage(t, rec, http.StatusServiceUnavailable)
			}
			require.NotContains(t, logs.String(), "level=ERROR", logs.String())
			if tc.cancel {
				require.Contains(t, logs.String(), "client_gone=true")
				require.Contains(t, logs.String(), "level=INFO msg=request")
			} else {
				require.Contains(t, logs.String(), "level=WARN msg=request")
			}
		})
	}
}

// TestSlowBodies opens more slow-body connections than there are workers
// on a loopback server: each sends the headers and "{" of a POST and
// stops. A design request sent meanwhile is answered 200 while every slow
// connection is still open and unanswered.
func TestSlowBodies(t *testing.T) {
	t.Parallel()
	const workers, slow = 2, 5
	srv := httptest.NewServer(web.New(nil, web.Deps{Workers: workers})) // on 127.0.0.1
	t.Cleanup(srv.Close)
	addr := srv.Listener.Addr().String()

	conns := make([]net.Conn, 0, slow)
	t.Cleanup(func() {
		for _, c := range conns {
			_ = c.Close()
		}
	})
	for range slow {
		c, err := net.DialTimeout("tcp", addr, 5*time.Second)
		require.NoError(t, err)
		conns = append(conns, c)
		_, err = io.WriteString(c, "POST /api/v1/design HTTP/1.1\r\nHost: "+addr+
			"\r\nContent-Type: application/json\r\nContent-Length: 1000\r\n\r\n{")
		require.NoError(t, err)
	}
	// Let the server reach the bodies of the slow requests (not a timing
	// assertion: without the fix they then hold every worker).
	time.Sleep(200 * time.Millisecond)

	client := &http.Client{Timeout: 30 * time.Second}
	res, err := client.Post(srv.URL+"/api/v1/design", "application/json", strings.NewReader(smallSpec))
	require.NoError(t, err)
	b, err := io.ReadAll(res.Body)
	require.NoError(t, res.Body.Close())
	require.NoError(t, err)
	require.Equal(t, http.StatusOK, res.StatusCode, string(b))
	require.Contains(t, string(b), `"poles_rad_s"`)

	for i, c := range conns {
		require.NoError(t, c.SetReadDeadline(time.Now().Add(20*time.Millisecond)))
		_, err := bufio.NewReader(c).ReadByte()
		require.Error(t, err)
		require.True(t, errors.Is(err, os.ErrDeadlineExceeded), "slow connection %d is still open and unanswered: %v", i, err)
	}
}
