package response_test

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/xform"
	"github.com/polewright/polewright/synth/zpk"
)

// peakSecondOrderDB is the standard closed form for the resonance peak of
// ω0²/(s² + (ω0/Q)s + ω0²), valid for Q > 1/√2: |H|max = Q/√(1 − 1/(4Q²)),
// reached at ω0·√(1 − 1/(2Q²)) (minimising (1−x²)² + (x/Q)² over x²).
func peakSecondOrderDB(q float64) float64 { return 20 * math.Log10(q/math.Sqrt(1-1/(4*q*q))) }

// TestGrid checks the structure of Grid and that it resolves resonance
// peaks to 0.01 dB for Q up to 1000 (beyond, too) with few base points
// (source: closed-form peak above).
func TestGrid(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		f0Hz float64
		q    float64
		n    int
	}{
		{name: "Q=0.8", f0Hz: 1000, q: 0.8, n: 20},
		{name: "Q=3", f0Hz: 1000, q: 3, n: 20},
		{name: "Q=30", f0Hz: 123, q: 30, n: 50},
		{name: "Q=300", f0Hz: 4567, q: 300, n: 50},
		{name: "Q=1000", f0Hz: 1e4, q: 1000, n: 100},
		{name: "Q=1e5", f0Hz: 1e4, q: 1e5, n: 100},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			h := secondOrder(response.RadPerSec(tc.f0Hz), tc.q)
			// A notch above the resonance adds the jω-axis zero points.
			fz := 3 * tc.f0Hz
			h.Zeros = []complex128{complex(0, response.RadPerSec(fz)), complex(0, -response.RadPerSec(fz))}
			h.Gain /= response.RadPerSec(fz) * response.RadPerSec(fz)
			lo, hi := tc.f0Hz/10, tc.f0Hz*10
			edges := []float64{tc.f0Hz * 1.1, lo, hi * 2}
			g := response.Grid(h, lo, hi, tc.n, edges...)
			require.LessOrEqual(t, len(g), tc.n+response.GridPointsPerPole+response.GridPointsPerZero+len(edges))
			require.True(t, slices.IsSorted(g))
			for i := 1; i < len(g); i++ {
				require.Less(t, g[i-1], g[i], "duplicate")
			}
			require.Equal(t, lo, g[0])
			require.Equal(t, hi, g[len(g)-1])
			require.Contains(t, g, tc.f0Hz*1.1)
			// The zero frequency itself, to rounding of the rad/s → Hz
			// conversion: there the notch is bottomless or nearly so.
			j, _ := slices.BinarySearch(g, fz*(1-1e-15))
			require.InDelta(t, fz, g[j], 1e-15*fz)
			db := response.MagnitudeDB(nil, h, g)
			require.Less(t, db[j], -250.0)
			// The notch factor (1 − (f/fz)²) at the peak is about (1 − 1/9),
			// so compare the lowpass part alone.
			lp := secondOrder(response.RadPerSec(tc.f0Hz), tc.q)
			require.GreaterOrEqual(t, slices.Max(response.MagnitudeDB(nil, lp, g)), peakSecondOrderDB(tc.q)-0.01)
		})
	}
}

// TestPeakDBSecondOrder checks PeakDB against the closed-form peak to
// 1e-9 dB (source: peakSecondOrderDB).
func TestPeakDBSecondOrder(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		f0Hz float64
		q    float64
	}{
		{name: "Q=0.75", f0Hz: 1000, q: 0.75},
		{name: "Q=1", f0Hz: 250, q: 1},
		{name: "Q=5", f0Hz: 3000, q: 5},
		{name: "Q=50", f0Hz: 17, q: 50},
		{name: "Q=1000", f0Hz: 1e4, q: 1000},
		{name: "Q=1e4", f0Hz: 1e5, q: 1e4},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			h := secondOrder(response.RadPerSec(tc.f0Hz), tc.q)
			f, db := response.PeakDB(h, tc.f0Hz/30, tc.f0Hz*30)
			require.InDelta(t, peakSecondOrderDB(tc.q), db, 1e-9)
			require.InDelta(t, tc.f0Hz*math.Sqrt(1-1/(2*tc.q*tc.q)), f, 1e-6*tc.f0Hz/tc.q)
		})
	}
}

// TestPeakDBOther checks peaks at an end of the range, equal ripple peaks
// and two resonances of different height.
func TestPeakDBOther(t *testing.T) {
	t.Parallel()
	d := loadSciPy(t)
	var cheb zpk.ZPK
	for _, r := range d.Responses {
		if r.Name == "cheb1_4_bp_1k_300" {
			cheb = r.zpk()
		}
	}
	require.NotEmpty(t, cheb.Poles)
	wc := response.RadPerSec(100)
	lowpass := zpk.ZPK{Poles: []complex128{complex(-wc, 0)}, Gain: wc}
	twin := secondOrder(response.RadPerSec(1000), 20)
	other := secondOrder(response.RadPerSec(1500), 30)
	twin.Poles = append(twin.Poles, other.Poles...)
	twin.Gain *= other.Gain
	tests := []struct {
		name   string
		h      zpk.ZPK
		lo, hi float64
		wantF  float64 // Hz; 0 if not checked
		wantDB float64
		tolDB  float64
	}{
		// Monotone: the peak is the low end, −10·log10(1 + (10/100)²).
		{name: "low end", h: lowpass, lo: 10, hi: 1e4, wantF: 10, wantDB: -10 * math.Log10(1.01), tolDB: 1e-12},
		// Chebyshev I ripple maxima are all 0 dB (SciPy normalises the
		// passband maximum to unity gain; even order, DC is −1 dB).
		{name: "equiripple", h: cheb, lo: 100, hi: 1e4, wantDB: 0, tolDB: 1e-9},
		// Two resonances: the reference is a brute-force scan, see below.
		{name: "two peaks", h: twin, lo: 100, hi: 1e4, wantDB: bruteForcePeakDB(twin, 800, 1700, 400001), tolDB: 1e-8},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f, db := response.PeakDB(tc.h, tc.lo, tc.hi)
			require.InDelta(t, tc.wantDB, db, tc.tolDB)
			if tc.wantF != 0 {
				require.Equal(t, tc.wantF, f)
			}
		})
	}
}

// bruteForcePeakDB returns the largest of n linearly spaced samples on
// [lo, hi] Hz after narrowing the interval three times to ±2 samples around
// the best one. With n = 400001 on 900 Hz the final spacing is below 1e-12
// of the 25 Hz half bandwidth of the Q=20 resonance, far below 1e-9 dB.
func bruteForcePeakDB(h zpk.ZPK, lo, hi float64, n int) float64 {
	for range 3 {
		f := make([]float64, n)
		for i := range f {
			f[i] = lo + (hi-lo)*float64(i)/float64(n-1)
		}
		db := response.MagnitudeDB(nil, h, f)
		i := slices.Index(db, slices.Max(db))
		step := (hi - lo) / float64(n-1)
		lo, hi = f[i]-2*step, f[i]+2*step
	}
	f := make([]float64, n)
	for i := range f {
		f[i] = lo + (hi-lo)*float64(i)/float64(n-1)
	}
	return slices.Max(response.MagnitudeDB(nil, h, f))
}

// TestTransformProperties checks the magnitude identities of the frequency
// transformations with the SciPy prototypes (source: the substitutions
// s → s/ωc, ωc/s, (s²+ω0²)/(B·s), B·s/(s²+ω0²) evaluated on the axis):
//
//	lowpass:  |H(jω)| = |Hp(j·ω/ωc)|
//	highpass: |H(jω)| = |Hp(j·ωc/ω)|
//	bandpass: |H(jω)| = |Hp(j·(ω² − ω0²)/(B·ω))|
//	bandstop: |H(jω)| = |Hp(j·B·ω/(ω0² − ω²))|
//
// (|Hp(−jΩ)| = |Hp(jΩ)| for a real prototype), and for the lowpass the
// phase is the prototype's at ω/ωc.
func TestTransformProperties(t *testing.T) {
	t.Parallel()
	d := loadSciPy(t)
	const f0, bHz = 1000.0, 250.0
	w0, b := response.RadPerSec(f0), response.RadPerSec(bHz)
	freqs := response.LogSpaceHz(nil, 10, 1e5, 301)
	protoDB := func(h zpk.ZPK, omega float64) float64 {
		return 20 * math.Log10(h.MagnitudeAt(math.Abs(omega)))
	}
	for _, name := range []string{"buttap5", "cheb1ap4_rp1", "cheb2ap5_rs40", "ellipap6_rp0.5_rs60", "besselap7"} {
		proto := d.Prototypes[name].zpk()
		cases := []struct {
			kind string
			h    zpk.ZPK
			m    func(omega float64) float64
		}{
			{kind: "lp", h: xform.LowpassToLowpass(proto, w0), m: func(w float64) float64 { return w / w0 }},
			{kind: "hp", h: xform.LowpassToHighpass(proto, w0), m: func(w float64) float64 { return w0 / w }},
			{kind: "bp", h: xform.LowpassToBandpass(proto, w0, b), m: func(w float64) float64 { return (w*w - w0*w0) / (b * w) }},
			{kind: "bs", h: xform.LowpassToBandstop(proto, w0, b), m: func(w float64) float64 { return b * w / (w0*w0 - w*w) }},
		}
		for _, c := range cases {
			t.Run(fmt.Sprintf("%s/%s", name, c.kind), func(t *testing.T) {
				t.Parallel()
				got := response.MagnitudeDB(nil, c.h, freqs)
				for i, f := range freqs {
					want := protoDB(proto, c.m(response.RadPerSec(f)))
					if want > -200 {
						require.InDeltaf(t, want, got[i], 1e-9, "%v Hz", f)
					}
				}
				if c.kind == "lp" {
					scaled := make([]float64, len(freqs))
					for i, f := range freqs {
						scaled[i] = f / f0 / (2 * math.Pi) // Hz of Ω = ω/ω0 rad/s
					}
					require.InDeltaSlice(t, response.PhaseDeg(nil, proto, scaled), response.PhaseDeg(nil, c.h, freqs), 1e-9)
				}
			})
		}
	}
}

// TestGridPanics checks the documented panics.
func TestGridPanics(t *testing.T) {
	t.Parallel()
	h := secondOrder(1, 1)
	tests := []struct {
		name string
		f    func()
	}{
		{name: "n", f: func() { response.Grid(h, 1, 10, 1) }},
		{name: "lo", f: func() { response.Grid(h, 0, 10, 10) }},
		{name: "order", f: func() { response.Grid(h, 10, 1, 10) }},
		{name: "peak", f: func() { response.PeakDB(h, 10, 10) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Panics(t, tc.f)
		})
	}
}
