package web

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"slices"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"github.com/go-chi/chi/v5"
)

// loopbackHosts are the names the Host header may always carry.
var loopbackHosts = []string{"localhost", "127.0.0.1", "::1"}

// hostName is the lower-case name of a Host header value, without its port,
// brackets or a trailing dot.
func hostName(host string) string {
	if h, _, err := net.SplitHostPort(host); err == nil {
		host = h
	}
	host = strings.TrimSuffix(strings.TrimPrefix(host, "["), "]")
	return strings.TrimSuffix(strings.ToLower(host), ".")
}

// checkHost refuses (421) a request whose Host is neither a loopback name
// nor one of allowed, so that a page on a name that an attacker rebinds to
// 127.0.0.1 cannot drive the workbench.
func (h *handler) checkHost(allowed []string) func(http.Handler) http.Handler {
	names := map[string]bool{}
	for _, n := range append(slices.Clone(loopbackHosts), allowed...) {
		if n = hostName(strings.TrimSpace(n)); n != "" {
			names[n] = true
		}
	}
	return func(next http.Handler) http.Handler {
		return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
			if !names[hostName(r.Host)] {
				h.fail(w, r, http.StatusMisdirectedRequest,
					fmt.Sprintf("this workbench does not answer to the host %q (start it with -host to add a name)", clip(r.Host)), "")
				return
			}
			next.ServeHTTP(w, r)
		})
	}
}

// sameSiteOnly refuses (403) a request that a browser marks as sent by
// another site (Sec-Fetch-Site: cross-site), so that other sites cannot
// spend the workbench's CPU through links and images. same-origin,
// same-site, none (typed or bookmarked) and no header at all (not a
// browser, or an old one) pass.
func (h *handler) sameSiteOnly(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if strings.EqualFold(r.Header.Get("Sec-Fetch-Site"), "cross-site") {
			h.fail(w, r, http.StatusForbidden, "designs are not computed for requests from other sites; open the link from the workbench or type it", "")
			return
		}
		next.ServeHTTP(w, r)
	})
}

// readBodyFirst reads the whole request body (at most MaxBodyBytes) before
// the request goes on to take a worker, so that a slow body holds its own
// connection only. Too large a body is answered 413, one that cannot be
// read 400.
func (h *handler) readBodyFirst(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Body == nil || r.Body == http.NoBody {
			next.ServeHTTP(w, r)
			return
		}
		field := ""
		if isAPI(r) {
			field = "json"
		}
		body, err := io.ReadAll(http.MaxBytesReader(w, r.Body, MaxBodyBytes))
		if err != nil {
			var tooBig *http.MaxBytesError
			if errors.As(err, &tooBig) {
				h.fail(w, r, http.StatusRequestEntityTooLarge, fmt.Sprintf("the request body is larger than %d bytes (64 KiB)", MaxBodyBytes), field)
				return
			}
			h.fail(w, r, http.StatusBadRequest, "the request body cannot be read", field)
			return
		}
		r.Body = io.NopCloser(bytes.NewReader(body))
		next.ServeHTTP(w, r)
	})
}

// workers bounds the design requests in progress, in two lanes by their
// estimated cost (see the package comment): a request under cheapMs takes
// one of slots, any other one of heavy, so that heavy requests never hold
// the workers cheap ones need. At most backlog wait in both lanes together
// (each for at most wait); the others are answered 503 with Retry-After,
// in the shape of the route.
type workers struct {
	h       *handler
	slots   chan struct{} // the cheap lane
	heavy   chan struct{} // the heavy lane
	cheapMs float64
	waiting atomic.Int64
	backlog int64
	wait    time.Duration
}

// newWorkers returns limit workers for cheap requests and max(1, limit/8)
// for heavy ones (one per two CPUs at the default limit).
func newWorkers(h *handler, limit, backlog int, wait time.Duration) *workers {
	return &workers{
		h: h, slots: make(chan struct{}, limit), heavy: make(chan struct{}, max(1, limit/8)),
		cheapMs: CheapCostMs, backlog: int64(backlog), wait: wait,
	}
}

// handler is the middleware that takes a worker of the request's lane.
func (wk *workers) handler(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		lane := wk.slots
		if requestCost(r.Context()) >= wk.cheapMs {
			lane = wk.heavy
		}
		select {
		case lane <- struct{}{}:
		default:
			if wk.waiting.Add(1) > wk.backlog {
				wk.waiting.Add(-1)
				wk.h.fail(w, r, http.StatusServiceUnavailable, "the workbench is busy; try again in a moment", "")
				return
			}
			t := time.NewTimer(wk.wait)
			select {
			case lane <- struct{}{}:
				t.Stop()
				wk.waiting.Add(-1)
			case <-t.C:
				wk.waiting.Add(-1)
				wk.h.fail(w, r, http.StatusServiceUnavailable, "the workbench is busy; try again in a moment", "")
				return
			case <-r.Context().Done():
				t.Stop()
				wk.waiting.Add(-1)
				// The client went away while it waited; the log says so.
				wk.h.fail(w, r, http.StatusServiceUnavailable, "the request was given up while it waited", "")
				return
			}
		}
		defer func() { <-lane }()
		next.ServeHTTP(w, r)
	})
}

// withDeadline gives the request's context a deadline of d, or of
// [HeavyDesignTimeout] for a request of the heavy lane (its cost is
// bounded by admission; under load it runs on its lane's share of the
// CPU), whose write deadline it moves to match. The handlers answer a
// crossed deadline themselves (503), whatever they were doing.
func withDeadline(d time.Duration) func(http.Handler) http.Handler {
	return func(next http.Handler) http.Handler {
		return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
			dl := d
			if requestCost(r.Context()) >= CheapCostMs {
				dl = max(d, HeavyDesignTimeout)
				// Errors: the writer has no deadline to set.
				_ = http.NewResponseController(w).SetWriteDeadline(time.Now().Add(dl + 10*time.Second))
			}
			ctx, cancel := context.WithTimeout(r.Context(), dl)
			defer cancel()
			next.ServeHTTP(w, r.WithContext(ctx))
		})
	}
}

// allowedMethods lists the methods that rt answers at path, HEAD with GET.
func allowedMethods(rt chi.Routes, path string) []string {
	var out []string
	for _, m := range []string{http.MethodGet, http.MethodHead, http.MethodPost, http.MethodPut, http.MethodPatch, http.MethodDelete, http.MethodOptions} {
		match := rt.Match(chi.NewRouteContext(), m, path)
		if m == http.MethodHead && !match {
			match = slices.Contains(out, http.MethodGet)
		}
		if match {
			out = append(out, m)
		}
	}
	return out
}

// retryAfter is the Retry-After of a 503, in seconds.
var retryAfter = strconv.Itoa(1)
