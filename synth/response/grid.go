package response

import (
	"math"
	"slices"

	"github.com/polewright/polewright/synth/zpk"
)

// Grid refinement parameters.
const (
	// GridPointsPerPole is the number of points Grid adds around the
	// resonance of each pole with positive imaginary part.
	GridPointsPerPole = 2*gridHalfPoints + 1
	// GridPointsPerZero is the number of points Grid adds at and around
	// each jω-axis zero with positive imaginary part.
	GridPointsPerZero = 5

	// gridHalfPoints is the number of resonance points on each side of the
	// centre.
	gridHalfPoints = 16
	// gridSpan is the half width of the resonance cluster in units of |σ|:
	// ±6|σ| is ±3 bandwidths ω0/Q (ω0/Q = 2|σ|).
	gridSpan = 6.0
)

// gridTan holds tan(i·atan(gridSpan)/gridHalfPoints) for i from
// −gridHalfPoints to gridHalfPoints: the offsets of a resonance cluster in
// units of |σ| (see Grid).
var gridTan = func() (t [GridPointsPerPole]float64) {
	step := math.Atan(gridSpan) / gridHalfPoints
	for k := range t {
		t[k] = math.Tan(float64(k-gridHalfPoints) * step)
	}
	return t
}()

// Grid returns an ascending grid of frequencies in Hz from loHz to hiHz for
// plotting or analysing h. It consists of
//
//   - n log-spaced base points, loHz and hiHz included;
//   - for each pole p = σ + jw with w > 0, GridPointsPerPole points
//     clustered on its resonance, w + |σ|·tan(θ) for θ equally spaced so
//     that the cluster spans ±3 bandwidths ω0/Q = 2|σ| around w (≈ the
//     natural frequency ω0 = |p| when Q is high). They are dense at the
//     centre and sparse in the skirts, and are close enough for the
//     largest sample of a resonance peak to be within 0.01 dB of the peak,
//     for any Q: near the peak |jω − p| = |σ|/cos θ, and the θ step
//     atan(6)/16 = 0.088 rad leaves at most half of it, 20·log10(1/cos 0.044)
//     = 0.0084 dB (the tests check Q from 0.8 to 1e5). A pole on the jω
//     axis adds just its frequency;
//   - for each jω-axis zero at jw, w > 0, GridPointsPerZero points: w
//     itself (to the rounding of the rad/s → Hz conversion, so that
//     MagnitudeDB there gives −Inf or a value hundreds of dB down) and
//     w·(1 ± 0.001), w·(1 ± 0.01);
//   - every frequency in extraHz (band edges, for instance).
//
// Points outside [loHz, hiHz] are dropped, and exact duplicates removed. The
// length is therefore at most n + GridPointsPerPole·P + GridPointsPerZero·Z +
// len(extraHz), where P and Z count the poles and the jω-axis zeros with
// positive imaginary part (for a real filter P ≤ len(h.Poles)/2). The
// result is newly allocated. Grid panics unless n ≥ 2 and
// 0 < loHz < hiHz < +Inf.
func Grid(h zpk.ZPK, loHz, hiHz float64, n int, extraHz ...float64) []float64 {
	if !(loHz > 0) || !(hiHz > loHz) || math.IsInf(hiHz, 1) {
		panic("response: Grid needs 0 < loHz < hiHz < Inf")
	}
	if n < 2 {
		panic("response: Grid needs n >= 2")
	}
	nPoles, nZeros := 0, 0
	for _, p := range h.Poles {
		if imag(p) > 0 {
			nPoles++
		}
	}
	for _, z := range h.Zeros {
		if imag(z) > 0 && onAxis(real(z), imag(z)) {
			nZeros++
		}
	}
	tail := make([]float64, 0, GridPointsPerPole*nPoles+GridPointsPerZero*nZeros+len(extraHz))
	add := func(fHz float64) {
		if fHz >= loHz && fHz <= hiHz {
			tail = append(tail, fHz)
		}
	}
	for _, p := range h.Poles {
		sigma, w := real(p), imag(p)
		if !(w > 0) {
			continue
		}
		if onAxis(sigma, w) {
			add(hzFromRadPerSec(w))
			continue
		}
		for _, t := range gridTan {
			add(hzFromRadPerSec(w + math.Abs(sigma)*t))
		}
	}
	for _, z := range h.Zeros {
		sigma, w := real(z), imag(z)
		if !(w > 0) || !onAxis(sigma, w) {
			continue
		}
		for _, m := range [GridPointsPerZero]float64{1, 1 - 1e-3, 1 + 1e-3, 1 - 1e-2, 1 + 1e-2} {
			add(hzFromRadPerSec(w * m))
		}
	}
	for _, f := range extraHz {
		add(f)
	}
	slices.Sort(tail)
	// Merge the sorted extra points into the (sorted) base grid from the
	// back.
	out := make([]float64, n+len(tail))
	LogSpaceHz(out[:n], loHz, hiHz, n)
	i, j := n-1, len(tail)-1
	for k := len(out) - 1; j >= 0; k-- {
		if i >= 0 && out[i] > tail[j] {
			out[k] = out[i]
			i--
		} else {
			out[k] = tail[j]
			j--
		}
	}
	return slices.Compact(out)
}

// peakGridPoints is the number of base points of the grid PeakDB searches.
const peakGridPoints = 256

// peakMarginDB is how far below the best grid sample a local maximum of the
// grid may lie and still be refined: a true peak is never more than 0.01 dB
// above the grid samples around it (see Grid).
const peakMarginDB = 0.1

// maxPeakCandidates bounds the number of local maxima refined.
const maxPeakCandidates = 32

// PeakDB returns the frequency in Hz and the value of the maximum of
// 20·log10|H(j2πf)| over loHz ≤ f ≤ hiHz, to within about 1e-9 dB. It
// samples h on Grid(h, loHz, hiHz, 256), and refines every local maximum of
// the samples that is within 0.1 dB of the largest with Brent's
// minimisation (golden section with parabolic steps) between its two
// neighbours. If the maximum is at an end of the interval, that end is
// returned. PeakDB panics unless 0 < loHz < hiHz < +Inf.
func PeakDB(h zpk.ZPK, loHz, hiHz float64) (peakHz, peakDB float64) {
	grid := Grid(h, loHz, hiHz, peakGridPoints)
	db := MagnitudeDB(nil, h, grid)
	best := math.Inf(-1)
	peakHz, peakDB = loHz, best
	for i, v := range db {
		if v > best {
			best, peakHz, peakDB = v, grid[i], v
		}
	}
	if math.IsInf(best, 0) {
		return peakHz, peakDB
	}
	refined := 0
	negDB := func(fHz float64) float64 { return -magnitudeDBAt(h, RadPerSec(fHz)) }
	for i, v := range db {
		if v < best-peakMarginDB || (i > 0 && db[i-1] > v) || (i+1 < len(db) && db[i+1] > v) {
			continue
		}
		lo, hi := grid[max(i-1, 0)], grid[min(i+1, len(grid)-1)]
		if f, neg := brentMin(negDB, lo, hi); -neg > peakDB {
			peakHz, peakDB = f, -neg
		}
		if refined++; refined == maxPeakCandidates {
			break
		}
	}
	return peakHz, peakDB
}

// brentMin returns a local minimiser of f on [a, b] and its value, by
// Brent's method: parabolic interpolation through the best three points
// when it behaves, golden-section steps otherwise. The relative tolerance
// on x is 1e-11, well below the √ε usually quoted, because f here is
// smooth and evaluated to nearly full precision, and the peak value is
// wanted to 1e-9 dB even when the peak is very sharp.
func brentMin(f func(float64) float64, a, b float64) (xmin, fmin float64) {
	const (
		golden  = 0.3819660112501051 // (3 − √5)/2
		relTol  = 1e-11
		absTol  = 1e-300
		maxIter = 200
	)
	x := a + golden*(b-a)
	w, v := x, x
	fx := f(x)
	fw, fv := fx, fx
	var d, e float64
	for range maxIter {
		m := 0.5 * (a + b)
		tol1 := relTol*math.Abs(x) + absTol
		tol2 := 2 * tol1
		if math.Abs(x-m) <= tol2-0.5*(b-a) {
			break
		}
		parabolic := false
		if math.Abs(e) > tol1 {
			// Fit a parabola through (v, fv), (w, fw), (x, fx).
			r := (x - w) * (fx - fv)
			q := (x - v) * (fx - fw)
			p := (x-v)*q - (x-w)*r
			q = 2 * (q - r)
			if q > 0 {
				p = -p
			} else {
				q = -q
			}
			etemp := e
			e = d
			if math.Abs(p) < math.Abs(0.5*q*etemp) && p > q*(a-x) && p < q*(b-x) {
				d = p / q
				if u := x + d; u-a < tol2 || b-u < tol2 {
					d = math.Copysign(tol1, m-x)
				}
				parabolic = true
			}
		}
		if !parabolic {
			if x < m {
				e = b - x
			} else {
				e = a - x
			}
			d = golden * e
		}
		u := x + d
		if math.Abs(d) < tol1 {
			u = x + math.Copysign(tol1, d)
		}
		fu := f(u)
		if fu <= fx {
			if u < x {
				b = x
			} else {
				a = x
			}
			v, fv = w, fw
			w, fw = x, fx
			x, fx = u, fu
		} else {
			if u < x {
				a = u
			} else {
				b = u
			}
			if fu <= fw || w == x {
				v, fv = w, fw
				w, fw = u, fu
			} else if fu <= fv || v == x || v == w {
				v, fv = u, fu
			}
		}
	}
	return x, fx
}

// GoldenMax maximises f on [a, b] by 40 steps of golden-section search
// (the bracket shrinks to 0.618^40 ≈ 4e-9 of its width) and returns the
// largest value it saw. f should be unimodal on [a, b]; otherwise the
// result is a local maximum, or the best point sampled.
func GoldenMax(f func(float64) float64, a, b float64) float64 {
	const r = 0.6180339887498949
	c, d := b-r*(b-a), a+r*(b-a)
	fc, fd := f(c), f(d)
	best := math.Max(fc, fd)
	for range 40 {
		if fc >= fd {
			b, d, fd = d, c, fc
			c = b - r*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + r*(b-a)
			fd = f(d)
		}
		best = math.Max(best, math.Max(fc, fd))
	}
	return best
}
