package eseries

import (
	"errors"
	"fmt"
	"iter"
	"math"
	"slices"
	"strconv"
	"strings"
)

const (
	// MinValue is the smallest number the package works with. It is a
	// value of every series (1.0×10^-300).
	MinValue = 1e-300
	// MaxValue is the largest number the package works with. It is a value
	// of every series (1.0×10^300).
	MaxValue = 1e300
	// MaxSpan is the largest hi/lo ratio InRange accepts: 30 decades, at most
	// 30×192+1 values.
	MaxSpan = 1e30
	// RelTol is the relative distance within which a number counts as
	// equal to a series value.
	RelTol = 1e-9
)

// ErrUnknownSeries is wrapped by the error Lookup returns for a name that is
// not one of Names.
var ErrUnknownSeries = errors.New("eseries: unknown series")

// Series is one IEC 60063 E series. The zero Series is empty: it has no
// values, its Nearest and Neighbours return NaN, InRange returns nil and
// Contains returns false. Series values are obtained from Lookup; they are
// immutable and safe for concurrent use.
type Series struct {
	name string
	// mant holds the published mantissas, ascending in [1, 10).
	mant []float64
	// codes holds the mantissas in hundredths (470 for 4.7): the exact
	// integers from which every scaled value is computed.
	codes []uint16
	// tol is the customary tolerance in percent.
	tol float64
}

// registry lists the series from the coarsest to the finest.
var registry = [...]Series{
	newSeries("E3", e3Published[:], 40),
	newSeries("E6", e6Published[:], 20),
	newSeries("E12", e12Published[:], 10),
	newSeries("E24", e24Published[:], 5),
	newSeries("E48", e48Published[:], 2),
	newSeries("E96", e96Published[:], 1),
	newSeries("E192", e192Published[:], 0.5),
}

func newSeries(name string, published []float64, tol float64) Series {
	codes := make([]uint16, len(published))
	for i, m := range published {
		codes[i] = uint16(math.Round(m * 100))
	}
	return Series{name: name, mant: published, codes: codes, tol: tol}
}

// Names returns the names of the series, "E3", "E6", "E12", "E24", "E48",
// "E96" and "E192", from the coarsest to the finest. The slice is a new copy
// on every call.
func Names() []string {
	names := make([]string, len(registry))
	for i, s := range registry {
		names[i] = s.name
	}
	return names
}

// Lookup returns the series with the given name, one of Names, matched
// without regard to case ("e24" is E24). Any other name, including one with
// surrounding spaces, gives an error that wraps ErrUnknownSeries and lists
// the valid names.
func Lookup(name string) (Series, error) {
	for _, s := range registry {
		if strings.EqualFold(name, s.name) {
			return s, nil
		}
	}
	return Series{}, fmt.Errorf("%w %q (valid: %s)", ErrUnknownSeries, name, strings.Join(Names(), ", "))
}

// Name returns the series name, such as "E24". It is "" for the zero Series.
func (s Series) Name() string { return s.name }

// String returns the series name; it makes a Series print as its name.
func (s Series) String() string { return s.name }

// Len returns the number of values per decade: 3, 6, 12, 24, 48, 96 or 192,
// and 0 for the zero Series.
func (s Series) Len() int { return len(s.mant) }

// Values returns a new copy of the published mantissas, strictly ascending
// in [1, 10). 1.0 is the first; 10 is not included, being the first value of
// the next decade.
func (s Series) Values() []float64 { return slices.Clone(s.mant) }

// TolerancePct returns the tolerance, in percent, customarily paired with
// the series: 40 for E3 (IEC 60063 says only "wider than 20 %"), 20 for E6,
// 10 for E12, 5 for E24, 2 for E48, 1 for E96 and 0.5 for E192 (which also
// serves 0.25 % and 0.1 % parts). It is 0 for the zero Series.
func (s Series) TolerancePct() float64 { return s.tol }

// Nearest returns the series value, a mantissa times a power of ten, closest
// to x by ratio, that is the value v minimising |log(v/x)|. Where x is
// equally far from the values below and above, Nearest returns the lower.
// If x is within RelTol of a series value, Nearest returns that value.
//
// Nearest returns NaN if x is not in [MinValue, MaxValue] (so for zero,
// negative numbers, NaN and ±Inf) or if s is the zero Series.
func (s Series) Nearest(x float64) float64 {
	gb, ga, ok := s.bracket(x)
	if !ok {
		return math.NaN()
	}
	below := s.at(gb)
	if gb == ga {
		return below
	}
	above := s.at(ga)
	if above/x < x/below {
		return above
	}
	return below
}

// Neighbours returns the largest series value not above x and the smallest
// not below it; both are v when x is within RelTol of a series value v. The
// search crosses decade boundaries: in E24, Neighbours(9.9) is 9.1, 10 and
// Neighbours(10) is 10, 10.
//
// Neighbours returns NaN, NaN if x is not in [MinValue, MaxValue] (so for
// zero, negative numbers, NaN and ±Inf) or if s is the zero Series.
func (s Series) Neighbours(x float64) (below, above float64) {
	gb, ga, ok := s.bracket(x)
	if !ok {
		return math.NaN(), math.NaN()
	}
	return s.at(gb), s.at(ga)
}

// Contains reports whether x is within RelTol of a series value, a mantissa
// times a power of ten. It is false for x outside [MinValue, MaxValue] and
// for the zero Series.
func (s Series) Contains(x float64) bool {
	gb, ga, ok := s.bracket(x)
	return ok && gb == ga
}

// InRange returns, ascending, every series value v, a mantissa times a power
// of ten, with lo ≤ v ≤ hi. The bounds are inclusive with tolerance RelTol,
// so a bound computed as 2.2 times 1e5 in float64 (220000.00000000003) still
// includes 220e3. Values outside [MinValue, MaxValue] are never returned.
// Each value is the float64 nearest to its decimal form: 4.7e-9 from E12
// equals the literal 4.7e-9.
//
// InRange returns nil when no value lies in the range, when lo or hi is not
// a positive finite number, when lo > hi, and, to bound the result's size,
// when hi/lo exceeds MaxSpan; Decades has no such bound.
func (s Series) InRange(lo, hi float64) []float64 {
	if !(hi/lo <= MaxSpan) { // also catches NaN
		return nil
	}
	gs, ge, ok := s.span(lo, hi)
	if !ok {
		return nil
	}
	vals := make([]float64, 0, ge-gs+1)
	for g := gs; g <= ge; g++ {
		vals = append(vals, s.at(g))
	}
	return vals
}

// Decades returns an iterator over the values InRange(lo, hi) would return,
// decade by decade and ascending, computed as it goes so that any span of
// [MinValue, MaxValue] can be walked: at most 600 decades, 115 201 values
// for E192. The iterator yields nothing in the cases where InRange returns
// nil, except that there is no limit on hi/lo.
//
// It yields scaled values rather than powers of ten so that callers never
// multiply a mantissa by a power of ten themselves, which can land one
// floating-point step away from the decimal value (in float64, 4.7 times
// 1e-9 is 4.700000000000001e-09, not 4.7e-9).
func (s Series) Decades(lo, hi float64) iter.Seq[float64] {
	return func(yield func(float64) bool) {
		gs, ge, ok := s.span(lo, hi)
		if !ok {
			return
		}
		for g := gs; g <= ge; g++ {
			if !yield(s.at(g)) {
				return
			}
		}
	}
}

// Values are addressed by a global index g = k·N + i for the i-th mantissa
// of decade k (mantissa×10^k) in a series of N values, so consecutive series
// values have consecutive indices across decade boundaries.

// span returns the first and last global indices of the values in [lo, hi],
// with the bounds clamped to [MinValue, MaxValue]. ok is false if the range
// is invalid or empty.
func (s Series) span(lo, hi float64) (first, last int, ok bool) {
	if len(s.codes) == 0 || !(lo > 0) || !(hi >= lo) || math.IsInf(hi, 1) {
		return 0, 0, false
	}
	lo = max(lo, MinValue)
	hi = min(hi, MaxValue)
	if lo > hi {
		return 0, 0, false
	}
	_, first, _ = s.bracket(lo)
	last, _, _ = s.bracket(hi)
	return first, last, first <= last
}

// bracket returns the global indices of the largest series value not above
// x and the smallest not below it, both the same index when x is within
// RelTol of a series value. ok is false if x is outside
// [MinValue, MaxValue] or s has no values.
func (s Series) bracket(x float64) (below, above int, ok bool) {
	if len(s.codes) == 0 || !(x >= MinValue && x <= MaxValue) {
		return 0, 0, false
	}
	n := len(s.codes)
	k := int(math.Floor(math.Log10(x)))
	// Log10 may be off by one just around powers of ten; settle the decade
	// with exact powers so that 10^k ≤ x < 10^(k+1).
	if x < pow10(k) {
		k--
	} else if x >= pow10(k+1) {
		k++
	}
	// The mantissa is approximate, but series values are at least 1 % apart,
	// so the search lands on the right index or next to it; exact values
	// settle it.
	j, _ := slices.BinarySearch(s.mant, x/pow10(k))
	g := k*n + j
	va := s.at(g)
	for va < x {
		g++
		va = s.at(g)
	}
	vb := s.at(g - 1)
	for vb >= x {
		g--
		va, vb = vb, s.at(g-1)
	}
	// Now vb < x ≤ va for the consecutive values at g-1 and g.
	switch {
	case va-x <= RelTol*va:
		return g, g, true
	case x-vb <= RelTol*vb:
		return g - 1, g - 1, true
	}
	return g - 1, g, true
}

// at returns the series value with global index g, the float64 nearest to
// mantissa×10^k.
func (s Series) at(g int) float64 {
	n := len(s.codes)
	k, i := g/n, g%n
	if i < 0 {
		i += n
		k--
	}
	return scaled(s.codes[i], k-2)
}

// exact10 holds the powers of ten that float64 represents exactly.
var exact10 = [...]float64{
	1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10,
	1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
}

// scaled returns the float64 nearest to c×10^e. For |e| ≤ 22 both c and
// 10^|e| are exact in float64, so one correctly rounded multiplication or
// division gives the nearest float64; otherwise strconv does the decimal
// conversion.
func scaled(c uint16, e int) float64 {
	switch {
	case e >= 0 && e < len(exact10):
		return float64(c) * exact10[e]
	case e < 0 && -e < len(exact10):
		return float64(c) / exact10[-e]
	}
	var buf [24]byte
	b := strconv.AppendUint(buf[:0], uint64(c), 10)
	b = append(b, 'e')
	b = strconv.AppendInt(b, int64(e), 10)
	v, _ := strconv.ParseFloat(string(b), 64) // cannot fail: |e| ≤ 305 here
	return v
}

// pow10Min is the lowest exponent bracket needs from pow10: one decade below
// MinValue, with a margin.
const pow10Min = -302

// pow10Tab holds the float64 nearest to 10^k for k in [pow10Min, -pow10Min].
var pow10Tab = func() (t [2*-pow10Min + 1]float64) {
	for i := range t {
		t[i] = scaled(1, i+pow10Min)
	}
	return t
}()

// pow10 returns the float64 nearest to 10^k for k in [pow10Min, -pow10Min].
func pow10(k int) float64 { return pow10Tab[k-pow10Min] }
