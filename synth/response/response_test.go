package response_test

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/zpk"
)

// scipyFile is written by testdata/scipy/gen_xform.py (SciPy 1.10.1).
var scipyFile = filepath.Join("..", "..", "testdata", "scipy", "xform.json")

type jsonZPK struct {
	Zeros [][2]float64 `json:"zeros"`
	Poles [][2]float64 `json:"poles"`
	Gain  float64      `json:"gain"`
}

func (j jsonZPK) zpk() zpk.ZPK {
	h := zpk.ZPK{Gain: j.Gain}
	for _, z := range j.Zeros {
		h.Zeros = append(h.Zeros, complex(z[0], z[1]))
	}
	for _, p := range j.Poles {
		h.Poles = append(h.Poles, complex(p[0], p[1]))
	}
	return h
}

type scipyResponse struct {
	jsonZPK
	Name        string    `json:"name"`
	FreqHz      []float64 `json:"freq_hz"`
	MagDB       []float64 `json:"mag_db"`
	PhaseDeg    []float64 `json:"phase_deg"`
	AxisZerosHz []float64 `json:"axis_zeros_hz"`
}

type scipyDelay struct {
	jsonZPK
	Name      string    `json:"name"`
	FreqHz    []float64 `json:"freq_hz"`
	TauS      []float64 `json:"tau_s"`
	TauErrEst []float64 `json:"tau_err_est"`
}

type scipyData struct {
	Prototypes map[string]jsonZPK `json:"prototypes"`
	Responses  []scipyResponse    `json:"responses"`
	GroupDelay []scipyDelay       `json:"group_delay"`
}

func loadSciPy(t testing.TB) scipyData {
	t.Helper()
	b, err := os.ReadFile(scipyFile)
	require.NoError(t, err, "regenerate with testdata/scipy/gen_xform.py")
	var d scipyData
	require.NoError(t, json.Unmarshal(b, &d))
	require.NotEmpty(t, d.Responses)
	require.NotEmpty(t, d.GroupDelay)
	return d
}

// wrap180 reduces an angle in degrees to (−180, 180].
func wrap180(d float64) float64 {
	d = math.Mod(d, 360)
	if d > 180 {
		d -= 360
	} else if d <= -180 {
		d += 360
	}
	return d
}

// TestAgainstSciPy compares MagnitudeDB and PhaseDeg with SciPy's
// freqs_zpk (source: testdata/scipy/xform.json) for a Butterworth
// highpass, a Chebyshev I bandpass, an elliptic lowpass, a Chebyshev II
// bandstop and a Bessel lowpass: magnitude to 1e-9 dB wherever it is above
// −200 dB, phase to 1e-7° modulo 360°. The comparison is modulo 360°
// because np.unwrap starts from the principal value at the first
// frequency (a highpass starts at n·90°) and turns the exact +180° steps at
// jω-axis zeros into −180° ones when the sampled change exceeds 180°. For
// the filters without axis zeros the offset must moreover be one and the
// same multiple of 360° over the whole list.
func TestAgainstSciPy(t *testing.T) {
	t.Parallel()
	d := loadSciPy(t)
	for _, tc := range d.Responses {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			h := tc.zpk()
			mag := response.MagnitudeDB(nil, h, tc.FreqHz)
			ph := response.PhaseDeg(nil, h, tc.FreqHz)
			require.Len(t, mag, len(tc.FreqHz))
			offset := math.NaN()
			for i, f := range tc.FreqHz {
				if tc.MagDB[i] > -200 {
					require.InDeltaf(t, tc.MagDB[i], mag[i], 1e-9, "magnitude at %v Hz", f)
				}
				diff := ph[i] - tc.PhaseDeg[i]
				require.InDeltaf(t, 0, wrap180(diff), 1e-7, "phase at %v Hz: %v vs SciPy %v", f, ph[i], tc.PhaseDeg[i])
				if len(tc.AxisZerosHz) == 0 {
					k := math.Round(diff / 360)
					if i == 0 {
						offset = k
					}
					require.Equalf(t, offset, k, "unwrap offset changed at %v Hz", f)
				}
			}
		})
	}
}

// TestGroupDelayAgainstSciPy compares GroupDelayS with −dφ/dω obtained in
// the generator by a five-point central difference of
// np.unwrap(angle(freqs_zpk)) with step 1e-4·ω (source:
// testdata/scipy/xform.json). That difference is accurate to about 1e-9
// relative for these filters (the file carries a per-point estimate,
// below 1e-9 relative); the tolerance is 1e-8 relative.
func TestGroupDelayAgainstSciPy(t *testing.T) {
	t.Parallel()
	d := loadSciPy(t)
	for _, tc := range d.GroupDelay {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			got := response.GroupDelayS(nil, tc.zpk(), tc.FreqHz)
			for i, f := range tc.FreqHz {
				require.InDeltaf(t, tc.TauS[i], got[i], 1e-8*math.Abs(tc.TauS[i])+2*tc.TauErrEst[i], "tau at %v Hz", f)
			}
		})
	}
}

// secondOrder returns ω0²/(s² + (ω0/Q)s + ω0²) for ω0 in rad/s.
func secondOrder(w0, q float64) zpk.ZPK {
	h := zpk.ZPK{Gain: w0 * w0}
	switch {
	case q > 0.5:
		s, w := -w0/(2*q), w0*math.Sqrt(1-1/(4*q*q))
		h.Poles = []complex128{complex(s, w), complex(s, -w)}
	case q == 0.5:
		h.Poles = []complex128{complex(-w0, 0), complex(-w0, 0)}
	default:
		r := math.Sqrt(1 - 4*q*q)
		// The larger root first, the other as ω0² over it (Vieta).
		big := -w0 / (2 * q) * (1 + r)
		h.Poles = []complex128{complex(big, 0), complex(w0*w0/big, 0)}
	}
	return h
}

// TestSecondOrderClosedForm compares a second-order lowpass with its closed
// forms (source: direct evaluation of H(jω) = 1/((1−x²) + j·x/Q), x = ω/ω0):
//
//	|H|² = 1/((1−x²)² + (x/Q)²)
//	φ    = −atan2(x/Q, 1−x²)                       (continuous for ω > 0)
//	τ    = (ω0/Q)(ω0² + ω²) / ((ω0² − ω²)² + (ω0ω/Q)²)
//
// τ is −dφ/dω: with u = ω0² − ω², v = ω0ω/Q, d atan2(v, u)/dω =
// (u·v' − v·u')/(u² + v²) = (ω0/Q)(ω0² − ω² + 2ω²)/(u² + v²).
func TestSecondOrderClosedForm(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		f0Hz float64
		q    float64
	}{
		{name: "real poles Q=0.3", f0Hz: 100, q: 0.3},
		{name: "double pole Q=0.5", f0Hz: 1000, q: 0.5},
		{name: "butterworth Q=0.7071", f0Hz: 1000, q: math.Sqrt2 / 2},
		{name: "Q=5", f0Hz: 2500, q: 5},
		{name: "Q=100", f0Hz: 1e4, q: 100},
		{name: "Q=1000", f0Hz: 50, q: 1000},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			w0 := response.RadPerSec(tc.f0Hz)
			h := secondOrder(w0, tc.q)
			freqs := response.LogSpaceHz(nil, tc.f0Hz/100, tc.f0Hz*100, 301)
			freqs = append(freqs, tc.f0Hz, tc.f0Hz*(1+1/tc.q), tc.f0Hz*(1-0.3/tc.q))
			mag := response.MagnitudeDB(nil, h, freqs)
			ph := response.PhaseDeg(nil, h, freqs)
			tau := response.GroupDelayS(nil, h, freqs)
			for i, f := range freqs {
				w := response.RadPerSec(f)
				x := w / w0
				wantMag := -10 * math.Log10((1-x*x)*(1-x*x)+(x/tc.q)*(x/tc.q))
				wantPh := -math.Atan2(x/tc.q, 1-x*x) * 180 / math.Pi
				u, v := w0*w0-w*w, w0*w/tc.q
				wantTau := (w0 / tc.q) * (w0*w0 + w*w) / (u*u + v*v)
				require.InDeltaf(t, wantMag, mag[i], 1e-9, "magnitude at %v Hz", f)
				require.InDeltaf(t, wantPh, ph[i], 1e-9, "phase at %v Hz", f)
				require.InDeltaf(t, wantTau, tau[i], 1e-11*wantTau, "delay at %v Hz", f)
			}
		})
	}
}

// TestFirstOrderClosedForm compares ωc/(s + ωc) with its closed forms
// (source: H(jω) = 1/(1 + jω/ωc)): |H|² = 1/(1+(ω/ωc)²),
// φ = −atan(ω/ωc), τ = (1/ωc)/(1+(ω/ωc)²).
func TestFirstOrderClosedForm(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		fcHz float64
	}{
		{name: "1 Hz", fcHz: 1},
		{name: "1 kHz", fcHz: 1000},
		{name: "1 MHz", fcHz: 1e6},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			wc := response.RadPerSec(tc.fcHz)
			h := zpk.ZPK{Poles: []complex128{complex(-wc, 0)}, Gain: wc}
			freqs := response.LogSpaceHz(nil, tc.fcHz/1e4, tc.fcHz*1e4, 101)
			mag := response.MagnitudeDB(nil, h, freqs)
			ph := response.PhaseDeg(nil, h, freqs)
			tau := response.GroupDelayS(nil, h, freqs)
			for i, f := range freqs {
				x := f / tc.fcHz
				require.InDelta(t, -10*math.Log10(1+x*x), mag[i], 1e-10)
				require.InDelta(t, -math.Atan(x)*180/math.Pi, ph[i], 1e-10)
				want := (1 / wc) / (1 + x*x)
				require.InDelta(t, want, tau[i], 1e-12*want)
			}
		})
	}
}

// TestAllpass checks right-half-plane zeros against the allpass closed
// forms (source: for (s−a)/(s+a), H(jω) = −(a−jω)/(a+jω), phase
// 180° − 2·atan(ω/a), τ = 2a/(a²+ω²); for N(s)/D(s) with
// N(s) = D(−s) = s² − (ω0/Q)s + ω0², N(jω) = conj D(jω), phase
// −2·atan2(ω0ω/Q, ω0²−ω²) from 0° at DC to −360°, and twice the delay of
// the second-order lowpass).
func TestAllpass(t *testing.T) {
	t.Parallel()
	const a = 2000.0
	first := zpk.ZPK{Zeros: []complex128{complex(a, 0)}, Poles: []complex128{complex(-a, 0)}, Gain: 1}
	w0, q := 5000.0, 3.0
	lp := secondOrder(w0, q)
	second := zpk.ZPK{Zeros: []complex128{-lp.Poles[0], -lp.Poles[1]}, Poles: lp.Poles, Gain: 1}
	freqs := response.LogSpaceHz(nil, 1, 1e5, 201)
	tests := []struct {
		name   string
		h      zpk.ZPK
		phase  func(w float64) float64
		delayS func(w float64) float64
	}{
		{
			name:   "first order",
			h:      first,
			phase:  func(w float64) float64 { return 180 - 2*math.Atan(w/a)*180/math.Pi },
			delayS: func(w float64) float64 { return 2 * a / (a*a + w*w) },
		},
		{
			name:  "second order",
			h:     second,
			phase: func(w float64) float64 { return -2 * math.Atan2(w0*w/q, w0*w0-w*w) * 180 / math.Pi },
			delayS: func(w float64) float64 {
				u, v := w0*w0-w*w, w0*w/q
				return 2 * (w0 / q) * (w0*w0 + w*w) / (u*u + v*v)
			},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			mag := response.MagnitudeDB(nil, tc.h, freqs)
			ph := response.PhaseDeg(nil, tc.h, freqs)
			tau := response.GroupDelayS(nil, tc.h, freqs)
			for i, f := range freqs {
				w := response.RadPerSec(f)
				require.InDelta(t, 0, mag[i], 1e-10)
				require.InDeltaf(t, tc.phase(w), ph[i], 1e-9, "phase at %v Hz", f)
				require.InDelta(t, tc.delayS(w), tau[i], 1e-11*tc.delayS(w))
			}
		})
	}
}

// factorPhaseDeg is a slow reference for PhaseDeg: one atan2 per factor,
// each continuous argument written out as documented at PhaseDeg.
func factorPhaseDeg(h zpk.ZPK, f float64) float64 {
	w := response.RadPerSec(f)
	arg := func(r complex128) float64 {
		s, wr := real(r), imag(r)
		if s == 0 {
			switch {
			case w > wr:
				return math.Pi / 2
			case w < wr:
				return -math.Pi / 2
			}
			return 0
		}
		a := math.Atan2(w-wr, -s)
		if s > 0 && wr > 0 && w >= wr {
			a -= 2 * math.Pi
		}
		return a
	}
	var ph float64
	for _, z := range h.Zeros {
		ph += arg(z)
	}
	for _, p := range h.Poles {
		ph -= arg(p)
	}
	if h.Gain < 0 {
		ph += math.Pi
	}
	return ph * 180 / math.Pi
}

// randomFilter returns a real filter with nPairs conjugate pole pairs,
// nReal real poles and zeros of every kind (left and right half plane,
// real, on the axis, at the origin), spread over four decades.
func randomFilter(rng *rand.Rand, nPairs, nReal int) zpk.ZPK {
	mag := func() float64 { return math.Pow(10, 1+4*rng.Float64()) }
	h := zpk.ZPK{Gain: 1}
	if rng.IntN(2) == 0 {
		h.Gain = -3
	}
	for range nPairs {
		r := mag()
		th := math.Pi / 2 * (0.02 + 0.96*rng.Float64())
		p := complex(-r*math.Cos(th), r*math.Sin(th))
		h.Poles = append(h.Poles, p, cmplx.Conj(p))
	}
	for range nReal {
		h.Poles = append(h.Poles, complex(-mag(), 0))
	}
	for range len(h.Poles) / 2 {
		switch r := mag(); rng.IntN(5) {
		case 0: // axis pair
			h.Zeros = append(h.Zeros, complex(0, r), complex(0, -r))
		case 1: // left-half-plane pair
			z := complex(-0.3*r, r)
			h.Zeros = append(h.Zeros, z, cmplx.Conj(z))
		case 2: // right-half-plane pair
			z := complex(0.2*r, r)
			h.Zeros = append(h.Zeros, z, cmplx.Conj(z))
		case 3: // real, either side
			h.Zeros = append(h.Zeros, complex(r, 0), complex(-r, 0))
		case 4: // origin
			h.Zeros = append(h.Zeros, 0)
		}
	}
	return h
}

// TestPhaseMatchesFactorSum checks the product-and-count implementation of
// PhaseDeg against the per-factor sum of continuous arguments (source: the
// definition at PhaseDeg, written out one factor at a time) for random
// filters up to order 40.
func TestPhaseMatchesFactorSum(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	// 401 points: the four-at-a-time path and the one-at-a-time remainder.
	freqs := response.LogSpaceHz(nil, 0.1, 1e5, 401)
	for i := range 40 {
		h := randomFilter(rng, 1+i/2, i%3)
		got := response.PhaseDeg(nil, h, freqs)
		for j, f := range freqs {
			require.InDeltaf(t, factorPhaseDeg(h, f), got[j], 1e-9, "filter %d (%d poles) at %v Hz", i, len(h.Poles), f)
		}
	}
}

// TestPhaseAxisZeroStep checks the exact +180° step of a pair of zeros on
// the jω axis and the −Inf magnitude exactly on it (source: the phase of
// (s² + ωz²) on the axis is 0 below ωz and 180° above; |H| = 0 at ωz).
func TestPhaseAxisZeroStep(t *testing.T) {
	t.Parallel()
	const fz = 1500.0
	wz := response.RadPerSec(fz)
	h := zpk.ZPK{Zeros: []complex128{complex(0, wz), complex(0, -wz)}, Gain: 1}
	freqs := []float64{fz * (1 - 1e-12), fz, fz * (1 + 1e-12), 10, 1e6}
	ph := response.PhaseDeg(nil, h, freqs)
	mag := response.MagnitudeDB(nil, h, freqs)
	tau := response.GroupDelayS(nil, h, freqs)
	require.Equal(t, []float64{0, 90, 180, 0, 180}, ph)
	require.True(t, math.IsInf(mag[1], -1))
	require.Equal(t, []float64{0, 0, 0, 0, 0}, tau)
	// A zero pair within 1e-12 (relative) of the axis counts as on it, on
	// whichever side: the same +180° step, no group delay.
	for _, sigma := range []float64{1e-13 * wz, -1e-13 * wz} {
		near := zpk.ZPK{Zeros: []complex128{complex(sigma, wz), complex(sigma, -wz)}, Gain: 1}
		require.Equal(t, []float64{0, 180}, response.PhaseDeg(nil, near, []float64{10, 1e6}))
		require.Equal(t, []float64{0, 0}, response.GroupDelayS(nil, near, []float64{10, 1e6}))
	}
	// A second-order notch (s² + ω0²)/(s² + (ω0/Q)s + ω0²): on either side
	// of the notch the phase is the pole pair's −atan2(x/Q, 1−x²) plus 0°
	// below and the +180° step above, x = ω/ω0.
	const q = 10
	notch := secondOrder(wz, q)
	notch.Zeros, notch.Gain = h.Zeros, 1
	for _, x := range []float64{1 - 1e-9, 1 + 1e-9, 0.5, 2} {
		want := -math.Atan2(x/q, 1-x*x) * 180 / math.Pi
		if x > 1 {
			want += 180
		}
		got := response.PhaseDeg(nil, notch, []float64{fz * x})
		require.InDeltaf(t, want, got[0], 1e-9, "x = %v", x)
	}
}

// TestMagnitudeHighOrder checks an order-40 Butterworth lowpass and the
// order-80 bandstop made from it far into the stopband, where plain
// products of distances would overflow (source: |H|² = 1/(1 + x^80) for
// Butterworth, here in the form −10·(80·log10 x + log10(1 + x^-80))).
func TestMagnitudeHighOrder(t *testing.T) {
	t.Parallel()
	const n = 40
	wc := 1e5
	h := zpk.ZPK{Gain: 1}
	for k := range n {
		th := float64(2*k+1) * math.Pi / float64(2*n)
		h.Poles = append(h.Poles, complex(-wc*math.Sin(th), wc*math.Cos(th)))
	}
	h.Gain = math.Pow(wc, n)
	tests := []struct {
		name string
		fHz  float64
	}{
		{name: "passband", fHz: 100},
		{name: "edge", fHz: wc / (2 * math.Pi)},
		{name: "stopband 1e8", fHz: 1e8},
		{name: "stopband 1e12", fHz: 1e12},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			x := response.RadPerSec(tc.fHz) / wc
			want := -10 * (80*math.Log10(x) + math.Log10(1+math.Pow(x, -80)))
			got := response.MagnitudeDB(nil, h, []float64{tc.fHz})[0]
			require.InDelta(t, want, got, 1e-9*math.Max(1, math.Abs(want)))
		})
	}
}

// TestDst checks the destination conventions.
func TestDst(t *testing.T) {
	t.Parallel()
	h := secondOrder(1000, 2)
	freqs := []float64{10, 100, 1000}
	type fn func([]float64, zpk.ZPK, []float64) []float64
	for name, f := range map[string]fn{"MagnitudeDB": response.MagnitudeDB, "PhaseDeg": response.PhaseDeg, "GroupDelayS": response.GroupDelayS} {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			want := f(nil, h, freqs)
			require.Len(t, want, 3)
			long := make([]float64, 10)
			got := f(long, h, freqs)
			require.Len(t, got, 3)
			require.Same(t, &long[0], &got[0])
			require.Equal(t, want, got)
			short := make([]float64, 2)
			got = f(short, h, freqs)
			require.Equal(t, want, got)
			inPlace := append([]float64(nil), freqs...)
			got = f(inPlace, h, inPlace)
			require.Equal(t, want, got)
		})
	}
}

// TestNoAllocs checks that a long enough dst means no allocation (not
// parallel: AllocsPerRun forbids it).
func TestNoAllocs(t *testing.T) {
	h := secondOrder(1000, 2)
	h.Zeros = []complex128{complex(0, 3000), complex(0, -3000), complex(5, 100), complex(5, -100)}
	freqs := response.LogSpaceHz(nil, 1, 1e4, 50)
	dst := make([]float64, len(freqs))
	tests := []struct {
		name string
		f    func()
	}{
		{name: "MagnitudeDB", f: func() { response.MagnitudeDB(dst, h, freqs) }},
		{name: "PhaseDeg", f: func() { response.PhaseDeg(dst, h, freqs) }},
		{name: "GroupDelayS", f: func() { response.GroupDelayS(dst, h, freqs) }},
		{name: "LogSpaceHz", f: func() { response.LogSpaceHz(dst, 1, 10, len(dst)) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			require.Zero(t, testing.AllocsPerRun(20, tc.f))
		})
	}
}

// TestLogSpaceHz checks end points and equal ratios.
func TestLogSpaceHz(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		lo, hi float64
		n      int
	}{
		{name: "two points", lo: 20, hi: 20000, n: 2},
		{name: "decades", lo: 1, hi: 1e6, n: 7},
		{name: "fine", lo: 0.3, hi: 7e5, n: 1001},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f := response.LogSpaceHz(nil, tc.lo, tc.hi, tc.n)
			require.Len(t, f, tc.n)
			require.Equal(t, tc.lo, f[0])
			require.Equal(t, tc.hi, f[tc.n-1])
			ratio := math.Pow(tc.hi/tc.lo, 1/float64(tc.n-1))
			for i := 1; i < tc.n; i++ {
				require.InDelta(t, ratio, f[i]/f[i-1], 1e-12)
			}
		})
	}
	require.Panics(t, func() { response.LogSpaceHz(nil, 1, 10, 1) })
	require.Panics(t, func() { response.LogSpaceHz(nil, 0, 10, 5) })
}

// TestRadPerSec checks the one conversion (source: ω = 2πf).
func TestRadPerSec(t *testing.T) {
	t.Parallel()
	f := 1000.0
	require.Equal(t, 2*math.Pi*f, response.RadPerSec(f))
}
