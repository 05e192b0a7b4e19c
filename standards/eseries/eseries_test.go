package eseries_test

import (
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/standards/eseries"
)

// mustLookup returns the named series or fails the test.
func mustLookup(t testing.TB, name string) eseries.Series {
	t.Helper()
	s, err := eseries.Lookup(name)
	require.NoError(t, err)
	return s
}

// sigFigs is the number of significant figures IEC 60063 gives each series:
// two in Table 1 (E3..E24), three in Table 2 (E48..E192).
func sigFigs(s eseries.Series) int {
	if s.Len() <= 24 {
		return 2
	}
	return 3
}

// mul returns a×b rounded in float64 at run time; a constant expression
// such as 4.7 * 1e-9 would be evaluated exactly by the compiler instead.
func mul(a, b float64) float64 { return a * b }

// hundredths returns a mantissa in [1, 10) as an integer number of
// hundredths (4.7 → 470).
func hundredths(m float64) int { return int(math.Round(m * 100)) }

func TestNames(t *testing.T) {
	t.Parallel()
	// The seven series of IEC 60063:2015, coarsest first.
	want := []string{"E3", "E6", "E12", "E24", "E48", "E96", "E192"}
	got := eseries.Names()
	require.Equal(t, want, got)
	got[0] = "changed"
	require.Equal(t, want, eseries.Names(), "Names must return a fresh copy")
}

func TestLookup(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		in      string
		wantLen int     // IEC 60063: N values per decade for series EN
		wantTol float64 // customary tolerance, see the package doc
	}{
		{name: "E3", in: "E3", wantLen: 3, wantTol: 40}, // IEC: "wider than 20 %"; 40 is this package's choice
		{name: "E6", in: "E6", wantLen: 6, wantTol: 20},
		{name: "E12", in: "E12", wantLen: 12, wantTol: 10},
		{name: "E24", in: "E24", wantLen: 24, wantTol: 5},
		{name: "E48", in: "E48", wantLen: 48, wantTol: 2},
		{name: "E96", in: "E96", wantLen: 96, wantTol: 1},
		{name: "E192", in: "E192", wantLen: 192, wantTol: 0.5},
		{name: "lower case", in: "e24", wantLen: 24, wantTol: 5},
		{name: "mixed case", in: "e192", wantLen: 192, wantTol: 0.5},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := eseries.Lookup(tc.in)
			require.NoError(t, err)
			require.Equal(t, strings.ToUpper(tc.in), s.Name())
			require.Equal(t, s.Name(), s.String())
			require.Equal(t, tc.wantLen, s.Len())
			require.Len(t, s.Values(), tc.wantLen)
			require.Equal(t, tc.wantTol, s.TolerancePct())
		})
	}
}

func TestLookupUnknown(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		in   string
	}{
		{name: "empty", in: ""},
		{name: "not a series", in: "E7"},
		{name: "E1000", in: "E1000"},
		{name: "no prefix", in: "24"},
		{name: "leading space", in: " E24"},
		{name: "inner space", in: "E 24"},
		{name: "R series", in: "R10"}, // ISO 3 Renard series are not E series
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := eseries.Lookup(tc.in)
			require.ErrorIs(t, err, eseries.ErrUnknownSeries)
			require.Contains(t, err.Error(), strconv.Quote(tc.in))
			for _, n := range eseries.Names() {
				require.Contains(t, err.Error(), n)
			}
			require.Zero(t, s.Len())
		})
	}
}

func TestValuesShape(t *testing.T) {
	t.Parallel()
	for _, name := range eseries.Names() {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, name)
			v := s.Values()
			require.Equal(t, 1.0, v[0], "every series starts at 1.0 (IEC 60063)")
			require.Less(t, v[len(v)-1], 10.0)
			for i := 1; i < len(v); i++ {
				require.Greater(t, v[i], v[i-1], "strictly ascending at %d", i)
			}
			for _, m := range v {
				// Shortest decimal form has at most the table's figures.
				digits := strings.TrimLeft(strings.ReplaceAll(strconv.FormatFloat(m, 'f', -1, 64), ".", ""), "0")
				require.LessOrEqual(t, len(digits), sigFigs(s), "%v has too many figures", m)
			}
			v[0] = 42
			require.Equal(t, 1.0, s.Values()[0], "Values must return a fresh copy")
		})
	}
}

// TestFormula recomputes the progression 10^(i/N) rounded to the series'
// figures and requires the published values that differ from it to be
// exactly the departures below. The departure lists are the well-known
// irregularities of IEC 60063:2015 Tables 1 and 2 (typed from memory); the
// formula values they replace are given in the comments.
func TestFormula(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name       string
		departures []float64 // published values that are not round(10^(i/N))
	}{
		{name: "E3", departures: []float64{4.7}},                                     // formula 4.6
		{name: "E6", departures: []float64{3.3, 4.7}},                                // 3.2, 4.6
		{name: "E12", departures: []float64{2.7, 3.3, 3.9, 4.7, 8.2}},                // 2.6, 3.2, 3.8, 4.6, 8.3
		{name: "E24", departures: []float64{2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2}}, // 2.6, 2.9, 3.2, 3.5, 3.8, 4.2, 4.6, 8.3
		{name: "E48", departures: nil},                                               // E48 follows the formula
		{name: "E96", departures: nil},                                               // E96 follows the formula
		{name: "E192", departures: []float64{9.20}},                                  // formula 9.19
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, tc.name)
			n := s.Len()
			// Rounding unit in hundredths: 0.1 for two figures, 0.01 for three.
			unit := 10
			if sigFigs(s) == 3 {
				unit = 1
			}
			halfStep := math.Pow(10, 1/(2*float64(n)))
			var got []int
			for i, m := range s.Values() {
				exact := math.Pow(10, float64(i)/float64(n))
				formula := int(math.Round(exact*100/float64(unit))) * unit
				if hundredths(m) != formula {
					got = append(got, hundredths(m))
				}
				ratio := max(m/exact, exact/m)
				require.LessOrEqual(t, ratio, halfStep, "%v is more than half a step from 10^(%d/%d)", m, i, n)
			}
			var want []int
			for _, d := range tc.departures {
				want = append(want, hundredths(d))
			}
			require.Equal(t, want, got)
		})
	}
}

// TestNesting checks that each series holds the next coarser one as its
// every other value (IEC 60063: E24 ⊃ E12 ⊃ E6 ⊃ E3, E192 ⊃ E96 ⊃ E48).
func TestNesting(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		fine   string
		coarse string
	}{
		{name: "E6 in E3", fine: "E6", coarse: "E3"},
		{name: "E12 in E6", fine: "E12", coarse: "E6"},
		{name: "E24 in E12", fine: "E24", coarse: "E12"},
		{name: "E96 in E48", fine: "E96", coarse: "E48"},
		{name: "E192 in E96", fine: "E192", coarse: "E96"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			fine := mustLookup(t, tc.fine).Values()
			coarse := mustLookup(t, tc.coarse).Values()
			require.Len(t, fine, 2*len(coarse))
			var everyOther []float64
			for i := 0; i < len(fine); i += 2 {
				everyOther = append(everyOther, fine[i])
			}
			require.Equal(t, coarse, everyOther)
		})
	}
}

func TestNeighbours(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name      string
		series    string
		x         float64
		wantBelow float64
		wantAbove float64
	}{
		// Expected values are read off the published tables in values.go.
		{name: "on a value", series: "E12", x: 4.7e3, wantBelow: 4.7e3, wantAbove: 4.7e3},
		{name: "within RelTol above", series: "E12", x: 4.7e3 * (1 + 1e-10), wantBelow: 4.7e3, wantAbove: 4.7e3},
		{name: "within RelTol below", series: "E12", x: 4.7e3 * (1 - 1e-10), wantBelow: 4.7e3, wantAbove: 4.7e3},
		{name: "just outside RelTol", series: "E12", x: 4.7e3 * (1 + 1e-8), wantBelow: 4.7e3, wantAbove: 5.6e3},
		{name: "run-time product", series: "E12", x: mul(4.7, 1e-9), wantBelow: 4.7e-9, wantAbove: 4.7e-9},
		{name: "between", series: "E24", x: 4.8e3, wantBelow: 4.7e3, wantAbove: 5.1e3},
		{name: "9.9 crosses to 10", series: "E24", x: 9.9, wantBelow: 9.1, wantAbove: 10},
		{name: "just below 10", series: "E12", x: math.Nextafter(10, 0) * (1 - 1e-8), wantBelow: 8.2, wantAbove: 10},
		{name: "10 exactly", series: "E12", x: 10, wantBelow: 10, wantAbove: 10},
		{name: "one ulp below 10", series: "E12", x: math.Nextafter(10, 0), wantBelow: 10, wantAbove: 10},
		{name: "just above 1", series: "E6", x: 1.0001, wantBelow: 1, wantAbove: 1.5},
		{name: "0.99 crosses down", series: "E12", x: 0.99, wantBelow: 0.82, wantAbove: 1},
		{name: "E192 9.20", series: "E192", x: 9.2, wantBelow: 9.2, wantAbove: 9.2},
		{name: "E192 below 9.20", series: "E192", x: 9.195, wantBelow: 9.09, wantAbove: 9.2},
		{name: "E192 top of decade", series: "E192", x: 9.95e6, wantBelow: 9.88e6, wantAbove: 1e7},
		{name: "femto", series: "E6", x: 2.5e-15, wantBelow: 2.2e-15, wantAbove: 3.3e-15},
		{name: "tera", series: "E24", x: 5.55e12, wantBelow: 5.1e12, wantAbove: 5.6e12},
		{name: "far small decade", series: "E96", x: 3.333e-250, wantBelow: 3.32e-250, wantAbove: 3.40e-250},
		{name: "far large decade", series: "E48", x: 7e250, wantBelow: 6.81e250, wantAbove: 7.15e250},
		{name: "MinValue", series: "E3", x: eseries.MinValue, wantBelow: 1e-300, wantAbove: 1e-300},
		{name: "MaxValue", series: "E3", x: eseries.MaxValue, wantBelow: 1e300, wantAbove: 1e300},
		{name: "just below MaxValue", series: "E3", x: 9e299, wantBelow: 4.7e299, wantAbove: 1e300},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, tc.series)
			below, above := s.Neighbours(tc.x)
			require.Equal(t, tc.wantBelow, below)
			require.Equal(t, tc.wantAbove, above)
		})
	}
}

func TestNearest(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		series string
		x      float64
		want   float64
	}{
		// Expected values: the neighbour from the published tables (values.go)
		// with the smaller ratio to x, worked out in the comment.
		{name: "on a value", series: "E24", x: 4.7e3, want: 4.7e3},
		{name: "4.8k", series: "E24", x: 4.8e3, want: 4.7e3},                       // 4.8/4.7=1.021 < 5.1/4.8=1.063
		{name: "5k", series: "E24", x: 5e3, want: 5.1e3},                           // 5/4.7=1.064 > 5.1/5=1.020
		{name: "9.9 goes to 10", series: "E24", x: 9.9, want: 10},                  // 9.9/9.1=1.088 > 10/9.9=1.010
		{name: "9.5 stays in decade", series: "E24", x: 9.5, want: 9.1},            // 9.5/9.1=1.044 < 10/9.5=1.053
		{name: "0.95 goes to 1", series: "E12", x: 0.95, want: 1},                  // 0.95/0.82=1.159 > 1/0.95=1.053
		{name: "ratio not difference", series: "E3", x: 1.55, want: 2.2},           // 1.55/1=1.55 > 2.2/1.55=1.419, though 1.55-1 < 2.2-1.55
		{name: "below geometric mid", series: "E3", x: 1.48, want: 1},              // sqrt(1·2.2)=1.4832
		{name: "above geometric mid", series: "E3", x: 1.49, want: 2.2},            // sqrt(1·2.2)=1.4832
		{name: "E3 6.8", series: "E3", x: 6.8, want: 4.7},                          // 6.8/4.7=1.447 < 10/6.8=1.471
		{name: "E3 7", series: "E3", x: 7, want: 10},                               // 7/4.7=1.489 > 10/7=1.429
		{name: "E192 9.20", series: "E192", x: 9.2e-6, want: 9.2e-6},               // published 9.20
		{name: "E192 near 9.20", series: "E192", x: 9.21e-6, want: 9.2e-6},         // 9.21/9.20=1.001 < 9.31/9.21=1.011
		{name: "E96 12345", series: "E96", x: 12345, want: 12.4e3},                 // 12.345/12.1=1.020 > 12.4/12.345=1.004
		{name: "4.71n", series: "E12", x: 4.71e-9, want: 4.7e-9},                   // 4.71/4.7=1.002
		{name: "run-time product", series: "E12", x: mul(4.7, 1e-9), want: 4.7e-9}, // within RelTol, snapped to the literal
		{name: "tiny", series: "E12", x: 3.5e-280, want: 3.3e-280},                 // 3.5/3.3=1.061 < 3.9/3.5=1.114
		{name: "huge", series: "E12", x: 6e280, want: 5.6e280},                     // 6/5.6=1.071 < 6.8/6=1.133
		{name: "MinValue", series: "E192", x: eseries.MinValue, want: 1e-300},      // 1.00×10^-300
		{name: "above MinValue", series: "E6", x: 1.2e-300, want: 1e-300},          // 1.2/1=1.2 < 1.5/1.2=1.25
		{name: "MaxValue", series: "E192", x: eseries.MaxValue, want: 1e300},       // 1.00×10^300
		{name: "below MaxValue", series: "E6", x: 8.5e299, want: 1e300},            // 8.5/6.8=1.25 > 10/8.5=1.176
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, tc.series)
			require.Equal(t, tc.want, s.Nearest(tc.x))
		})
	}
}

// TestNearestTies looks, around the geometric mean of some adjacent pairs,
// for numbers x whose two ratios x/below and above/x are equal in float64,
// and requires Nearest to pick the lower value for them.
func TestNearestTies(t *testing.T) {
	t.Parallel()
	ties := 0
	for _, name := range eseries.Names() {
		s := mustLookup(t, name)
		for _, below := range s.InRange(1, 100) {
			_, above := s.Neighbours(math.Nextafter(below, math.Inf(1)) * (1 + 1e-8))
			mid := math.Sqrt(below * above)
			x := mid
			for range 8 {
				x = math.Nextafter(x, 0)
			}
			for range 16 {
				want := below
				if above/x < x/below {
					want = above
				} else if above/x == x/below {
					ties++
				}
				require.Equal(t, want, s.Nearest(x), "%s: x=%v between %v and %v", name, x, below, above)
				x = math.Nextafter(x, math.Inf(1))
			}
		}
	}
	require.Positive(t, ties, "no float64 ties found; the test exercised nothing")
}

func TestInvalidInput(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		x    float64
	}{
		{name: "zero", x: 0},
		{name: "negative zero", x: math.Copysign(0, -1)},
		{name: "negative", x: -4.7e3},
		{name: "NaN", x: math.NaN()},
		{name: "+Inf", x: math.Inf(1)},
		{name: "-Inf", x: math.Inf(-1)},
		{name: "below MinValue", x: math.Nextafter(eseries.MinValue, 0)},
		{name: "above MaxValue", x: math.Nextafter(eseries.MaxValue, math.Inf(1))},
		{name: "subnormal", x: 5e-324},
		{name: "MaxFloat64", x: math.MaxFloat64},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			for _, name := range eseries.Names() {
				s := mustLookup(t, name)
				require.True(t, math.IsNaN(s.Nearest(tc.x)), name)
				below, above := s.Neighbours(tc.x)
				require.True(t, math.IsNaN(below), name)
				require.True(t, math.IsNaN(above), name)
				require.False(t, s.Contains(tc.x), name)
			}
		})
	}
}

func TestZeroSeries(t *testing.T) {
	t.Parallel()
	var s eseries.Series
	require.Empty(t, s.Name())
	require.Zero(t, s.Len())
	require.Empty(t, s.Values())
	require.Zero(t, s.TolerancePct())
	require.True(t, math.IsNaN(s.Nearest(1)))
	below, above := s.Neighbours(1)
	require.True(t, math.IsNaN(below))
	require.True(t, math.IsNaN(above))
	require.False(t, s.Contains(1))
	require.Nil(t, s.InRange(1, 10))
	for range s.Decades(1, 10) {
		t.Fatal("zero Series yielded a value")
	}
}

func TestContains(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		series string
		x      float64
		want   bool
	}{
		// Membership read off the published tables in values.go.
		{name: "4.7k in E12", series: "E12", x: 4.7e3, want: true},
		{name: "4.7×1e-9 in E12", series: "E12", x: mul(4.7, 1e-9), want: true}, // one ulp off 4.7e-9, within RelTol
		{name: "2.2×1e5 in E3", series: "E3", x: mul(2.2, 1e5), want: true},     // 220000.00000000003
		{name: "10 in E3", series: "E3", x: 10, want: true},
		{name: "1 in E192", series: "E192", x: 1, want: true},
		{name: "4.3 not in E12", series: "E12", x: 4.3, want: false}, // E24 only
		{name: "4.3 in E24", series: "E24", x: 4.3, want: true},
		{name: "9.19 not in E192", series: "E192", x: 9.19, want: false}, // formula value, not published
		{name: "9.20 in E192", series: "E192", x: 9.20, want: true},
		{name: "2.2 not in E48", series: "E48", x: 2.2, want: false}, // E48 has 2.15, 2.26
		{name: "2.21 in E96", series: "E96", x: 2.21e5, want: true},
		{name: "2.21 not in E48", series: "E48", x: 2.21e5, want: false},
		{name: "off by 1e-8", series: "E12", x: 4.7e3 * (1 + 1e-8), want: false},
		{name: "off by 1e-10", series: "E12", x: 4.7e3 * (1 + 1e-10), want: true},
		{name: "1e-300", series: "E6", x: 1e-300, want: true},
		{name: "6.8e299", series: "E6", x: 6.8e299, want: true},
		{name: "zero", series: "E6", x: 0, want: false},
		{name: "negative", series: "E6", x: -1, want: false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, tc.series)
			require.Equal(t, tc.want, s.Contains(tc.x))
		})
	}
}

func TestInRange(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name      string
		series    string
		lo, hi    float64
		wantLen   int // counted from the published tables
		wantFirst float64
		wantLast  float64
	}{
		{name: "one decade E12", series: "E12", lo: 1e3, hi: 10e3, wantLen: 13, wantFirst: 1e3, wantLast: 10e3},    // 12 + the next 1.0
		{name: "1k..220k E24", series: "E24", lo: 1e3, hi: 220e3, wantLen: 57, wantFirst: 1e3, wantLast: 220e3},    // 2×24 + 1.0..2.2 (9 values)
		{name: "1k..220k E96", series: "E96", lo: 1e3, hi: 220e3, wantLen: 225, wantFirst: 1e3, wantLast: 215e3},   // 2×96 + 1.00..2.15 (33 values); E96 has no 2.20
		{name: "1k..220k E192", series: "E192", lo: 1e3, hi: 220e3, wantLen: 450, wantFirst: 1e3, wantLast: 218e3}, // 2×192 + 1.00..2.18 (66 values)
		{name: "nF caps E12", series: "E12", lo: 1e-10, hi: 1e-6, wantLen: 49, wantFirst: 1e-10, wantLast: 1e-6},   // 4×12 + 1
		{name: "open bounds", series: "E6", lo: 1.1, hi: 6.0, wantLen: 4, wantFirst: 1.5, wantLast: 4.7},           // 1.5 2.2 3.3 4.7
		{name: "bound within RelTol", series: "E6", lo: 1.5 * (1 + 1e-12), hi: 4.7 * (1 - 1e-12), wantLen: 4, wantFirst: 1.5, wantLast: 4.7},
		{name: "run-time product bounds", series: "E12", lo: mul(1.8, 1e-9), hi: mul(8.2, 1e-9), wantLen: 9, wantFirst: 1.8e-9, wantLast: 8.2e-9}, // E12 1.8 to 8.2: nine values
		{name: "bound outside RelTol", series: "E6", lo: 1.5 * (1 + 1e-8), hi: 4.7 * (1 - 1e-8), wantLen: 2, wantFirst: 2.2, wantLast: 3.3},
		{name: "single point on series", series: "E24", lo: 4.3e3, hi: 4.3e3, wantLen: 1, wantFirst: 4.3e3, wantLast: 4.3e3},
		{name: "across decade", series: "E12", lo: 8e2, hi: 1.3e3, wantLen: 3, wantFirst: 8.2e2, wantLast: 1.2e3},            // 820 1000 1200
		{name: "clamped to MinValue", series: "E3", lo: 1e-310, hi: 1e-299, wantLen: 4, wantFirst: 1e-300, wantLast: 1e-299}, // 1, 2.2, 4.7 (e-300), 1e-299
		{name: "clamped to MaxValue", series: "E3", lo: 1e299, hi: math.MaxFloat64, wantLen: 4, wantFirst: 1e299, wantLast: 1e300},
		{name: "exactly MaxSpan", series: "E3", lo: 1, hi: 1e30, wantLen: 91, wantFirst: 1, wantLast: 1e30}, // 30×3 + 1
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, tc.series)
			got := s.InRange(tc.lo, tc.hi)
			require.Len(t, got, tc.wantLen)
			require.Equal(t, tc.wantFirst, got[0])
			require.Equal(t, tc.wantLast, got[len(got)-1])
			for i, v := range got {
				require.True(t, s.Contains(v), "%v", v)
				if i > 0 {
					require.Greater(t, v, got[i-1])
				}
			}
			require.Equal(t, got, slices.Collect(s.Decades(tc.lo, tc.hi)))
		})
	}
}

func TestInRangeNil(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		lo, hi float64
	}{
		{name: "empty gap", lo: 1.01e3, hi: 1.1e3}, // E12 has nothing between 1.0 and 1.2
		{name: "lo above hi", lo: 10e3, hi: 1e3},
		{name: "zero lo", lo: 0, hi: 1},
		{name: "negative lo", lo: -1, hi: 1},
		{name: "NaN lo", lo: math.NaN(), hi: 1},
		{name: "NaN hi", lo: 1, hi: math.NaN()},
		{name: "Inf hi", lo: 1, hi: math.Inf(1)},
		{name: "Inf both", lo: math.Inf(1), hi: math.Inf(1)},
		{name: "beyond MaxSpan", lo: 1, hi: 1.0000001e30},
		{name: "absurd span", lo: 1e-300, hi: 1e300},
		{name: "all below MinValue", lo: 1e-320, hi: 1e-310},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, "E12")
			require.Nil(t, s.InRange(tc.lo, tc.hi))
		})
	}
}

// TestInRangeExactDecimals checks that a scaled value is the float64
// nearest to its decimal form, not mantissa*10^k rounded twice.
func TestInRangeExactDecimals(t *testing.T) {
	t.Parallel()
	s := mustLookup(t, "E12")
	got := s.InRange(1e-10, 1e-6)
	require.Contains(t, got, 4.7e-9)
	require.Contains(t, got, 8.2e-7)
	require.Contains(t, got, 3.3e-10)
	require.NotEqual(t, 4.7e-9, mul(4.7, 1e-9), "the naive product differs; the test would prove nothing otherwise")
}

// TestAllDecadesExact walks every decade of the domain and requires each
// value to print with no more figures than the series has, which holds only
// if the value is the float64 nearest to a decimal of that many figures.
func TestAllDecadesExact(t *testing.T) {
	t.Parallel()
	for _, name := range eseries.Names() {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			s := mustLookup(t, name)
			count := 0
			prev := 0.0
			for v := range s.Decades(eseries.MinValue, eseries.MaxValue) {
				count++
				mant := strings.SplitN(strconv.FormatFloat(v, 'e', -1, 64), "e", 2)[0]
				figures := len(strings.ReplaceAll(mant, ".", ""))
				if figures > sigFigs(s) {
					require.Failf(t, "not the nearest float64", "%v has %d figures", v, figures)
				}
				if v <= prev {
					require.Failf(t, "not ascending", "%v after %v", v, prev)
				}
				prev = v
			}
			require.Equal(t, 600*s.Len()+1, count) // 600 decades and 1e300
		})
	}
}

func TestDecadesEarlyStop(t *testing.T) {
	t.Parallel()
	s := mustLookup(t, "E24")
	var got []float64
	for v := range s.Decades(1e3, 1e6) {
		got = append(got, v)
		if len(got) == 3 {
			break
		}
	}
	require.Equal(t, []float64{1e3, 1.1e3, 1.2e3}, got) // first three E24 values
	// Decades has no MaxSpan limit.
	n := 0
	for range s.Decades(1e-100, 1e100) {
		n++
	}
	require.Equal(t, 200*24+1, n)
	for range s.Decades(2, 1) {
		t.Fatal("yielded for lo > hi")
	}
}

func FuzzNearest(f *testing.F) {
	for _, x := range []float64{0, -1, 1, 9.9, 10, 4.7e-9, 1e-300, 1e300, 1.48324, math.NaN(), math.Inf(1), 123456.789, 5e-324} {
		f.Add(x)
	}
	series := make([]eseries.Series, 0, len(eseries.Names()))
	halfWidest := make(map[string]float64)
	for _, name := range eseries.Names() {
		s := mustLookup(f, name)
		series = append(series, s)
		v := append(s.Values(), 10)
		widest := 0.0
		for i := 1; i < len(v); i++ {
			widest = max(widest, v[i]/v[i-1])
		}
		halfWidest[name] = math.Sqrt(widest)
	}
	f.Fuzz(func(t *testing.T, x float64) {
		for _, s := range series {
			got := s.Nearest(x)
			if !(x >= eseries.MinValue && x <= eseries.MaxValue) {
				require.True(t, math.IsNaN(got), "%s: Nearest(%v) = %v, want NaN", s, x, got)
				continue
			}
			require.True(t, s.Contains(got), "%s: Nearest(%v) = %v is not in the series", s, x, got)
			below, above := s.Neighbours(x)
			require.LessOrEqual(t, below, above)
			require.True(t, got == below || got == above, "%s: Nearest(%v) = %v is neither %v nor %v", s, x, got, below, above)
			// Half the local step by ratio, or RelTol when x was snapped onto
			// a value; never more than half the series' widest step.
			limit := math.Sqrt(above / below)
			if below == above {
				limit = 1 + eseries.RelTol
			}
			ratio := max(got/x, x/got)
			require.LessOrEqual(t, ratio, limit*(1+1e-12),
				"%s: Nearest(%v) = %v is more than half a step away", s, x, got)
			require.LessOrEqual(t, ratio, halfWidest[s.Name()]*(1+1e-12),
				"%s: Nearest(%v) = %v is more than half the widest step away", s, x, got)
		}
	})
}
