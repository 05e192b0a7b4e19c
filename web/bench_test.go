package web_test

import (
	"fmt"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"slices"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/web"
)

// BenchmarkResultPage serves the full result page of an order-8 design
// with its three plots (when plotting is wired in) and reports the median
// server time per page beside the mean (ns/op). Each page has a seed of
// its own (no trials: the same design), so that every page is designed
// rather than served from the cache; "cached" serves one stored design,
// and "elliptic-8-cached" the stored elliptic-8 design with every panel
// (converter, noise, Monte Carlo): what a page view costs beside the
// design, the drawing and the template.
func BenchmarkResultPage(b *testing.B) {
	h := web.New(slog.New(slog.DiscardHandler), realDeps())
	for _, bc := range []struct{ name, query string }{
		{"butterworth-order8", order8Query},
		{"chebyshev1-vibration", vibrationQuery},
		{"cached", order8Query},
		{"elliptic-8-cached", elliptic8Query},
	} {
		b.Run(bc.name, func(b *testing.B) {
			b.ReportAllocs()
			var times []time.Duration
			seed := 0
			if strings.HasSuffix(bc.name, "cached") {
				// Store the design before the timer starts.
				rec := httptest.NewRecorder()
				h.ServeHTTP(rec, newRequest("GET", "/design?"+bc.query, nil))
				if rec.Code != http.StatusOK {
					b.Fatalf("status %d", rec.Code)
				}
			}
			start := cpuTime()
			for b.Loop() {
				query := bc.query
				if !strings.HasSuffix(bc.name, "cached") {
					seed++
					query += "&montecarlo_seed=" + strconv.Itoa(seed)
				}
				t0 := time.Now()
				w := &discardWriter{}
				h.ServeHTTP(w, newRequest("GET", "/design?"+query, nil))
				times = append(times, time.Since(t0))
				if w.code != http.StatusOK || w.n == 0 {
					b.Fatalf("status %d, %d bytes", w.code, w.n)
				}
			}
			b.ReportMetric(float64(cpuTime()-start)/float64(b.N)/1e6, "cpu-ms/op")
			slices.Sort(times)
			b.ReportMetric(float64(times[len(times)/2].Microseconds())/1000, "median-ms")
		})
	}
}

// discardWriter is a response writer that counts the body and keeps
// nothing, as a connection's buffered writer would: httptest's recorder
// grows a buffer to the whole page, a tenth of the allocation measured.
type discardWriter struct {
	header http.Header
	code   int
	n      int
}

func (w *discardWriter) Header() http.Header {
	if w.header == nil {
		w.header = http.Header{}
	}
	return w.header
}

func (w *discardWriter) WriteHeader(code int) {
	if w.code == 0 {
		w.code = code
	}
}

func (w *discardWriter) Write(p []byte) (int, error) {
	w.WriteHeader(http.StatusOK)
	w.n += len(p)
	return len(p), nil
}

// BenchmarkAPIDesign posts a spec to /api/v1/design, one request at a time
// and from parallel clients, and reports designs per second. Each request
// has a seed of its own (no trials: the same design), so that each is
// designed rather than served from the cache.
func BenchmarkAPIDesign(b *testing.B) {
	h := web.New(slog.New(slog.DiscardHandler), realDeps())
	const spec = `{"approximation": "chebyshev1", "passband_hz": 20000, "stopband_hz": 180000, "passband_ripple_db": 0.1, "stopband_atten_db": 110.12, "montecarlo": {"seed": %d}}`
	var seed atomic.Int64
	post := func(b *testing.B) {
		// Each request finds its own polynomial roots, as a new design
		// would (the seed changes the trials, not the circuit).
		circuit.ResetRootCache()
		rec := httptest.NewRecorder()
		h.ServeHTTP(rec, newRequest("POST", "/api/v1/design", strings.NewReader(fmt.Sprintf(spec, seed.Add(1)))))
		if rec.Code != http.StatusOK {
			b.Fatalf("status %d", rec.Code)
		}
	}
	b.Run("serial", func(b *testing.B) {
		b.ReportAllocs()
		t0 := time.Now()
		for b.Loop() {
			post(b)
		}
		b.ReportMetric(float64(b.N)/time.Since(t0).Seconds(), "designs/s")
	})
	b.Run("parallel", func(b *testing.B) {
		b.ReportAllocs()
		t0 := time.Now()
		b.RunParallel(func(pb *testing.PB) {
			for pb.Next() {
				post(b)
			}
		})
		b.ReportMetric(float64(b.N)/time.Since(t0).Seconds(), "designs/s")
	})
}

// cpuTime is the process's user and system CPU time so far: a view's CPU
// (cpu-ms/op) counts the plots and schematics drawn on other goroutines,
// which wall time per view does not.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
