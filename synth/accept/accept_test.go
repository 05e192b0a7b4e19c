package accept_test

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/accept"
)

// lowpass2DB is 20·log10|H(j2πf)| of the second-order lowpass
// H(s) = 1/(1 + s/(Q·ω0) + (s/ω0)²).
func lowpass2DB(f0, q float64) func(float64) float64 {
	return func(f float64) float64 {
		s := complex(0, f/f0)
		return 20 * math.Log10(cmplx.Abs(1/(1+s/complex(q, 0)+s*s)))
	}
}

// notchDB is a lowpass-notch: zeros at ±jz, poles at f0 with q.
func notchDB(f0, q, z float64) func(float64) float64 {
	return func(f float64) float64 {
		s := complex(0, f/f0)
		zz := complex(z/f0, 0)
		return 20 * math.Log10(cmplx.Abs((s*s+zz*zz)/(zz*zz)/(1+s/complex(q, 0)+s*s)))
	}
}

func logGrid(lo, hi float64, n int) []float64 {
	g := make([]float64, n)
	for i := range g {
		g[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return g
}

func sample(p *accept.Plan, f func(float64) float64) []float64 {
	db := make([]float64, len(p.Grid()))
	for i, x := range p.Grid() {
		db[i] = f(x)
	}
	return db
}

// TestPeakBetweenGridPoints: a resonance whose peak lies between two
// grid points is found. Reference: the closed form of the second-order
// lowpass's peak, |H|max = Q/√(1 − 1/(4Q²)) at f0·√(1 − 1/(2Q²)).
func TestPeakBetweenGridPoints(t *testing.T) {
	t.Parallel()
	for _, q := range []float64{0.8, 2, 10, 40} {
		f0 := 1000 * 1.0237 // off the grid
		want := 20 * math.Log10(q/math.Sqrt(1-1/(4*q*q)))
		m := accept.Mask{Pass: []accept.Band{{0, 5000}}, RippleDB: 100}
		// The hints put the resonance's frequency and its half-power
		// neighbours into a coarse grid, as the design's full plan does.
		hints := []float64{f0, f0 * (1 - 1/(2*q)), f0 * (1 + 1/(2*q))}
		p := accept.NewPlan(m, logGrid(1, 5000, 40), hints)
		f := lowpass2DB(f0, q)
		r := p.Judge(sample(p, f), f, accept.Full)
		require.InDelta(t, want, r.PassMaxDB, 1e-7, "Q %g", q)
		require.InDelta(t, 20*math.Log10(lowpass2DBAbs(f0, q, 5000)), r.PassMinDB, 1e-9)
	}
}

func lowpass2DBAbs(f0, q, f float64) float64 {
	return math.Pow(10, lowpass2DB(f0, q)(f)/20)
}

// TestNarrowLobe: a stopband lobe between two close transmission zeros,
// both between grid points, is found from hints at the zeros. Reference:
// a dense evaluation (200,000 points) of the same function.
func TestNarrowLobe(t *testing.T) {
	t.Parallel()
	f := func(x float64) float64 {
		return notchDB(1000, 5, 7400)(x) + notchDB(1000, 5, 7700)(x) // two zeros 4 % apart
	}
	dense := math.Inf(-1)
	for _, x := range logGrid(7400, 7700, 200000) {
		dense = math.Max(dense, f(x))
	}
	m := accept.Mask{Pass: []accept.Band{{0, 500}}, Stop: []accept.Band{{7400, 7700}}, RippleDB: 100, AttenDB: 10}
	// The design's hints: the zeros and the geometric mean between them.
	p := accept.NewPlan(m, logGrid(10, 300000, 60), []float64{7400, 7700, math.Sqrt(7400 * 7700)})
	r := p.Judge(sample(p, f), f, accept.Full)
	require.InDelta(t, dense, r.StopWorstDB, 1e-6)
	require.Contains(t, r.Extremes, r.Extremes[len(r.Extremes)-1])
}

// TestRules: each rule at its threshold, just inside and just outside
// (INTERFACE.md's acceptance rule).
func TestRules(t *testing.T) {
	t.Parallel()
	// A response of 0 dB in the passband with a bump of height h at 500 Hz,
	// and a constant level s in the stopband.
	resp := func(h, s float64) func(float64) float64 {
		return func(f float64) float64 {
			switch {
			case f <= 1000:
				return h * math.Exp(-math.Pow(math.Log(f/500)/0.1, 2))
			case f >= 3000:
				return s
			}
			return s / 2
		}
	}
	base := accept.Mask{Pass: []accept.Band{{0, 1000}}, Stop: []accept.Band{{3000, 300000}}, RippleDB: 0.5, AttenDB: 40}
	withGain := base
	withGain.GainDB, withGain.GainTolDB = 0, 0.3
	withAlias := base
	withAlias.Alias, withAlias.AliasAttenDB = []accept.Band{{47000, 49000}}, 60
	cases := []struct {
		name  string
		mask  accept.Mask
		h, s  float64
		meets bool
	}{
		{"ripple just inside", base, 0.499, -50, true},
		{"ripple just outside", base, 0.501, -50, false},
		// Rule 2 is measured from the passband maximum: a bump of 0.4 dB
		// lifts the reference, so −39.7 dB is 40.1 dB below it.
		{"stopband from the passband maximum", base, 0.4, -39.7, true},
		{"stopband just inside", base, 0, -40.001, true},
		{"stopband just outside", base, 0, -39.999, false},
		{"gain just inside", withGain, 0.299, -50, true},
		{"gain just outside", withGain, 0.301, -50, false},
		{"alias just inside", withAlias, 0, -60.001, true},
		{"alias just outside", withAlias, 0, -59.999, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			p := accept.NewPlan(tc.mask, logGrid(1, 300000, 300), nil)
			f := resp(tc.h, tc.s)
			r := p.Judge(sample(p, f), f, accept.Full)
			require.Equal(t, tc.meets, r.Meets, "%+v", r)
			d := p.Judge(sample(p, f), f, accept.Decisive)
			require.Equal(t, tc.meets, d.Meets, "decisive %+v", d)
		})
	}
}

// TestDecisiveAgreesWithFull: on random perturbations of a notch
// response, the Monte Carlo mode's verdict is the full refinement's,
// given a grid holding the nominal extremes and their 1 % neighbours.
// Reference: Full on a dense grid (20,000 points).
func TestDecisiveAgreesWithFull(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	m := accept.Mask{Pass: []accept.Band{{0, 1000}}, Stop: []accept.Band{{2200, 220000}}, RippleDB: 1, AttenDB: 38}
	nominal := func(x float64) float64 {
		return notchDB(1000, 3, 2500)(x) + notchDB(900, 0.8, 4000)(x) + 0.5
	}
	full := accept.NewPlan(m, logGrid(1, 220000, 300), []float64{1000, 900, 2500, 4000})
	rn := full.Judge(sample(full, nominal), nominal, accept.Full)
	// A mask the nominal board just meets: 0.1 dB of ripple margin, 0.2 dB
	// of stopband margin.
	m.RippleDB = rn.PassMaxDB - rn.PassMinDB + 0.1
	m.AttenDB = rn.PassMaxDB - rn.StopWorstDB - 0.2
	full = accept.NewPlan(m, logGrid(1, 220000, 300), []float64{1000, 900, 2500, 4000})
	rn = full.Judge(sample(full, nominal), nominal, accept.Full)
	require.True(t, rn.Meets)
	var hints []float64
	for _, x := range rn.Extremes {
		hints = append(hints, x, x*0.99, x*1.01)
	}
	mc := accept.NewPlan(m, logGrid(1, 220000, 120), hints)
	dense := accept.NewPlan(m, logGrid(1, 220000, 20000), nil)
	agree, fails := 0, 0
	for range 400 {
		a, b, c, d := 1+0.01*(2*rng.Float64()-1), 1+0.03*(2*rng.Float64()-1), 1+0.01*(2*rng.Float64()-1), 1+0.02*(2*rng.Float64()-1)
		f := func(x float64) float64 {
			return notchDB(1000*a, 3*b, 2500*c)(x) + notchDB(900*d, 0.8, 4000)(x) + 0.5
		}
		want := dense.Judge(sample(dense, f), f, accept.Full)
		got := mc.Judge(sample(mc, f), f, accept.Decisive)
		if want.Meets == got.Meets {
			agree++
		}
		if !want.Meets {
			fails++
		}
		if want.MinMarginDB() < 0.4 && want.MinMarginDB() > -0.4 {
			require.InDelta(t, want.StopWorstDB, got.StopWorstDB, 1e-5)
		}
	}
	require.Equal(t, 400, agree)
	require.Greater(t, fails, 20, "the case must have failing boards to be a test")
	require.Less(t, fails, 380)
}
