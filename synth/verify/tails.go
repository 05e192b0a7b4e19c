package verify

import (
	"math"
	"slices"
)

// Percentiles of the envelope.
const (
	pLow  = 0.01
	pHigh = 0.99
)

// tailSizes returns how many of the lowest and highest of n values the
// 1st and 99th percentiles need: with h = (n−1)·p the p-quantile
// interpolates the order statistics ⌊h⌋ and ⌊h⌋+1 (0-based).
func tailSizes(n int) (kLo, kHi int) {
	kLo = min(n, int(math.Floor(float64(n-1)*pLow))+2)
	kHi = min(n, n-int(math.Floor(float64(n-1)*pHigh)))
	return kLo, kHi
}

// tails keeps, per frequency, the kLo lowest values seen (a max-heap, the
// largest of them at the top) and the kHi highest (a max-heap of their
// negatives); the extremes are the largest of the heaps' values. Each heap's top is also kept in a contiguous array, so that
// the common case, a value that enters neither heap, touches one cache
// line per frequency and heap.
type tails struct {
	nFreq, kLo, kHi int
	seen            int
	lo, hi          []float64 // nFreq heaps of kLo, kHi values
	loTop, hiTop    []float64
}

func newTails(nFreq, trials int) tails {
	kLo, kHi := tailSizes(trials)
	t := tails{
		nFreq: nFreq, kLo: kLo, kHi: kHi,
		lo:    make([]float64, nFreq*kLo),
		hi:    make([]float64, nFreq*kHi),
		loTop: make([]float64, nFreq),
		hiTop: make([]float64, nFreq),
	}
	return t
}

// add records one trial's values (no NaN), one per frequency.
func (t *tails) add(v []float64) {
	fillLo, fillHi := t.seen < t.kLo, t.seen < t.kHi
	for f, x := range v {
		switch {
		case fillLo:
			h := t.lo[f*t.kLo : f*t.kLo+t.seen+1]
			siftUp(h, t.seen, x)
			t.loTop[f] = h[0]
		case x < t.loTop[f]:
			h := t.lo[f*t.kLo : (f+1)*t.kLo]
			siftDown(h, x)
			t.loTop[f] = h[0]
		}
		switch {
		case fillHi:
			h := t.hi[f*t.kHi : f*t.kHi+t.seen+1]
			siftUp(h, t.seen, -x)
			t.hiTop[f] = h[0]
		case -x < t.hiTop[f]:
			h := t.hi[f*t.kHi : (f+1)*t.kHi]
			siftDown(h, -x)
			t.hiTop[f] = h[0]
		}
	}
	t.seen++
}

// siftUp places x at index i of the max-heap h (h[:i] a heap) and
// restores the order.
func siftUp(h []float64, i int, x float64) {
	for i > 0 {
		p := (i - 1) / 2
		if !(x > h[p]) {
			break
		}
		h[i] = h[p]
		i = p
	}
	h[i] = x
}

// siftDown replaces the top of the max-heap h by x and restores the
// order.
func siftDown(h []float64, x float64) {
	n := len(h)
	i := 0
	for {
		c := 2*i + 1
		if c >= n {
			break
		}
		if c+1 < n && h[c+1] > h[c] {
			c++
		}
		if !(h[c] > x) {
			break
		}
		h[i] = h[c]
		i = c
	}
	h[i] = x
}

// mergeTails combines the workers' tails of a run of n trials into the
// envelope. The union of the workers' kLo lowest values holds the kLo
// lowest of all, so the order statistics are exact whatever the split.
func mergeTails(ts []*tails, freqHz []float64, n int) Envelope {
	nf := len(freqHz)
	env := Envelope{
		FreqHz: slices.Clone(freqHz),
		MinDB:  make([]float64, nf),
		P01DB:  make([]float64, nf),
		P99DB:  make([]float64, nf),
		MaxDB:  make([]float64, nf),
	}
	kLo, kHi := tailSizes(n)
	var buf []float64
	for f := range nf {
		buf = buf[:0]
		for _, t := range ts {
			buf = append(buf, t.lo[f*t.kLo:f*t.kLo+min(t.seen, t.kLo)]...)
		}
		slices.Sort(buf)
		env.MinDB[f] = buf[0]
		// buf[:kLo] are the order statistics 0..kLo−1.
		env.P01DB[f] = quantile(buf[:kLo], 0, n, pLow)
		buf = buf[:0]
		for _, t := range ts {
			for _, v := range t.hi[f*t.kHi : f*t.kHi+min(t.seen, t.kHi)] {
				buf = append(buf, -v)
			}
		}
		slices.Sort(buf)
		env.MaxDB[f] = buf[len(buf)-1]
		// buf[len−kHi:] are the order statistics n−kHi..n−1.
		env.P99DB[f] = quantile(buf[len(buf)-kHi:], n-kHi, n, pHigh)
	}
	return env
}

// quantile returns the p-quantile of n values whose sorted order
// statistics first..first+len(s)−1 are s, which must include ⌊h⌋ and
// (when < n) ⌊h⌋+1, h = (n−1)·p.
func quantile(s []float64, first, n int, p float64) float64 {
	h := float64(n-1) * p
	i := int(math.Floor(h))
	a := s[i-first]
	if i+1 >= n {
		return a
	}
	b := s[i+1-first]
	frac := h - float64(i)
	switch {
	case a == b || frac == 0:
		return a
	case math.IsInf(a, 0) || math.IsInf(b, 0):
		if frac < 0.5 {
			return a
		}
		return b
	}
	return a + frac*(b-a)
}
