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

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web"
)

// Load check bounds: 32 clients on loopback for 10 s, each sending at most
// loadMaxPerClient requests. The mixed workload runs loadOrdinary clients
// of loadSpecs for loadDuration alone, then beside loadHeavy clients that
// send the costliest spec the server admits.
const (
	loadClients      = 32
	loadDuration     = 10 * time.Second
	loadMaxPerClient = 20000
	loadHeavy        = 4
	loadOrdinary     = 28
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

	t.Run("ordinary", func(t *testing.T) {
		ord, _ := runLoad(t, loadClients, 0)
		ord.report(t, "load", loadClients)
	})
	var alone, mixed loadResult
	t.Run("mixed/without-heavy", func(t *testing.T) {
		alone, _ = runLoad(t, loadOrdinary, 0)
		alone.report(t, "load ordinary alone", loadOrdinary)
	})
	t.Run("mixed/with-heavy", func(t *testing.T) {
		var heavy loadResult
		mixed, heavy = runLoad(t, loadOrdinary, loadHeavy)
		mixed.report(t, "load ordinary beside heavy", loadOrdinary)
		heavy.print("load heavy", loadHeavy)
		for _, s := range heavy.samples {
			require.Contains(t, []int{http.StatusOK, http.StatusServiceUnavailable}, s.status, "a heavy request is designed or told to retry")
		}
	})
	if len(alone.samples) > 0 && len(mixed.samples) > 0 {
		fmt.Printf("load: ordinary p99 %v alone, %v beside %d heavy clients (%.2fx)\n",
			alone.p(0.99).Round(10*time.Microsecond), mixed.p(0.99).Round(10*time.Microsecond), loadHeavy,
			float64(mixed.p(0.99))/float64(alone.p(0.99)))
	}

	// No goroutine outlives the servers.
	var now int
	require.Eventually(t, func() bool {
		runtime.GC()
		now = runtime.NumGoroutine()
		return now <= baseline+2
	}, 10*time.Second, 50*time.Millisecond, "goroutines: %d before, %d after", baseline, now)
}

// loadResult is one class of requests of a run.
type loadResult struct {
	samples []sample
	elapsed time.Duration
	lat     []time.Duration
}

func (lr *loadResult) p(q float64) time.Duration {
	if lr.lat == nil {
		for _, s := range lr.samples {
			lr.lat = append(lr.lat, s.d)
		}
		slices.Sort(lr.lat)
	}
	if len(lr.lat) == 0 {
		return 0
	}
	return lr.lat[min(len(lr.lat)-1, int(q*float64(len(lr.lat))))]
}

// print prints the class's figures; it returns the count of 5xx.
func (lr *loadResult) print(name string, clients int) int {
	fivexx, designs := 0, 0
	for _, s := range lr.samples {
		if s.status >= 500 {
			fivexx++
		}
		if s.status == http.StatusOK {
			designs++
		}
	}
	secs := lr.elapsed.Seconds()
	fmt.Printf("%s: clients=%d requests=%d p50=%v p99=%v throughput=%.0f req/s designs=%.1f/s 5xx=%d\n",
		name, clients, len(lr.samples), lr.p(0.50).Round(10*time.Microsecond), lr.p(0.99).Round(10*time.Microsecond),
		float64(len(lr.samples))/secs, float64(designs)/secs, fivexx)
	return fivexx
}

// report prints the class's figures and requires no 5xx and every status
// as its spec's.
func (lr *loadResult) report(t *testing.T, name string, clients int) {
	t.Helper()
	require.NotEmpty(t, lr.samples)
	fivexx := lr.print(name, clients)
	wrong := 0
	for _, s := range lr.samples {
		if s.status != s.want {
			wrong++
		}
	}
	require.Zero(t, fivexx, "no 5xx under load")
	require.Zero(t, wrong, "every request gets the status of its spec")
}

// uncached gives body a Monte Carlo seed of its own (a seed changes the
// canonical spec, so the cache holds no design for it, whether or not the
// spec asks for trials). A body that is not an object, or that is refused
// anyway, keeps its status.
func uncached(body string, seed uint64) string {
	if strings.Contains(body, `"seed": 1,`) {
		return strings.Replace(body, `"seed": 1,`, fmt.Sprintf(`"seed": %d,`, seed), 1)
	}
	if strings.HasPrefix(body, "{") && !strings.Contains(body, "montecarlo") {
		return fmt.Sprintf(`{"montecarlo": {"seed": %d}, `, seed) + body[1:]
	}
	return body
}

// heavyLoadSpec is the costliest spec the server admits: an order-20
// bandstop of state-variable notch stages with the most trials under the
// cost bound.
func heavyLoadSpec(t *testing.T) string {
	const base = `{"response": "bandstop", "approximation": "butterworth", "order": 20, "passband_hz": [900, 1100], "topology": "state-variable", "tolerance": {"distribution": "gaussian"}, "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 2}, "montecarlo": {"seed": 1, "trials": %d}}`
	s, err := synth.ParseSpecBytes(fmt.Appendf(nil, base, 1))
	require.NoError(t, err)
	n := synth.MaxTrialsWithin(s, web.DefaultMaxCostMs)
	require.Positive(t, n)
	return fmt.Sprintf(base, n)
}

// runLoad runs ordinary clients of loadSpecs and heavy clients of
// heavyLoadSpec against one server on loopback for loadDuration.
func runLoad(t *testing.T, ordinary, heavy int) (ord, hv loadResult) {
	h := web.New(slog.New(slog.NewTextHandler(io.Discard, nil)), realDeps())
	srv := httptest.NewServer(h) // 127.0.0.1
	clients := ordinary + heavy
	tr := &http.Transport{MaxIdleConnsPerHost: clients, MaxConnsPerHost: clients}
	client := &http.Client{Transport: tr, Timeout: 30 * time.Second}
	heavyBody := ""
	if heavy > 0 {
		heavyBody = heavyLoadSpec(t)
	}

	var mu sync.Mutex
	var failures []string
	deadline := time.Now().Add(loadDuration)
	var wg sync.WaitGroup
	start := time.Now()
	for c := range clients {
		isHeavy := c < heavy
		wg.Go(func() {
			rng := rand.New(rand.NewPCG(uint64(c), 1))
			local := make([]sample, 0, 1024)
			for n := 0; n < loadMaxPerClient && time.Now().Before(deadline); n++ {
				s := loadSpecs[rng.IntN(len(loadSpecs))]
				if isHeavy {
					s.body, s.status = heavyBody, http.StatusOK
				}
				// Every request its own seed, so that the design cache
				// never answers: the check measures computation.
				s.body = uncached(s.body, uint64(c)<<32|uint64(n))
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
			if isHeavy {
				hv.samples = append(hv.samples, local...)
			} else {
				ord.samples = append(ord.samples, local...)
			}
			mu.Unlock()
		})
	}
	wg.Wait()
	ord.elapsed = time.Since(start)
	hv.elapsed = ord.elapsed
	srv.Close()
	tr.CloseIdleConnections()
	require.Empty(t, failures, "transport errors")
	return ord, hv
}
