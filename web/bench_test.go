package web_test

import (
	"log/slog"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/polewright/polewright/web"
)

// BenchmarkResultPage serves the full result page of an order-8 design
// with its three plots (when plotting is wired in) and reports the median
// server time per page beside the mean (ns/op).
func BenchmarkResultPage(b *testing.B) {
	h := web.New(slog.New(slog.DiscardHandler), realDeps())
	for _, bc := range []struct{ name, query string }{
		{"butterworth-order8", order8Query},
		{"chebyshev1-vibration", vibrationQuery},
	} {
		b.Run(bc.name, func(b *testing.B) {
			b.ReportAllocs()
			var times []time.Duration
			for b.Loop() {
				t0 := time.Now()
				rec := httptest.NewRecorder()
				h.ServeHTTP(rec, newRequest("GET", "/design?"+bc.query, nil))
				times = append(times, time.Since(t0))
				if rec.Code != http.StatusOK {
					b.Fatalf("status %d", rec.Code)
				}
			}
			slices.Sort(times)
			b.ReportMetric(float64(times[len(times)/2].Microseconds())/1000, "median-ms")
		})
	}
}

// BenchmarkAPIDesign posts a spec to /api/v1/design, one request at a time
// and from parallel clients, and reports designs per second.
func BenchmarkAPIDesign(b *testing.B) {
	h := web.New(slog.New(slog.DiscardHandler), realDeps())
	const spec = `{"approximation": "chebyshev1", "passband_hz": 20000, "stopband_hz": 180000, "passband_ripple_db": 0.1, "stopband_atten_db": 110.12}`
	post := func(b *testing.B) {
		rec := httptest.NewRecorder()
		h.ServeHTTP(rec, newRequest("POST", "/api/v1/design", strings.NewReader(spec)))
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
