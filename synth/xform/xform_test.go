package xform_test

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/xform"
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

type scipyTransform struct {
	jsonZPK
	Name      string  `json:"name"`
	Prototype string  `json:"prototype"`
	Kind      string  `json:"kind"`
	Wo        float64 `json:"wo"`
	Bw        float64 `json:"bw"`
}

type scipyData struct {
	Prototypes map[string]jsonZPK `json:"prototypes"`
	Transforms []scipyTransform   `json:"transforms"`
}

func loadSciPy(t testing.TB) scipyData {
	t.Helper()
	b, err := os.ReadFile(scipyFile)
	require.NoError(t, err, "regenerate with testdata/scipy/gen_xform.py")
	var d scipyData
	require.NoError(t, json.Unmarshal(b, &d))
	require.NotEmpty(t, d.Transforms)
	return d
}

func apply(kind string, h zpk.ZPK, wo, bw float64) zpk.ZPK {
	switch kind {
	case "lp2lp":
		return xform.LowpassToLowpass(h, wo)
	case "lp2hp":
		return xform.LowpassToHighpass(h, wo)
	case "lp2bp":
		return xform.LowpassToBandpass(h, wo, bw)
	case "lp2bs":
		return xform.LowpassToBandstop(h, wo, bw)
	}
	panic("unknown kind " + kind)
}

// relClose reports |a−b| ≤ tol·max(|a|, |b|).
func relClose(a, b complex128, tol float64) bool {
	return cmplx.Abs(a-b) <= tol*math.Max(cmplx.Abs(a), cmplx.Abs(b))
}

// requireSameRoots matches every expected root to the nearest unused root
// of got and requires them to agree to tol relative.
func requireSameRoots(t *testing.T, want, got []complex128, tol float64, what string) {
	t.Helper()
	require.Len(t, got, len(want), what)
	used := make([]bool, len(got))
	for _, w := range want {
		best := -1
		for j, g := range got {
			if !used[j] && (best < 0 || cmplx.Abs(g-w) < cmplx.Abs(got[best]-w)) {
				best = j
			}
		}
		used[best] = true
		require.Truef(t, relClose(got[best], w, tol), "%s: want %v, nearest %v", what, w, got[best])
	}
}

// TestAgainstSciPy compares every transform with SciPy's lp2lp_zpk,
// lp2hp_zpk, lp2bp_zpk and lp2bs_zpk applied to buttap(5), cheb1ap(4, 1),
// cheb2ap(5, 40), ellipap(6, 0.5, 60) and besselap(7) (source:
// testdata/scipy/xform.json): roots as sets and gains, to 1e-9 relative.
func TestAgainstSciPy(t *testing.T) {
	t.Parallel()
	d := loadSciPy(t)
	for _, tc := range d.Transforms {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			proto, ok := d.Prototypes[tc.Prototype]
			require.True(t, ok)
			want := tc.zpk()
			got := apply(tc.Kind, proto.zpk(), tc.Wo, tc.Bw)
			requireSameRoots(t, want.Zeros, got.Zeros, 1e-9, "zeros")
			requireSameRoots(t, want.Poles, got.Poles, 1e-9, "poles")
			require.InDelta(t, 1, got.Gain/want.Gain, 1e-9, "gain %v vs SciPy %v", got.Gain, want.Gain)
		})
	}
}

// butterworth returns the order-n Butterworth prototype with exactly
// conjugate poles built from the closed form p = −sin θ + j·cos θ,
// θ = (2k+1)π/(2n).
func butterworth(n int) zpk.ZPK {
	h := zpk.ZPK{Gain: 1}
	for k := range n / 2 {
		th := float64(2*k+1) * math.Pi / float64(2*n)
		h.Poles = append(h.Poles, complex(-math.Sin(th), math.Cos(th)), complex(-math.Sin(th), -math.Cos(th)))
	}
	if n%2 == 1 {
		h.Poles = append(h.Poles, -1)
	}
	return h
}

// inverseChebyshev returns an order-n inverse-Chebyshev-shaped prototype
// (zeros at ±j/cos θ on the axis, poles the reciprocals of Chebyshev ones):
// exactly conjugate by construction, with purely imaginary zeros.
func inverseChebyshev(n int, eps float64) zpk.ZPK {
	a := math.Asinh(1/eps) / float64(n)
	h := zpk.ZPK{}
	for k := range n / 2 {
		th := float64(2*k+1) * math.Pi / float64(2*n)
		h.Zeros = append(h.Zeros, complex(0, 1/math.Cos(th)), complex(0, -1/math.Cos(th)))
		c := complex(-math.Sinh(a)*math.Sin(th), math.Cosh(a)*math.Cos(th))
		p := 1 / c
		h.Poles = append(h.Poles, p, cmplx.Conj(p))
	}
	if n%2 == 1 {
		h.Poles = append(h.Poles, complex(-1/math.Sinh(a), 0))
	}
	// Unit gain at DC: K = ∏(−p)/∏(−z) (real, built as a product).
	g := complex(1, 0)
	for _, p := range h.Poles {
		g *= -p
	}
	for _, z := range h.Zeros {
		g /= -z
	}
	h.Gain = real(g)
	return h
}

// TestSubstitution checks the defining identity of each transformation,
// H_t(s) = H_p(m(s)) with m(s) = s/ω, ω/s, (s²+ω0²)/(B·s) or B·s/(s²+ω0²),
// at complex points off the axis (source: the definitions; both sides are
// evaluated with zpk.ZPK.At, so the gain is checked too).
func TestSubstitution(t *testing.T) {
	t.Parallel()
	protos := []struct {
		name string
		h    zpk.ZPK
	}{
		{name: "butterworth5", h: butterworth(5)},
		{name: "butterworth8", h: butterworth(8)},
		{name: "invcheb6", h: inverseChebyshev(6, 0.01)},
		{name: "invcheb7", h: inverseChebyshev(7, 0.1)},
		{name: "realpoles", h: zpk.ZPK{Zeros: []complex128{-3}, Poles: []complex128{-0.5, -2, -7}, Gain: -2.5}},
	}
	points := []complex128{complex(0.3, 0.7), complex(-0.2, 3), complex(1.5, -0.4), complex(0.01, 1e3), complex(2, 0.05)}
	const w0, bw = 3.7, 1.3
	maps := []struct {
		name string
		do   func(zpk.ZPK) zpk.ZPK
		m    func(complex128) complex128
	}{
		{name: "lp", do: func(h zpk.ZPK) zpk.ZPK { return xform.LowpassToLowpass(h, w0) }, m: func(s complex128) complex128 { return s / w0 }},
		{name: "hp", do: func(h zpk.ZPK) zpk.ZPK { return xform.LowpassToHighpass(h, w0) }, m: func(s complex128) complex128 { return w0 / s }},
		{name: "bp", do: func(h zpk.ZPK) zpk.ZPK { return xform.LowpassToBandpass(h, w0, bw) }, m: func(s complex128) complex128 { return (s*s + w0*w0) / (bw * s) }},
		{name: "bs", do: func(h zpk.ZPK) zpk.ZPK { return xform.LowpassToBandstop(h, w0, bw) }, m: func(s complex128) complex128 { return bw * s / (s*s + w0*w0) }},
	}
	for _, p := range protos {
		for _, mp := range maps {
			t.Run(p.name+"/"+mp.name, func(t *testing.T) {
				t.Parallel()
				ht := mp.do(p.h)
				for _, s := range points {
					want := p.h.At(mp.m(s))
					got := ht.At(s)
					require.Truef(t, relClose(got, want, 1e-12), "s=%v: H_t=%v, H_p(m(s))=%v", s, got, want)
				}
			})
		}
	}
}

// requireExactSymmetry requires that every non-real root has its exact
// conjugate among the roots, with the same multiplicity.
func requireExactSymmetry(t *testing.T, roots []complex128, what string) {
	t.Helper()
	for _, r := range roots {
		if imag(r) == 0 {
			continue
		}
		var n, nc int
		for _, q := range roots {
			if q == r {
				n++
			}
			if q == cmplx.Conj(r) {
				nc++
			}
		}
		require.Equalf(t, n, nc, "%s: %v has no exact conjugate partner", what, r)
	}
}

// TestExactStructure checks that exactly conjugate prototypes give exactly
// conjugate results, that axis zeros stay with a zero real part, and that
// real roots stay real where the mapping keeps them real (source: the
// structure of the mappings).
func TestExactStructure(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		h    zpk.ZPK
		// w0, bw are chosen so that the real pole −1·bw/2 of butterworth5
		// maps to two real poles in bp (bw/2 > w0) or to a pair.
		w0, bw float64
		// realBP is the number of real poles expected from bp: 2 per real
		// prototype pole when (bw/2)² > w0² (discriminant of
		// s² + bw·s + w0² for the pole −1), 0 otherwise.
		realBP int
	}{
		{name: "butterworth5/narrow", h: butterworth(5), w0: 2, bw: 0.5, realBP: 0},
		{name: "butterworth5/wide", h: butterworth(5), w0: 2, bw: 10, realBP: 2},
		{name: "invcheb7/narrow", h: inverseChebyshev(7, 0.1), w0: 1, bw: 0.2, realBP: 0},
		{name: "invcheb6/wide", h: inverseChebyshev(6, 0.01), w0: 1, bw: 40, realBP: 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			for name, out := range map[string]zpk.ZPK{
				"lp": xform.LowpassToLowpass(tc.h, tc.w0),
				"hp": xform.LowpassToHighpass(tc.h, tc.w0),
				"bp": xform.LowpassToBandpass(tc.h, tc.w0, tc.bw),
				"bs": xform.LowpassToBandstop(tc.h, tc.w0, tc.bw),
			} {
				requireExactSymmetry(t, out.Zeros, name+" zeros")
				requireExactSymmetry(t, out.Poles, name+" poles")
				for _, z := range out.Zeros {
					// Every zero here comes from an axis zero or from infinity.
					require.Zerof(t, real(z), "%s: zero %v left the axis", name, z)
				}
			}
			count := func(roots []complex128) (n int) {
				for _, r := range roots {
					if imag(r) == 0 {
						n++
					}
				}
				return n
			}
			protoReal := count(tc.h.Poles)
			require.Equal(t, protoReal, count(xform.LowpassToLowpass(tc.h, tc.w0).Poles))
			require.Equal(t, protoReal, count(xform.LowpassToHighpass(tc.h, tc.w0).Poles))
			require.Equal(t, tc.realBP, count(xform.LowpassToBandpass(tc.h, tc.w0, tc.bw).Poles))
		})
	}
}

// TestFirstOrder checks the four mappings of 1/(s+1) against results
// derived by hand from the substitutions.
func TestFirstOrder(t *testing.T) {
	t.Parallel()
	proto := zpk.ZPK{Poles: []complex128{-1}, Gain: 1}
	const w0, bw = 2.0, 3.0
	tests := []struct {
		name string
		got  zpk.ZPK
		want zpk.ZPK
	}{
		// 1/(s/2 + 1) = 2/(s + 2).
		{name: "lp", got: xform.LowpassToLowpass(proto, w0), want: zpk.ZPK{Poles: []complex128{-2}, Gain: 2}},
		// 1/(2/s + 1) = s/(s + 2).
		{name: "hp", got: xform.LowpassToHighpass(proto, w0), want: zpk.ZPK{Zeros: []complex128{0}, Poles: []complex128{-2}, Gain: 1}},
		// 1/((s²+4)/(3s) + 1) = 3s/(s² + 3s + 4); poles (−3 ± j√7)/2.
		{name: "bp", got: xform.LowpassToBandpass(proto, w0, bw), want: zpk.ZPK{
			Zeros: []complex128{0},
			Poles: []complex128{complex(-1.5, math.Sqrt(7)/2), complex(-1.5, -math.Sqrt(7)/2)},
			Gain:  3,
		}},
		// 1/(3s/(s²+4) + 1) = (s² + 4)/(s² + 3s + 4).
		{name: "bs", got: xform.LowpassToBandstop(proto, w0, bw), want: zpk.ZPK{
			Zeros: []complex128{complex(0, 2), complex(0, -2)},
			Poles: []complex128{complex(-1.5, math.Sqrt(7)/2), complex(-1.5, -math.Sqrt(7)/2)},
			Gain:  1,
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			requireSameRoots(t, tc.want.Zeros, tc.got.Zeros, 1e-15, "zeros")
			requireSameRoots(t, tc.want.Poles, tc.got.Poles, 1e-15, "poles")
			require.InDelta(t, tc.want.Gain, tc.got.Gain, 1e-15)
		})
	}
}

// TestStableRoots checks that the small root of s² − p·B·s + ω0² is
// accurate when it is far smaller than the large one, where the textbook
// a − sqrt(a² − ω0²) loses every digit.
func TestStableRoots(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name        string
		pole        complex128
		w0, bw      float64
		small, big  complex128 // the exact roots
		wantRealOut bool
	}{
		// s² + 1e8·s + 1: roots −1e8·(1+√(1−4e-16))/2 ≈ −1e8 and 1/that ≈ −1e-8
		// (Vieta; the correction terms are 1e-16 relative, below rounding).
		{name: "real/wide", pole: -1, w0: 1, bw: 1e8, small: -1e-8, big: -1e8, wantRealOut: true},
		// s² − (−1+j)·1e6·s + 1 = 0: large root ≈ (−1+j)·1e6, small root
		// 1/large = (−1−j)/2e6 (Vieta, corrections 1e-12 relative).
		{name: "complex/wide", pole: complex(-1, 1), w0: 1, bw: 1e6, small: complex(-0.5e-6, -0.5e-6), big: complex(-1e6, 1e6)},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			out := xform.LowpassToBandpass(zpk.ZPK{Poles: []complex128{tc.pole}, Gain: 1}, tc.w0, tc.bw)
			require.Len(t, out.Poles, 2)
			requireSameRoots(t, []complex128{tc.small, tc.big}, out.Poles, 1e-11, "poles")
			if tc.wantRealOut {
				require.Zero(t, imag(out.Poles[0]))
				require.Zero(t, imag(out.Poles[1]))
			}
		})
	}
}

// TestPanics checks the documented programmer-error panics.
func TestPanics(t *testing.T) {
	t.Parallel()
	proto := butterworth(3)
	withOrigin := zpk.ZPK{Zeros: []complex128{0}, Poles: []complex128{-1, -2}, Gain: 1}
	improper := zpk.ZPK{Zeros: []complex128{-1, -2}, Poles: []complex128{-1}, Gain: 1}
	tests := []struct {
		name string
		f    func()
	}{
		{name: "lp/zero", f: func() { xform.LowpassToLowpass(proto, 0) }},
		{name: "lp/negative", f: func() { xform.LowpassToLowpass(proto, -1) }},
		{name: "lp/nan", f: func() { xform.LowpassToLowpass(proto, math.NaN()) }},
		{name: "hp/inf", f: func() { xform.LowpassToHighpass(proto, math.Inf(1)) }},
		{name: "hp/origin", f: func() { xform.LowpassToHighpass(withOrigin, 1) }},
		{name: "hp/improper", f: func() { xform.LowpassToHighpass(improper, 1) }},
		{name: "bp/bandwidth", f: func() { xform.LowpassToBandpass(proto, 1, 0) }},
		{name: "bp/center", f: func() { xform.LowpassToBandpass(proto, math.NaN(), 1) }},
		{name: "bp/improper", f: func() { xform.LowpassToBandpass(improper, 1, 1) }},
		{name: "bs/bandwidth", f: func() { xform.LowpassToBandstop(proto, 1, -1) }},
		{name: "bs/origin", f: func() { xform.LowpassToBandstop(withOrigin, 1, 1) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			defer func() {
				msg, ok := recover().(string)
				require.True(t, ok, "expected a string panic")
				require.True(t, strings.HasPrefix(msg, "xform: "), msg)
			}()
			tc.f()
		})
	}
}

// TestNoAliasing checks that the input is left untouched.
func TestNoAliasing(t *testing.T) {
	t.Parallel()
	h := inverseChebyshev(5, 0.1)
	orig := h.Clone()
	_ = xform.LowpassToLowpass(h, 2)
	_ = xform.LowpassToHighpass(h, 2)
	_ = xform.LowpassToBandpass(h, 2, 1)
	_ = xform.LowpassToBandstop(h, 2, 1)
	require.Equal(t, orig, h)
}
