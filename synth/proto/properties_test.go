package proto_test

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
	"github.com/polewright/polewright/synth/zpk"
)

// The checks in this file are properties of the definitions (the
// normalisation stated in the package comment), not numbers from a source:
// the expected values are rippleDB, attenDB and 1.

type mask struct{ ripple, atten, ratio float64 }

// randomMasks returns n valid masks from the fixed seed (1, 1): rippleDB
// 0.01…6 dB, attenDB 3…130 dB above it, ratio 1.01…11, log-uniform.
func randomMasks(n int) []mask {
	rng := rand.New(rand.NewPCG(1, 1))
	lu := func(lo, hi float64) float64 { return math.Pow(10, lo+(hi-lo)*rng.Float64()) }
	out := make([]mask, n)
	for i := range out {
		ap := lu(-2, math.Log10(6))
		out[i] = mask{ap, ap + lu(0.5, 2.1), 1 + lu(-2, 1)}
	}
	return out
}

func lossDB(h zpk.ZPK, w float64) float64 { return -20 * math.Log10(h.MagnitudeAt(w)) }

// passbandPeaks returns frequencies in [0, 1] where |H| = 1 by construction:
// ω = 0 for every approximation except even-order Chebyshev I and elliptic;
// the zeros of T_n, cos((2i−1)π/(2n)), for Chebyshev I; and for elliptic
// ζ_i = ωs/|z_i|, the passband images of the stopband zeros (R_N(ζ_i) = 0).
func passbandPeaks(t *testing.T, a proto.Approximation, n int, h zpk.ZPK, m mask) []float64 {
	t.Helper()
	var out []float64
	if n%2 == 1 || (a != proto.Chebyshev1 && a != proto.Elliptic) {
		out = append(out, 0)
	}
	switch a {
	case proto.Chebyshev1:
		for i := 1; i <= n/2; i++ {
			out = append(out, math.Cos(float64(2*i-1)*math.Pi/float64(2*n)))
		}
	case proto.Elliptic:
		ws, err := proto.StopbandEdge(a, n, m.ripple, m.atten)
		require.NoError(t, err)
		for i := 0; i < len(h.Zeros); i += 2 {
			out = append(out, ws/cmplx.Abs(h.Zeros[i]))
		}
	}
	return out
}

func TestPrototypeProperties(t *testing.T) {
	t.Parallel()
	masks := randomMasks(300)
	type tc struct {
		name string
		a    proto.Approximation
		n    int
		m    mask
	}
	var cases []tc
	i := 0
	for _, a := range proto.Approximations() {
		for n := 1; n <= proto.MaxOrder; n++ {
			for range 6 {
				m := masks[i%len(masks)]
				i++
				cases = append(cases, tc{fmt.Sprintf("%s/n=%d/ap=%.4g/as=%.4g", a, n, m.ripple, m.atten), a, n, m})
			}
		}
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			ws, err := proto.StopbandEdge(c.a, c.n, c.m.ripple, c.m.atten)
			h, errLP := proto.Lowpass(c.a, c.n, c.m.ripple, c.m.atten)
			if c.a == proto.Elliptic && (err != nil || ws-1 < 1.01e-9) {
				// Documented: a transition band narrower than 1e-9 is
				// too selective for float64 poles and zeros (and below
				// 1.1e-16 for the stopband edge itself).
				require.ErrorIs(t, errLP, proto.ErrNotRepresentable)
				if err != nil {
					require.ErrorIs(t, err, proto.ErrNotRepresentable)
				}
				return
			}
			require.NoError(t, err)
			require.Greater(t, ws, 1.0)
			require.NoError(t, errLP)
			require.Len(t, h.Poles, c.n)
			require.Greater(t, h.Gain, 0.0)

			// tol is 1e-9 dB, plus for elliptic designs the documented
			// float64 limit 2e-15/(ωs−1) dB (×5) of a very narrow
			// transition band, whose poles and zeros crowd against ω = 1.
			tol := 1e-9
			if c.a == proto.Elliptic {
				tol += 1e-14 / (ws - 1)
			}

			// Loss at the passband edge is rippleDB (the normalisation).
			require.InDelta(t, c.m.ripple, lossDB(h, 1), tol, "loss at 1 rad/s")

			// Poles strictly in the left half plane; adjacent conjugate
			// pairs (upper first), then the real pole.
			for k, p := range h.Poles {
				require.Less(t, real(p), 0.0, "pole %v", p)
				switch {
				case k == len(h.Poles)-1 && c.n%2 == 1:
					require.Zero(t, imag(p), "real pole")
				case k%2 == 0:
					require.Greater(t, imag(p), 0.0)
					require.Equal(t, cmplx.Conj(p), h.Poles[k+1], "conjugate pair")
				}
			}
			// Zeros on the jω axis in conjugate pairs.
			wantZeros := 0
			if c.a == proto.Chebyshev2 || c.a == proto.Elliptic {
				wantZeros = 2 * (c.n / 2)
			}
			require.Len(t, h.Zeros, wantZeros)
			for k := 0; k < len(h.Zeros); k += 2 {
				require.Zero(t, real(h.Zeros[k]))
				require.Greater(t, imag(h.Zeros[k]), 1.0)
				require.Equal(t, cmplx.Conj(h.Zeros[k]), h.Zeros[k+1])
			}

			// max |H| over the passband is 1: no sample above 1, and 1 at
			// the peaks the construction puts there.
			const grid = 2000
			for k := 0; k <= grid; k++ {
				w := float64(k) / grid
				require.LessOrEqual(t, h.MagnitudeAt(w), 1+tol, "|H(j%g)|", w)
			}
			for _, w := range passbandPeaks(t, c.a, c.n, h, c.m) {
				require.InDelta(t, 1, h.MagnitudeAt(w), tol, "peak |H(j%g)|", w)
			}
			if c.n%2 == 0 && (c.a == proto.Chebyshev1 || c.a == proto.Elliptic) {
				require.InEpsilon(t, math.Pow(10, -c.m.ripple/20), h.MagnitudeAt(0), 1e-9, "|H(0)|")
			}

			// The stopband edge: loss attenDB there and no less beyond.
			stol := tol * math.Max(1, c.m.atten/100)
			require.InDelta(t, c.m.atten, lossDB(h, ws), stol, "loss at the stopband edge")
			for k := 0; k <= grid; k++ {
				w := ws * math.Pow(100, float64(k)/grid)
				require.GreaterOrEqual(t, lossDB(h, w), c.m.atten-stol, "stopband loss at %g", w)
			}
		})
	}
}

// meets reports whether the order-n prototype has loss ≥ attenDB from ratio
// up, by evaluating it (monotonic approximations: at ratio; equiripple
// ones: StopbandEdge ≤ ratio, the edge's loss being checked above), and
// how far from the boundary the case is (dB or relative frequency).
func meets(t *testing.T, a proto.Approximation, n int, m mask) (bool, float64) {
	t.Helper()
	if a == proto.Chebyshev2 || a == proto.Elliptic {
		ws, err := proto.StopbandEdge(a, n, m.ripple, m.atten)
		require.NoError(t, err)
		return ws <= m.ratio, math.Abs(ws/m.ratio - 1)
	}
	h, err := proto.Lowpass(a, n, m.ripple, m.atten)
	require.NoError(t, err)
	l := lossDB(h, m.ratio)
	return l >= m.atten, math.Abs(l - m.atten)
}

func TestMinOrderProperties(t *testing.T) {
	t.Parallel()
	masks := randomMasks(300)
	for _, a := range proto.Approximations() {
		for i, m := range masks {
			t.Run(fmt.Sprintf("%s/%d", a, i), func(t *testing.T) {
				t.Parallel()
				n, err := proto.MinOrder(a, m.ripple, m.atten, m.ratio)
				var oe *proto.OrderError
				if errors.As(err, &oe) {
					require.Equal(t, proto.MaxOrder, oe.Max)
					if oe.Unreachable {
						require.Contains(t, []proto.Approximation{proto.Bessel, proto.Gaussian, proto.LinearPhase}, a, "only delay-type and Gaussian masks can be unreachable")
						require.Zero(t, oe.Needed)
					} else {
						require.Greater(t, oe.Needed, proto.MaxOrder)
					}
					ok, margin := meets(t, a, proto.MaxOrder, m)
					if margin > 1e-9 {
						require.False(t, ok, "order %d meets the mask", proto.MaxOrder)
					}
					return
				}
				require.NoError(t, err)
				require.GreaterOrEqual(t, n, 1)
				require.LessOrEqual(t, n, proto.MaxOrder)
				ok, margin := meets(t, a, n, m)
				if margin > 1e-9 {
					require.True(t, ok, "order %d should meet the mask", n)
				}
				if n > 1 {
					ok, margin := meets(t, a, n-1, m)
					if margin > 1e-9 {
						require.False(t, ok, "order %d should not meet the mask", n-1)
					}
				}
			})
		}
	}
}
