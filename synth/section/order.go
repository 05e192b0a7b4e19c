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
	// logarithms are taken: a product of sections is a product of rows, and
	// removing a section multiplies by its reciprocal row. Each row is
	// floored at 10^(−300/n), far below any subset's peak (−250 dB for
	// n = 12), so that no product leaves the range of float64; the
	// columns no subset can peak on are dropped first (see keepColumns).
	floor := math.Pow(10, -300/float64(n))
	cols := keepColumns(t.ints[:0], t.magSq)
	t.ints = cols
	lin := t.take(2 * n * len(cols))
	rows := make([][]float64, 2*n)
	rows, inv := rows[:n], rows[n:]
	for i := range n {
		rows[i] = lin[2*i*len(cols) : (2*i+1)*len(cols)]
		inv[i] = lin[(2*i+1)*len(cols) : (2*i+2)*len(cols)]
		for c, g := range cols {
			v := math.Max(t.magSq[i][g], floor)
			rows[i][c], inv[i][c] = v, 1/v
		}
	}

	// peak[S] is the peak of the product of the sections in subset S, found
	// by a Gray-code walk that multiplies in or divides out one section's
	// row per step; best[S] is the least, over orders of S, of the worst
	// prefix peak.
	size := 1 << n
	peak := t.take(size)
	best := t.take(size)
	acc := t.take(len(cols))
	for c := range acc {
		acc[c] = 1
	}
	for k := 1; k < size; k++ {
		if k&1023 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, 0, err
			}
		}
		bit := bits.TrailingZeros(uint(k))
		gray := k ^ (k >> 1)
		if gray&(1<<bit) != 0 {
			peak[gray] = mulMax(acc, rows[bit])
		} else {
			peak[gray] = mulMax(acc, inv[bit])
		}
	}
	best[0] = 0
	for S := 1; S < size; S++ {
		m := math.Inf(1)
		for rest := S; rest != 0; rest &= rest - 1 {
			if b := best[S&^(rest&-rest)]; b < m { // no NaN here: plain comparisons
				m = b
			}
		}
		if p := peak[S]; p > m {
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

// mulMax multiplies acc by row element by element and returns the largest
// element of the result, in one pass with four independent maxima.
func mulMax(acc, row []float64) float64 {
	row = row[:len(acc)]
	m0, m1, m2, m3 := 0.0, 0.0, 0.0, 0.0
	g := 0
	for ; g+4 <= len(acc); g += 4 {
		a0, a1, a2, a3 := acc[g]*row[g], acc[g+1]*row[g+1], acc[g+2]*row[g+2], acc[g+3]*row[g+3]
		acc[g], acc[g+1], acc[g+2], acc[g+3] = a0, a1, a2, a3
		if a0 > m0 {
			m0 = a0
		}
		if a1 > m1 {
			m1 = a1
		}
		if a2 > m2 {
			m2 = a2
		}
		if a3 > m3 {
			m3 = a3
		}
	}
	for ; g < len(acc); g++ {
		acc[g] *= row[g]
		if acc[g] > m0 {
			m0 = acc[g]
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
