//go:build load

package web_test

import (
	"bytes"
	"fmt"
	"io"
	"log/slog"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"runtime"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/web"
)

// Load check bounds: 32 clients on loopback for 10 s, each sending at most
// loadMaxPerClient requests.
const (
	loadClients      = 32
	loadDuration     = 10 * time.Second
	loadMaxPerClient = 20000
)

// loadSpecs are the bodies the clients send, valid and invalid, with the
// status each must get.
var loadSpecs = []struct {
	body   string
	status int
}{
	{`{"passband_hz": 1000, "stopband_hz": 4000}`, 200},
	{`{"approximation": "elliptic", "passband_hz": 20000, "stopband_hz": 172000, "passband_ripple_db": 0.05, "stopband_atten_db": 100}`, 200},
	{`{"approximation": "chebyshev1", "passband_hz": 20000, "stopband_hz": 180000, "passband_ripple_db": 0.1, "stopband_atten_db": 110.12}`, 200},
	{`{"response": "bandpass", "approximation": "chebyshev1", "passband_hz": [2000, 40000], "stopband_hz": [400, 200000], "passband_ripple_db": 0.5, "stopband_atten_db": 45}`, 200},
	{`{"response": "highpass", "passband_hz": 5, "stopband_hz": 0.5, "stopband_atten_db": 40}`, 200},
	{`{"response": "bandstop", "approximation": "chebyshev2", "passband_hz": [30, 80], "stopband_hz": [47, 53], "stopband_atten_db": 30}`, 200},
	{`{"approximation": "bessel", "passband_hz": 50000, "order": 6, "opamp": {"ideal": true}}`, 200},
	{`{"passband_hz": 10000, "order": 8, "values": "exact"}`, 200},
	{`{"passband_hz": 1000, "stopband_hz": 800}`, 400},
	{`{"passband_hz": 1000, "stopband_hz": 1500, "stopband_atten_db": 80}`, 400},
	{`{"passband_hz": "fast"}`, 400},
	{`{"passband_hz": `, 400},
	{`{"passband_hz": 1000, "order": 2, "wobble": 1}`, 400},
	{`{"passband_hz": 1000, "order": 2` + strings.Repeat(" ", web.MaxBodyBytes) + `}`, 413},
}

type sample struct {
	d      time.Duration
	status int
	want   int
}

// TestLoad runs the load check and prints p50/p99 latency and throughput.
func TestLoad(t *testing.T) {
	runtime.GC()
	baseline := runtime.NumGoroutine()

	h := web.New(slog.New(slog.NewTextHandler(io.Discard, nil)), realDeps())
	srv := httptest.NewServer(h) // 127.0.0.1
	tr := &http.Transport{MaxIdleConnsPerHost: loadClients, MaxConnsPerHost: loadClients}
	client := &http.Client{Transport: tr, Timeout: 30 * time.Second}

	var mu sync.Mutex
	var samples []sample
	var failures []string
	deadline := time.Now().Add(loadDuration)
	var wg sync.WaitGroup
	start := time.Now()
	for c := range loadClients {
		wg.Go(func() {
			rng := rand.New(rand.NewPCG(uint64(c), 1))
			local := make([]sample, 0, 1024)
			for n := 0; n < loadMaxPerClient && time.Now().Before(deadline); n++ {
				s := loadSpecs[rng.IntN(len(loadSpecs))]
				t0 := time.Now()
				res, err := client.Post(srv.URL+"/api/v1/design", "application/json", bytes.NewReader([]byte(s.body)))
				if err != nil {
					mu.Lock()
					failures = append(failures, err.Error())
					mu.Unlock()
					continue
				}
				_, _ = io.Copy(io.Discard, res.Body)
				res.Body.Close()
				local = append(local, sample{time.Since(t0), res.StatusCode, s.status})
			}
			mu.Lock()
			samples = append(samples, local...)
			mu.Unlock()
		})
	}
	wg.Wait()
	elapsed := time.Since(start)
	srv.Close()
	tr.CloseIdleConnections()

	require.Empty(t, failures, "transport errors")
	require.NotEmpty(t, samples)
	var lat []time.Duration
	fivexx, wrong, designs := 0, 0, 0
	for _, s := range samples {
		lat = append(lat, s.d)
		if s.status >= 500 {
			fivexx++
		}
		if s.status != s.want {
			wrong++
		}
		if s.status == http.StatusOK {
			designs++
		}
	}
	slices.Sort(lat)
	p := func(q float64) time.Duration { return lat[min(len(lat)-1, int(q*float64(len(lat))))] }
	rps := float64(len(samples)) / elapsed.Seconds()
	dps := float64(designs) / elapsed.Seconds()
	t.Logf("%d requests in %v: p50 %v, p99 %v, %.0f requests/s, %.0f designs/s", len(samples), elapsed.Round(time.Millisecond), p(0.50), p(0.99), rps, dps)
	fmt.Printf("load: clients=%d requests=%d p50=%v p99=%v throughput=%.0f req/s designs=%.0f/s 5xx=%d\n",
		loadClients, len(samples), p(0.50).Round(10*time.Microsecond), p(0.99).Round(10*time.Microsecond), rps, dps, fivexx)
	require.Zero(t, fivexx, "no 5xx under load")
	require.Zero(t, wrong, "every request gets the status of its spec")

	// No goroutine outlives the server.
	var now int
	require.Eventually(t, func() bool {
		runtime.GC()
		now = runtime.NumGoroutine()
		return now <= baseline+2
	}, 10*time.Second, 50*time.Millisecond, "goroutines: %d before, %d after", baseline, now)
}
