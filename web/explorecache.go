package web

import (
	"container/list"
	"context"
	"fmt"
	"runtime/debug"
	"sync"
	"time"

	"github.com/polewright/polewright/synth/explore"
)

// ExploreCacheMaxEntries is the most explorations the workbench keeps
// (each holds only figures: a few hundred bytes per candidate).
const ExploreCacheMaxEntries = 64

// exploreCache keeps the explorations computed lately, keyed by
// [explore.Plan.Key], as designCache keeps designs: concurrent requests
// for one exploration share one run (a flight) on a context of its own,
// bounded by timeout and cancelled when its last waiter leaves; errors
// are not kept; stored results are shared and must not be changed.
type exploreCache struct {
	maxEntries int
	timeout    time.Duration

	mu       sync.Mutex
	lru      *list.List // of *exploreEntry, most recently used first
	entries  map[string]*list.Element
	inflight map[string]*exploreFlight
}

type exploreEntry struct {
	key string
	res *explore.Result
}

// exploreFlight is one exploration in progress and its waiters.
type exploreFlight struct {
	key    string
	done   chan struct{}
	cancel context.CancelFunc
	res    *explore.Result // set before done is closed
	err    error

	waiters int // guarded by exploreCache.mu

	pmu      sync.Mutex
	progress progressEvent
	seq      int
}

func newExploreCache(maxEntries int, timeout time.Duration) *exploreCache {
	return &exploreCache{maxEntries: maxEntries, timeout: timeout, lru: list.New(),
		entries: map[string]*list.Element{}, inflight: map[string]*exploreFlight{}}
}

// result returns the exploration of plan: stored, joined or started. It
// gives up when ctx is done; the flight goes on if others wait for it.
func (c *exploreCache) result(ctx context.Context, plan *explore.Plan) (*explore.Result, error) {
	res, f := c.join(ctx, plan)
	if res != nil {
		return res, nil
	}
	select {
	case <-f.done:
		c.leave(f)
		return f.res, f.err
	case <-ctx.Done():
		c.leave(f)
		return nil, ctx.Err()
	}
}

// join returns the stored result of plan, or else the flight running
// it, which the caller now waits for: it must end with leave.
func (c *exploreCache) join(ctx context.Context, plan *explore.Plan) (*explore.Result, *exploreFlight) {
	key := plan.Key()
	c.mu.Lock()
	defer c.mu.Unlock()
	if el, hit := c.entries[key]; hit {
		c.lru.MoveToFront(el)
		return el.Value.(*exploreEntry).res, nil
	}
	if f, running := c.inflight[key]; running {
		f.waiters++
		return nil, f
	}
	f := &exploreFlight{key: key, done: make(chan struct{}), waiters: 1}
	c.inflight[key] = f
	fctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), c.timeout)
	f.cancel = cancel
	go c.run(fctx, f, plan)
	return nil, f
}

// run explores plan for f, stores a successful result and releases f's
// waiters.
func (c *exploreCache) run(ctx context.Context, f *exploreFlight, plan *explore.Plan) {
	defer f.cancel()
	func() {
		defer func() {
			if rec := recover(); rec != nil {
				f.res, f.err = nil, fmt.Errorf("panic while exploring: %v\n%s", rec, debug.Stack())
			}
		}()
		f.res, f.err = plan.Run(ctx, f.report)
	}()
	c.mu.Lock()
	if c.inflight[f.key] == f {
		delete(c.inflight, f.key)
	}
	if f.err == nil && c.maxEntries > 0 {
		if el, ok := c.entries[f.key]; ok {
			c.lru.Remove(el)
		}
		c.entries[f.key] = c.lru.PushFront(&exploreEntry{key: f.key, res: f.res})
		for c.lru.Len() > c.maxEntries {
			old := c.lru.Back()
			c.lru.Remove(old)
			delete(c.entries, old.Value.(*exploreEntry).key)
		}
	}
	c.mu.Unlock()
	close(f.done)
}

// leave ends the caller's wait for f; the last waiter to leave an
// unfinished flight cancels it and waits for it to stop.
func (c *exploreCache) leave(f *exploreFlight) {
	c.mu.Lock()
	f.waiters--
	abandoned := f.waiters == 0 && !f.finished()
	if abandoned {
		f.cancel()
		if c.inflight[f.key] == f {
			delete(c.inflight, f.key)
		}
	}
	c.mu.Unlock()
	if abandoned {
		<-f.done
	}
}

func (f *exploreFlight) finished() bool {
	select {
	case <-f.done:
		return true
	default:
		return false
	}
}

// report records the candidates done (the plan calls it as they end).
func (f *exploreFlight) report(done, total int) {
	f.pmu.Lock()
	f.progress = progressEvent{Done: done, Total: total}
	f.seq++
	f.pmu.Unlock()
}

func (f *exploreFlight) latest() (progressEvent, int) {
	f.pmu.Lock()
	defer f.pmu.Unlock()
	return f.progress, f.seq
}
