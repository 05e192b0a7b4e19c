package section

import (
	"math"
	"slices"
	"sync"

	"github.com/polewright/polewright/synth/response"
)

// table holds every section's |H(jω)|² on one grid, computed once and
// shared by the ordering programme and the node peaks.
type table struct {
	secs   []Section
	gridHz []float64
	magSq  [][]float64 // magSq[i][g] = |Hᵢ(j2πf_g)|²
	*scratch
}

// scratch is reusable working space: floats handed out by take, the
// row headers and the column list, reset by newTable and returned to
// scratchPool by release.
type scratch struct {
	floats []float64
	used   int
	rows   [][]float64
	ints   []int
}

var scratchPool = sync.Pool{New: func() any { return new(scratch) }}

// take returns n floats of the scratch space, holding whatever they held
// before: the caller writes every one before reading it.
func (s *scratch) take(n int) []float64 {
	if s.used+n > len(s.floats) {
		// Grow for the next user; the floats handed out so far stay valid.
		s.floats = make([]float64, max(2*len(s.floats), s.used+n, 1024))
		s.used = 0
	}
	out := s.floats[s.used : s.used+n : s.used+n]
	s.used += n
	return out
}

// release returns the table's scratch space to the pool; nothing taken
// from it may be used afterwards.
func (t *table) release() {
	scratchPool.Put(t.scratch)
	t.scratch = nil
}

// newTable evaluates each section of secs on gridHz. The caller releases
// the table when done.
func newTable(secs []Section, gridHz []float64) *table {
	sc := scratchPool.Get().(*scratch)
	sc.used = 0
	sc.rows = slices.Grow(sc.rows[:0], len(secs))[:len(secs)]
	t := &table{secs: secs, gridHz: gridHz, magSq: sc.rows, scratch: sc}
	flat := t.take(len(secs) * len(gridHz))
	omega := t.take(len(gridHz))
	for g, f := range gridHz {
		omega[g] = response.RadPerSec(f)
	}
	for i := range secs {
		row := flat[i*len(gridHz) : (i+1)*len(gridHz)]
		s := &secs[i]
		for g, w := range omega {
			row[g] = s.magSq(w)
		}
		t.magSq[i] = row
	}
	return t
}

// db returns the rows in dB, a zero that falls exactly on a grid point
// giving a large negative number rather than −Inf so that sums stay
// finite.
func (t *table) db() [][]float64 {
	out := make([][]float64, len(t.magSq))
	for i, row := range t.magSq {
		out[i] = make([]float64, len(row))
		for g, v := range row {
			out[i][g] = 10 * math.Log10(math.Max(v, 1e-300))
		}
	}
	return out
}

// nodePeaks is [NodePeaks] of the sections in the order perm (indices
// into t.secs).
func (t *table) nodePeaks(perm []int) []float64 {
	n := len(perm)
	out := make([]float64, n)
	acc := t.take(len(t.gridHz))
	for g := range acc {
		acc[g] = 1
	}
	prefix := make([]Section, 0, n)
	dc, inf, zeros, poles := 1.0, 1.0, 0, 0
	for j, k := range perm {
		s := &t.secs[k]
		prefix = append(prefix, *s)
		row := t.magSq[k]
		best := 0.0
		for g := range acc {
			acc[g] *= row[g]
			best = math.Max(best, acc[g])
		}
		peak := best
		for g := 1; g+1 < len(acc); g++ {
			if acc[g] >= acc[g-1] && acc[g] >= acc[g+1] && acc[g] >= best*0.9977 { // 0.01 dB
				w := response.RadPerSec
				peak = math.Max(peak, refine(prefix, w(t.gridHz[g-1]), w(t.gridHz[g+1]), w(t.gridHz[g]), acc[g], true))
			}
		}
		// The two ends of the axis: DC, and infinite frequency when the
		// prefix has as many zeros as poles (H(∞) = K).
		dc *= s.magSq(0)
		inf *= s.Gain * s.Gain
		zeros, poles = zeros+len(s.Zeros), poles+len(s.Poles)
		peak = math.Max(peak, dc)
		if zeros == poles {
			peak = math.Max(peak, inf)
		}
		out[j] = math.Sqrt(peak)
	}
	return out
}

// Extremum returns the largest (max true) or smallest value of |H(jω)|²
// of the cascade secs near startRad, within [loRad, hiRad] (rad/s,
// 0 < loRad ≤ startRad ≤ hiRad): the best of startRad and the points
// of a Newton search for a zero of d/dω ln|H(jω)|² (the closed-form sum
// over the roots of ±2(ω − w)/(σ² + (ω − w)²), and its derivative),
// safeguarded by bisection on the sign of that derivative. |H|² should be
// unimodal on the interval (as it is between two neighbours of a grid
// that resolves it); otherwise the result is a local extremum or
// |H(j·startRad)|². Newton's method converges quadratically: a handful
// of evaluations where a golden-section search needs forty.
func Extremum(secs []Section, loRad, hiRad, startRad float64, max bool) float64 {
	return refine(secs, loRad, hiRad, startRad, MagnitudeSquared(secs, startRad), max)
}

// refine is Extremum with |H(j·x)|² = fx already known.
func refine(secs []Section, a, b, x, fx float64, max bool) float64 {
	const (
		relTol  = 1e-12 // relative step at which Newton has converged
		maxIter = 80    // bisection from a decade to relTol takes ~45
	)
	sign := 1.0
	if !max {
		sign = -1
	}
	best := fx
	for range maxIter {
		g, gp := logSlope(secs, x)
		g, gp = sign*g, sign*gp // now a maximum of sign·ln|H|² is sought
		switch {
		case g > 0:
			a = x
		case g < 0:
			b = x
		default:
			return best // a stationary point, or NaN: keep what was seen
		}
		xn := 0.5 * (a + b)
		if gp < 0 {
			if t := x - g/gp; t > a && t < b {
				xn = t
			}
		}
		done := math.Abs(xn-x) <= relTol*x || b-a <= relTol*b
		x = xn
		v := MagnitudeSquared(secs, x)
		if (max && v > best) || (!max && v < best) {
			best = v
		}
		if done {
			break
		}
	}
	return best
}

// logSlope returns d/dω ln|H(jω)|² and its derivative for the cascade
// secs: each root σ + jw adds ±2(ω − w)/D and ±2(σ² − (ω − w)²)/D² with
// D = σ² + (ω − w)², + for a zero and − for a pole.
func logSlope(secs []Section, omega float64) (g, gp float64) {
	for i := range secs {
		for _, z := range secs[i].Zeros {
			s, d := real(z), omega-imag(z)
			s2, d2 := s*s, d*d
			den := 1 / (s2 + d2)
			g += 2 * d * den
			gp += 2 * (s2 - d2) * den * den
		}
		for _, p := range secs[i].Poles {
			s, d := real(p), omega-imag(p)
			s2, d2 := s*s, d*d
			den := 1 / (s2 + d2)
			g -= 2 * d * den
			gp -= 2 * (s2 - d2) * den * den
		}
	}
	return g, gp
}
