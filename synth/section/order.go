package section

import (
	"context"
	"math"
	"math/bits"
	"slices"

	"github.com/polewright/polewright/synth/response"
)

// MaxExact is the largest number of sections that [Order] orders exactly;
// its dynamic programme costs 2ⁿ·len(grid) additions.
const MaxExact = 12

// tieDB is the margin within which two peaks count as equal when ordering.
const tieDB = 1e-9

// tieRatio is tieDB as a ratio of |H|²: 10^(tieDB/10).
var tieRatio = math.Pow(10, tieDB/10)

// Order returns the permutation of secs (indices into secs, in signal order)
// that minimises the worst peak, over the grid gridHz, of the partial
// products at every stage output. Ties go to ascending Q, then ascending f0.
// Up to [MaxExact] sections the result is exact on the grid; above that it is
// the better of a greedy build-up and ascending Q. The second result is the
// worst peak in dB of the chosen order, relative to unit gain.
//
// Order checks ctx between subsets and returns ctx.Err() if it is done.
func Order(ctx context.Context, secs []Section, gridHz []float64) ([]int, float64, error) {
	t := newTable(secs, gridHz)
	defer t.release()
	return t.order(ctx)
}

// OrderPeaks orders secs as [Order] does and returns them in that order
// with their node peaks ([NodePeaks]), each section evaluated on gridHz
// once for both. The programme is exact on its grid; between grid points
// the true peaks may differ by a hair, so ascending Q (the tie-break) is
// returned instead when its refined worst node peak is no higher.
func OrderPeaks(ctx context.Context, secs []Section, gridHz []float64) ([]Section, []float64, error) {
	t := newTable(secs, gridHz)
	defer t.release()
	perm, _, err := t.order(ctx)
	if err != nil {
		return nil, nil, err
	}
	peaks := t.nodePeaks(perm)
	if asc := ascendingQ(secs); !slices.Equal(asc, perm) {
		if ascPeaks := t.nodePeaks(asc); slices.Max(ascPeaks) <= slices.Max(peaks)*(1+1e-10) {
			perm, peaks = asc, ascPeaks
		}
	}
	ordered := make([]Section, len(perm))
	for i, k := range perm {
		ordered[i] = secs[k]
	}
	return ordered, peaks, nil
}

// order is [Order] on the table's grid.
func (t *table) order(ctx context.Context) ([]int, float64, error) {
	secs := t.secs
	n := len(secs)
	if n == 0 {
		return nil, math.Inf(-1), nil
	}
	asc := ascendingQ(secs)
	if n > MaxExact {
		db := t.db()
		g, gPeak := greedy(secs, db)
		if aPeak := worstPeak(asc, db); aPeak <= gPeak+tieDB {
			return asc, aPeak, nil
		}
		return g, gPeak, nil
	}

	// The programme runs on |H|² itself rather than on dB, so that no
	// logarithms are taken. Each row is floored at 10^(−300/n), far below
	// any subset's peak (−250 dB for n = 12), so that no product of rows
	// leaves the range of float64; the columns no subset can peak on are
	// dropped first (see keepColumns).
	floor := math.Pow(10, -300/float64(n))
	cols := keepColumns(t.ints[:0], t.magSq)
	t.ints = cols
	nc := len(cols)
	rows := make([][]float64, n)
	rowMax := t.take(n)
	for i := range n {
		rowMax[i] = 0
		rows[i] = t.take(nc)
		for c, g := range cols {
			v := math.Max(t.magSq[i][g], floor)
			rows[i][c] = v
			rowMax[i] = math.Max(rowMax[i], v)
		}
	}
	// The products of the sections of every subset of the low nLo
	// sections, and of every subset of the others: the product of subset
	// S = A ∪ B is lo[A]·hi[B], column by column (meet in the middle).
	nLo := n / 2
	lo, hi := subsetProducts(t, rows[:nLo], nc), subsetProducts(t, rows[nLo:], nc)

	// best[S] is the least, over orders of S, of the worst prefix peak:
	// best[S] = max(peak[S], min over i in S of best[S∖i]), where peak[S]
	// is the peak of the product of the sections in S. peak[S] only
	// matters where it exceeds that minimum m, and it is at most
	// peak[S∖i]·max(row i) for every i: where that bound is already at or
	// below m, the bound is stored in place of peak[S] (best[S] = m either
	// way, and the reconstruction below compares peak[S] only with values
	// at least m), and the product is formed only for the other subsets.
	size := 1 << n
	peak := t.take(size)
	best := t.take(size)
	peak[0], best[0] = 1, 0
	loMask := 1<<nLo - 1
	for S := 1; S < size; S++ {
		if S&1023 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, 0, err
			}
		}
		m, ub := math.Inf(1), math.Inf(1)
		for rest := S; rest != 0; rest &= rest - 1 {
			i := bits.TrailingZeros(uint(rest))
			sub := S &^ (1 << i)
			if b := best[sub]; b < m { // no NaN here: plain comparisons
				m = b
			}
			if u := peak[sub] * rowMax[i]; u < ub {
				ub = u
			}
		}
		p := ub
		if ub > m {
			p = maxProduct(lo[S&loMask], hi[S>>nLo])
		}
		peak[S] = p
		if p > m {
			m = p
		}
		best[S] = m
	}

	// Reconstruct from the end: the last section is the feasible one with
	// the highest Q, so that ties fall back to ascending Q.
	rank := make([]int, n) // position of each section in ascending-Q order
	for pos, i := range asc {
		rank[i] = pos
	}
	order := make([]int, n)
	S := size - 1
	for pos := n - 1; pos >= 0; pos-- {
		pick := -1
		for i := 0; i < n; i++ {
			if S&(1<<i) == 0 {
				continue
			}
			if math.Max(peak[S], best[S&^(1<<i)]) <= best[S]*tieRatio && (pick < 0 || rank[i] > rank[pick]) {
				pick = i
			}
		}
		order[pos] = pick
		S &^= 1 << pick
	}
	return order, 10 * math.Log10(best[size-1]), nil
}

// AscendingQ returns the indices of secs in ascending Q, then ascending f0:
// the common-practice order that [Order] falls back to on ties.
func AscendingQ(secs []Section) []int { return ascendingQ(secs) }

// WorstRefinedDB returns the worst node peak, refined between grid points
// by [NodePeaks], of secs taken in the given order, in dB.
func WorstRefinedDB(secs []Section, order []int, gridHz []float64) float64 {
	ordered := make([]Section, len(order))
	for i, k := range order {
		ordered[i] = secs[k]
	}
	return 20 * math.Log10(slices.Max(NodePeaks(ordered, gridHz)))
}

// ascendingQ returns the indices of secs sorted by ascending Q, then f0.
func ascendingQ(secs []Section) []int {
	idx := make([]int, len(secs))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int {
		if c := cmpFloat(secs[a].Q(), secs[b].Q()); c != 0 {
			return c
		}
		return cmpFloat(secs[a].OmegaRadPerSec(), secs[b].OmegaRadPerSec())
	})
	return idx
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// greedy appends, at each step, the section that gives the lowest peak at
// the new node (ties to lower Q).
func greedy(secs []Section, db [][]float64) ([]int, float64) {
	n := len(secs)
	used := make([]bool, n)
	acc := make([]float64, len(db[0]))
	trial := make([]float64, len(acc))
	order := make([]int, 0, n)
	worst := math.Inf(-1)
	for len(order) < n {
		pick, pickPeak := -1, math.Inf(1)
		for i := 0; i < n; i++ {
			if used[i] {
				continue
			}
			for g := range acc {
				trial[g] = acc[g] + db[i][g]
			}
			p := slices.Max(trial)
			if p < pickPeak-tieDB || (p <= pickPeak+tieDB && pick >= 0 && secs[i].Q() < secs[pick].Q()) {
				pick, pickPeak = i, p
			}
		}
		used[pick] = true
		order = append(order, pick)
		for g := range acc {
			acc[g] += db[pick][g]
		}
		worst = math.Max(worst, pickPeak)
	}
	return order, worst
}

// worstPeak returns the worst prefix peak of order on the grid.
func worstPeak(order []int, db [][]float64) float64 {
	acc := make([]float64, len(db[0]))
	worst := math.Inf(-1)
	for _, i := range order {
		for g := range acc {
			acc[g] += db[i][g]
		}
		worst = math.Max(worst, slices.Max(acc))
	}
	return worst
}

// WorstPeakDB returns the worst peak over gridHz, in dB, of the partial
// products of secs taken in the given order. It is the figure that [Order]
// minimises.
func WorstPeakDB(secs []Section, order []int, gridHz []float64) float64 {
	db := make([][]float64, len(secs))
	for i, s := range secs {
		db[i] = sectionDB(s, gridHz)
	}
	return worstPeak(order, db)
}

// sectionDB returns 20·log10|H(j2πf)| of s on the grid; a zero that falls
// exactly on a grid point gives a large negative number rather than −Inf so
// that sums stay finite.
func sectionDB(s Section, gridHz []float64) []float64 {
	out := make([]float64, len(gridHz))
	for g, f := range gridHz {
		out[g] = 10 * math.Log10(math.Max(s.magSq(response.RadPerSec(f)), 1e-300))
	}
	return out
}

// subsetProducts returns, for every subset A of rows (bit i for row i),
// the element-by-element product of its rows (all ones for the empty
// set), each row of nc columns taken from t's scratch space.
func subsetProducts(t *table, rows [][]float64, nc int) [][]float64 {
	out := make([][]float64, 1<<len(rows))
	out[0] = t.take(nc)
	for c := range out[0] {
		out[0][c] = 1
	}
	for A := 1; A < len(out); A++ {
		i := bits.TrailingZeros(uint(A))
		prev, row := out[A&^(1<<i)], rows[i]
		cur := t.take(nc)
		for c := range cur {
			cur[c] = prev[c] * row[c]
		}
		out[A] = cur
	}
	return out
}

// maxProduct returns the largest element of the element-by-element
// product of a and b, in one pass with four independent maxima.
func maxProduct(a, b []float64) float64 {
	b = b[:len(a)]
	m0, m1, m2, m3 := 0.0, 0.0, 0.0, 0.0
	g := 0
	for ; g+4 <= len(a); g += 4 {
		if v := a[g] * b[g]; v > m0 {
			m0 = v
		}
		if v := a[g+1] * b[g+1]; v > m1 {
			m1 = v
		}
		if v := a[g+2] * b[g+2]; v > m2 {
			m2 = v
		}
		if v := a[g+3] * b[g+3]; v > m3 {
			m3 = v
		}
	}
	for ; g < len(a); g++ {
		if v := a[g] * b[g]; v > m0 {
			m0 = v
		}
	}
	return math.Max(math.Max(m0, m1), math.Max(m2, m3))
}

// keepColumns appends to dst the grid columns of rows (one row per section) on
// which some product of sections may peak: a column that is no larger
// than another in every row is dropped, as no product can be larger there
// than at the other. Only neighbours in the grid are compared (a running
// stack of kept columns, each new column against the last kept ones), which
// catches the long stretches where every section rises or falls together
// (beyond the last resonance, say) at a cost of one pass.
func keepColumns(dst []int, rows [][]float64) []int {
	if len(rows) == 0 {
		return dst
	}
	leq := func(a, b int) bool { // column a ≤ column b in every row
		for _, r := range rows {
			if r[a] > r[b] {
				return false
			}
		}
		return true
	}
	kept := dst
	for c := range rows[0] {
		for len(kept) > 0 && leq(kept[len(kept)-1], c) {
			kept = kept[:len(kept)-1]
		}
		if len(kept) > 0 && leq(c, kept[len(kept)-1]) {
			continue
		}
		kept = append(kept, c)
	}
	return kept
}
