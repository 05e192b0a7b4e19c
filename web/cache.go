package web

import (
	"container/list"
	"context"
	"encoding/json"
	"fmt"
	"reflect"
	"runtime/debug"
	"sync"
	"time"

	"github.com/polewright/polewright/synth"
)

// Bounds of the design cache (see "Caching" in the package comment).
const (
	// CacheMaxEntries is the most designs the cache keeps.
	CacheMaxEntries = 256
	// CacheMaxBytes bounds the estimated memory of the designs the cache
	// keeps (64 MiB); a design is estimated by the bytes of everything it
	// holds (see memSize). A design larger than this alone is not kept.
	CacheMaxBytes = 64 << 20
)

// SynthesizeFunc designs spec, as [synth.Synthesize] does.
type SynthesizeFunc func(ctx context.Context, spec synth.Spec) (*synth.Design, error)

// designCache keeps the designs computed lately, keyed by the canonical
// spec (the JSON of the parsed, defaulted [synth.Spec]), so that a
// permalink, a download, an export and the API of the same spec share one
// computation. It evicts the least recently used designs beyond maxEntries
// or maxBytes. Concurrent requests for a spec that is being computed wait
// for that one computation (a flight) instead of starting their own.
//
// A flight runs on a context of its own, bounded by timeout, so that one
// waiter's deadline or departure does not cancel the computation others
// wait for; when the last waiter leaves before it ends, it is cancelled.
// Errors are not kept: the next request computes again. Stored designs are
// shared between requests and must not be changed.
type designCache struct {
	synthesize SynthesizeFunc
	maxEntries int
	maxBytes   int64
	timeout    time.Duration

	mu       sync.Mutex
	lru      *list.List // of *cacheEntry, most recently used first
	entries  map[string]*list.Element
	bytes    int64
	inflight map[string]*flight
}

// cacheEntry is one stored design with its estimated size in bytes.
type cacheEntry struct {
	key  string
	d    *synth.Design
	size int64
}

// flight is one computation in progress and the requests waiting for it.
type flight struct {
	key    string // "" when the spec has no key: the flight is not shared
	done   chan struct{}
	cancel context.CancelFunc
	d      *synth.Design // set before done is closed
	err    error

	waiters int // guarded by designCache.mu

	pmu      sync.Mutex
	progress progressEvent
	seq      int // counts progress reports
}

// newDesignCache returns an empty cache that computes with synthesize, each
// computation bounded by timeout.
func newDesignCache(synthesize SynthesizeFunc, maxEntries int, maxBytes int64, timeout time.Duration) *designCache {
	if synthesize == nil {
		synthesize = synth.Synthesize
	}
	return &designCache{
		synthesize: synthesize,
		maxEntries: maxEntries,
		maxBytes:   maxBytes,
		timeout:    timeout,
		lru:        list.New(),
		entries:    map[string]*list.Element{},
		inflight:   map[string]*flight{},
	}
}

// specKey is the cache key of spec: its JSON, canonical since ParseSpec
// fills every default. ok is false when spec cannot be encoded.
func specKey(spec synth.Spec) (string, bool) {
	b, err := json.Marshal(spec)
	if err != nil {
		return "", false
	}
	return string(b), true
}

// design returns the design of spec: the stored one, or the result of the
// flight computing it (joined, or started). It gives up when ctx is done;
// the flight then goes on if others wait for it.
func (c *designCache) design(ctx context.Context, spec synth.Spec) (*synth.Design, error) {
	d, f := c.join(ctx, spec)
	if d != nil {
		return d, nil
	}
	return c.wait(ctx, f)
}

// join returns the stored design of spec, or else the flight computing it,
// which the caller now waits for: it must end with wait or leave.
func (c *designCache) join(ctx context.Context, spec synth.Spec) (*synth.Design, *flight) {
	key, ok := specKey(spec)
	c.mu.Lock()
	defer c.mu.Unlock()
	if ok {
		if el, hit := c.entries[key]; hit {
			c.lru.MoveToFront(el)
			return el.Value.(*cacheEntry).d, nil
		}
		if f, running := c.inflight[key]; running {
			f.waiters++
			return nil, f
		}
	}
	f := &flight{done: make(chan struct{}), waiters: 1}
	if ok {
		f.key = key
		c.inflight[key] = f
	}
	// The flight keeps the first request's values but not its
	// cancellation or deadline.
	fctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), c.timeout)
	f.cancel = cancel
	go c.run(synth.WithProgress(fctx, f.report), f, spec)
	return nil, f
}

// run computes f, stores a successful result and releases f's waiters.
func (c *designCache) run(ctx context.Context, f *flight, spec synth.Spec) {
	defer f.cancel()
	func() {
		// The flight runs outside any request's handler: a panic is turned
		// into an error here, answered 500 and logged with its stack.
		defer func() {
			if rec := recover(); rec != nil {
				f.d, f.err = nil, fmt.Errorf("panic while designing: %v\n%s", rec, debug.Stack())
			}
		}()
		f.d, f.err = c.synthesize(ctx, spec)
	}()
	var size int64
	if f.err == nil && f.key != "" {
		size = memSize(f.d)
	}
	c.mu.Lock()
	if f.key != "" && c.inflight[f.key] == f {
		delete(c.inflight, f.key)
	}
	if f.err == nil && f.key != "" {
		c.store(f.key, f.d, size)
	}
	c.mu.Unlock()
	close(f.done)
}

// store keeps d under key and evicts the least recently used designs
// beyond the bounds. c.mu is held.
func (c *designCache) store(key string, d *synth.Design, size int64) {
	if size > c.maxBytes || c.maxEntries <= 0 {
		return
	}
	if el, ok := c.entries[key]; ok { // a flight abandoned and run again
		c.bytes -= el.Value.(*cacheEntry).size
		c.lru.Remove(el)
	}
	c.entries[key] = c.lru.PushFront(&cacheEntry{key: key, d: d, size: size})
	c.bytes += size
	for c.lru.Len() > c.maxEntries || c.bytes > c.maxBytes {
		old := c.lru.Back()
		e := old.Value.(*cacheEntry)
		c.lru.Remove(old)
		delete(c.entries, e.key)
		c.bytes -= e.size
	}
}

// wait waits for f's result, or gives up when ctx is done (see leave).
func (c *designCache) wait(ctx context.Context, f *flight) (*synth.Design, error) {
	select {
	case <-f.done:
		c.leave(f)
		return f.d, f.err
	case <-ctx.Done():
		c.leave(f)
		return nil, ctx.Err()
	}
}

// leave ends the caller's wait for f. When the caller was its last waiter
// and f has not ended, f is cancelled, no longer shared with new requests,
// and leave waits for it to stop, so that no work outlives the requests
// that asked for it.
func (c *designCache) leave(f *flight) {
	c.mu.Lock()
	f.waiters--
	abandoned := f.waiters == 0 && !f.finished()
	if abandoned {
		f.cancel()
		if f.key != "" && c.inflight[f.key] == f {
			delete(c.inflight, f.key)
		}
	}
	c.mu.Unlock()
	if abandoned {
		<-f.done
	}
}

// finished reports whether f has ended.
func (f *flight) finished() bool {
	select {
	case <-f.done:
		return true
	default:
		return false
	}
}

// report records the Monte Carlo's progress (synth calls it from the run).
func (f *flight) report(done, total int) {
	f.pmu.Lock()
	f.progress = progressEvent{Done: done, Total: total}
	f.seq++
	f.pmu.Unlock()
}

// latest returns f's last progress and how many reports there have been.
func (f *flight) latest() (progressEvent, int) {
	f.pmu.Lock()
	defer f.pmu.Unlock()
	return f.progress, f.seq
}

// stats returns the number of stored designs and their estimated bytes.
func (c *designCache) stats() (entries int, bytes int64) {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.lru.Len(), c.bytes
}

// memSize estimates the memory that v holds: the size of the value and of
// everything it reaches through pointers, slices (their length), strings,
// maps and interfaces, unexported fields included, each block counted
// once. Allocator overheads and slack capacity are left out. It walks only
// the elements of slices that hold references, so a slice of numbers costs
// one step.
func memSize(v any) int64 {
	if v == nil {
		return 0
	}
	rv := reflect.ValueOf(v)
	return int64(rv.Type().Size()) + deepSize(rv, map[uintptr]bool{})
}

// deepSize is the memory v reaches beyond its own inline size; seen holds
// the addresses of the blocks counted already.
func deepSize(v reflect.Value, seen map[uintptr]bool) int64 {
	switch v.Kind() {
	case reflect.Pointer:
		if v.IsNil() || seen[v.Pointer()] {
			return 0
		}
		seen[v.Pointer()] = true
		return int64(v.Type().Elem().Size()) + deepSize(v.Elem(), seen)
	case reflect.Interface:
		if v.IsNil() {
			return 0
		}
		e := v.Elem()
		return int64(e.Type().Size()) + deepSize(e, seen)
	case reflect.String:
		return int64(v.Len())
	case reflect.Slice:
		if v.IsNil() || v.Len() == 0 || seen[v.Pointer()] {
			return 0
		}
		seen[v.Pointer()] = true
		n := int64(v.Len()) * int64(v.Type().Elem().Size())
		if holdsRefs(v.Type().Elem()) {
			for i := range v.Len() {
				n += deepSize(v.Index(i), seen)
			}
		}
		return n
	case reflect.Array:
		var n int64
		if holdsRefs(v.Type().Elem()) {
			for i := range v.Len() {
				n += deepSize(v.Index(i), seen)
			}
		}
		return n
	case reflect.Struct:
		var n int64
		for i := range v.NumField() {
			n += deepSize(v.Field(i), seen)
		}
		return n
	case reflect.Map:
		if v.IsNil() || seen[v.Pointer()] {
			return 0
		}
		seen[v.Pointer()] = true
		kt, vt := v.Type().Key(), v.Type().Elem()
		n := int64(v.Len()) * int64(kt.Size()+vt.Size())
		for it := v.MapRange(); it.Next(); {
			n += deepSize(it.Key(), seen) + deepSize(it.Value(), seen)
		}
		return n
	default:
		return 0
	}
}

// holdsRefs reports whether a value of t may reach memory outside itself.
func holdsRefs(t reflect.Type) bool {
	switch t.Kind() {
	case reflect.Pointer, reflect.Interface, reflect.String, reflect.Slice, reflect.Map:
		return true
	case reflect.Array:
		return holdsRefs(t.Elem())
	case reflect.Struct:
		for i := range t.NumField() {
			if holdsRefs(t.Field(i).Type) {
				return true
			}
		}
	}
	return false
}
