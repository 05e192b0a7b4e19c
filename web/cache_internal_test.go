package web

import (
	"context"
	"encoding/json"
	"errors"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// fakeSynth counts its calls and designs spec as a Design that carries the
// spec and its order. When gate is set, each call waits for it to close
// (or for its context, whose error it then returns).
type fakeSynth struct {
	calls     atomic.Int64
	cancelled atomic.Int64
	gate      chan struct{}
	err       error
	panicWith any
}

func (f *fakeSynth) synthesize(ctx context.Context, spec synth.Spec) (*synth.Design, error) {
	f.calls.Add(1)
	if f.gate != nil {
		select {
		case <-f.gate:
		case <-ctx.Done():
			f.cancelled.Add(1)
			return nil, ctx.Err()
		}
	}
	if f.panicWith != nil {
		panic(f.panicWith)
	}
	if f.err != nil {
		return nil, f.err
	}
	return &synth.Design{Spec: spec, Order: spec.Order}, nil
}

// orderSpec is a distinct spec (and so cache key) for each n.
func orderSpec(n int) synth.Spec { return synth.Spec{Order: n} }

// designSize is the cache's estimate of the fake design of orderSpec(n).
func designSize(t *testing.T, n int) int64 {
	t.Helper()
	return memSize(&synth.Design{Spec: orderSpec(n), Order: n})
}

// waitWaiters waits until the flight of spec has n waiters.
func waitWaiters(t *testing.T, c *designCache, spec synth.Spec, n int) *flight {
	t.Helper()
	key, ok := specKey(spec)
	require.True(t, ok)
	var f *flight
	require.Eventually(t, func() bool {
		c.mu.Lock()
		defer c.mu.Unlock()
		f = c.inflight[key]
		return f != nil && f.waiters == n
	}, 10*time.Second, time.Millisecond)
	return f
}

// TestCacheEviction: the least recently used designs go beyond the entry
// count and beyond the byte budget; a design read again is used again.
func TestCacheEviction(t *testing.T) {
	t.Parallel()
	size := designSize(t, 1) // orders 1–9 encode to the same length
	tests := []struct {
		name       string
		maxEntries int
		maxBytes   int64
		requests   []int // orders asked for, in turn
		kept       []int // orders stored at the end
		calls      int64
	}{
		{"by count", 3, 1 << 30, []int{1, 2, 3, 4}, []int{2, 3, 4}, 4},
		{"by size", 100, 2*size + size/2, []int{1, 2, 3}, []int{2, 3}, 3},
		{"recently used is kept", 3, 1 << 30, []int{1, 2, 3, 1, 4}, []int{1, 3, 4}, 4},
		{"evicted is computed again", 2, 1 << 30, []int{1, 2, 3, 1}, []int{3, 1}, 4},
		{"larger than the budget is not kept", 100, size - 1, []int{1, 1}, nil, 2},
		{"hits compute once", 100, 1 << 30, []int{5, 5, 5}, []int{5}, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			fs := &fakeSynth{}
			c := newDesignCache(fs.synthesize, tc.maxEntries, tc.maxBytes, time.Minute)
			for _, n := range tc.requests {
				d, err := c.design(context.Background(), orderSpec(n))
				require.NoError(t, err)
				require.Equal(t, n, d.Order)
			}
			require.Equal(t, tc.calls, fs.calls.Load())
			entries, bytes := c.stats()
			require.Equal(t, len(tc.kept), entries)
			require.Equal(t, int64(len(tc.kept))*size, bytes)
			for _, n := range tc.kept {
				key, _ := specKey(orderSpec(n))
				require.Contains(t, c.entries, key, "order %d", n)
			}
		})
	}
}

// TestCacheSingleflight: concurrent identical requests compute once and
// share the design; different specs do not wait for each other.
func TestCacheSingleflight(t *testing.T) {
	t.Parallel()
	const n = 8
	fs := &fakeSynth{gate: make(chan struct{})}
	c := newDesignCache(fs.synthesize, 10, 1<<30, time.Minute)
	got := make([]*synth.Design, n)
	errs := make([]error, n)
	var wg sync.WaitGroup
	for i := range n {
		wg.Go(func() { got[i], errs[i] = c.design(context.Background(), orderSpec(7)) })
	}
	waitWaiters(t, c, orderSpec(7), n)
	close(fs.gate)
	wg.Wait()
	require.Equal(t, int64(1), fs.calls.Load())
	for i, d := range got {
		require.NoError(t, errs[i])
		require.Same(t, got[0], d)
	}
	d, err := c.design(context.Background(), orderSpec(7))
	require.NoError(t, err)
	require.Same(t, got[0], d, "the stored design")
	require.Equal(t, int64(1), fs.calls.Load())
}

// TestCacheWaiterGoesAway: a waiter whose context ends gives up alone; the
// computation goes on for the others. The last waiter going away cancels
// it, stores nothing, and the next request computes again.
func TestCacheWaiterGoesAway(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		others int // waiters that stay
	}{
		{"others still wait", 2},
		{"the only waiter", 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			fs := &fakeSynth{gate: make(chan struct{})}
			c := newDesignCache(fs.synthesize, 10, 1<<30, time.Minute)
			spec := orderSpec(3)
			var wg sync.WaitGroup
			got := make([]*synth.Design, tc.others)
			errs := make([]error, tc.others)
			for i := range tc.others {
				wg.Go(func() { got[i], errs[i] = c.design(context.Background(), spec) })
			}
			ctx, cancel := context.WithCancel(context.Background())
			gone := make(chan error, 1)
			go func() {
				_, err := c.design(ctx, spec)
				gone <- err
			}()
			waitWaiters(t, c, spec, tc.others+1)
			cancel()
			require.ErrorIs(t, <-gone, context.Canceled)

			if tc.others > 0 {
				require.Zero(t, fs.cancelled.Load(), "the computation others wait for goes on")
				close(fs.gate)
				wg.Wait()
				for i, d := range got {
					require.NoError(t, errs[i])
					require.Equal(t, 3, d.Order)
				}
				require.Equal(t, int64(1), fs.calls.Load())
				entries, _ := c.stats()
				require.Equal(t, 1, entries)
				return
			}
			// leave waited for the abandoned run to stop.
			require.Equal(t, int64(1), fs.cancelled.Load())
			entries, _ := c.stats()
			require.Zero(t, entries)
			close(fs.gate)
			d, err := c.design(context.Background(), spec)
			require.NoError(t, err)
			require.Equal(t, 3, d.Order)
			require.Equal(t, int64(2), fs.calls.Load())
		})
	}
}

// TestCacheErrorsNotKept: a failed design (an error, a panic, a crossed
// time limit) is not stored: the next request computes again.
func TestCacheErrorsNotKept(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		fs      *fakeSynth
		timeout time.Duration
		want    string
	}{
		{"error", &fakeSynth{err: errors.New("disk on fire")}, time.Minute, "disk on fire"},
		{"field error", &fakeSynth{err: &synth.FieldError{Field: "order", Reason: "is too high"}}, time.Minute, "order"},
		{"panic", &fakeSynth{panicWith: "boom"}, time.Minute, "panic while designing: boom"},
		{"time limit", &fakeSynth{gate: make(chan struct{})}, 10 * time.Millisecond, context.DeadlineExceeded.Error()},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			c := newDesignCache(tc.fs.synthesize, 10, 1<<30, tc.timeout)
			for range 2 {
				_, err := c.design(context.Background(), orderSpec(2))
				require.ErrorContains(t, err, tc.want)
			}
			require.Equal(t, int64(2), tc.fs.calls.Load())
			entries, _ := c.stats()
			require.Zero(t, entries)
		})
	}
}

// TestCacheMemSize: the estimate counts what a value reaches, each block
// once (sizes on a 64-bit platform: a slice header 24 bytes, a string
// header 16, a pointer 8; node is 48).
func TestCacheMemSize(t *testing.T) {
	t.Parallel()
	type node struct {
		Name string
		Vals []float64
		next *node
	}
	shared := &node{Name: "ab"}
	tests := []struct {
		name string
		v    any
		want int64
	}{
		{"nil", nil, 0},
		{"numbers", []float64{1, 2, 3}, 24 + 3*8},
		{"string", "hello", 16 + 5},
		{"struct", node{Name: "abc", Vals: make([]float64, 10)}, 48 + 3 + 80},
		{"unexported pointer", node{next: &node{Name: "x"}}, 48 + 48 + 1},
		{"shared once", []*node{shared, shared}, 24 + 2*8 + 48 + 2},
		{"nested slices", [][]float64{{1}, {1, 2}}, 24 + 2*24 + 3*8},
		{"map", map[string]int{"ab": 1}, 8 + 24 + 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.want, memSize(tc.v))
		})
	}
}

// TestCacheMemSizeDesign: a real design's estimate is of the order of its
// JSON (numbers take 8 bytes in memory, some 10–20 as text).
func TestCacheMemSizeDesign(t *testing.T) {
	t.Parallel()
	spec, err := synth.ParseSpecBytes([]byte(`{"approximation": "chebyshev1", "passband_hz": 20000, "stopband_hz": 180000,
		"passband_ripple_db": 0.1, "stopband_atten_db": 110.12, "montecarlo": {"trials": 200}}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	b, err := json.Marshal(d)
	require.NoError(t, err)
	size := memSize(d)
	require.Greater(t, size, int64(len(b))/10, "memory %d, JSON %d", size, len(b))
	require.Less(t, size, int64(len(b))*10, "memory %d, JSON %d", size, len(b))
}
