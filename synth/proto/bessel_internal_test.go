package proto

import (
	"encoding/json"
	"fmt"
	"math"
	"math/big"
	"math/cmplx"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
)

// The references in this file are computed in the test itself with
// math/big: the exact integer coefficients of θ_n and Newton's method in
// 256-bit arithmetic.

const bigPrec = 256

// besselCoeffs returns the exact coefficients a_k = (2n−k)!/(2^(n−k)·k!·(n−k)!)
// of θ_n(s) = Σ a_k s^k.
func besselCoeffs(n int) []*big.Int {
	out := make([]*big.Int, n+1)
	for k := 0; k <= n; k++ {
		num := new(big.Int).MulRange(int64(n+1), int64(2*n-k)) // (2n−k)!/n!
		if 2*n-k < n+1 {
			num.SetInt64(1)
		}
		// (2n−k)!/((n−k)!·k!·2^(n−k)) = [(2n−k)!/n!]·C(n, k)/2^(n−k)
		num.Mul(num, new(big.Int).Binomial(int64(n), int64(k)))
		num.Rsh(num, uint(n-k))
		out[k] = num
	}
	return out
}

type bigC struct{ re, im *big.Float }

func newBigC(z complex128) bigC {
	return bigC{new(big.Float).SetPrec(bigPrec).SetFloat64(real(z)), new(big.Float).SetPrec(bigPrec).SetFloat64(imag(z))}
}

func (a bigC) mul(b bigC) bigC {
	rr := new(big.Float).SetPrec(bigPrec).Mul(a.re, b.re)
	ii := new(big.Float).SetPrec(bigPrec).Mul(a.im, b.im)
	ri := new(big.Float).SetPrec(bigPrec).Mul(a.re, b.im)
	ir := new(big.Float).SetPrec(bigPrec).Mul(a.im, b.re)
	return bigC{rr.Sub(rr, ii), ri.Add(ri, ir)}
}

func (a bigC) add(b bigC) bigC {
	return bigC{new(big.Float).SetPrec(bigPrec).Add(a.re, b.re), new(big.Float).SetPrec(bigPrec).Add(a.im, b.im)}
}

func (a bigC) sub(b bigC) bigC {
	return bigC{new(big.Float).SetPrec(bigPrec).Sub(a.re, b.re), new(big.Float).SetPrec(bigPrec).Sub(a.im, b.im)}
}

func (a bigC) div(b bigC) bigC {
	den := new(big.Float).SetPrec(bigPrec).Mul(b.re, b.re)
	den.Add(den, new(big.Float).SetPrec(bigPrec).Mul(b.im, b.im))
	conj := bigC{b.re, new(big.Float).SetPrec(bigPrec).Neg(b.im)}
	num := a.mul(conj)
	return bigC{num.re.Quo(num.re, den), num.im.Quo(num.im, den)}
}

func (a bigC) complex() complex128 {
	re, _ := a.re.Float64()
	im, _ := a.im.Float64()
	return complex(re, im)
}

// bigBesselRoot refines a root of θ_n by Newton's method in 256-bit
// arithmetic with the exact coefficients.
func bigBesselRoot(coef []*big.Int, z complex128) complex128 {
	c := make([]bigC, len(coef))
	for i, a := range coef {
		c[i] = bigC{new(big.Float).SetPrec(bigPrec).SetInt(a), new(big.Float).SetPrec(bigPrec)}
	}
	s := newBigC(z)
	for range 12 {
		p, dp := c[len(c)-1], bigC{new(big.Float).SetPrec(bigPrec), new(big.Float).SetPrec(bigPrec)}
		for k := len(c) - 2; k >= 0; k-- {
			dp = dp.mul(s).add(p)
			p = p.mul(s).add(c[k])
		}
		s = s.sub(p.div(dp))
	}
	return s.complex()
}

// TestBesselRootsAccurate checks the unit-delay Bessel poles against
// 256-bit Newton refinements (reference computed here) to 1e-13 relative,
// beyond MaxOrder as well, and that they are n distinct zeros: their sum is
// −a_{n−1} = −n(n+1)/2 (θ_n is monic).
func TestBesselRootsAccurate(t *testing.T) {
	t.Parallel()
	for _, n := range []int{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18, 19, 20, 25, 30} {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			t.Parallel()
			coef := besselCoeffs(n)
			roots := besselRoots(n)
			require.Len(t, roots, n)
			worst := 0.0
			var sum complex128
			for i, r := range roots {
				sum += r
				for _, q := range roots[:i] {
					require.Greater(t, cmplx.Abs(r-q), 1e-3, "distinct zeros")
				}
				ref := bigBesselRoot(coef, r)
				worst = math.Max(worst, cmplx.Abs(r-ref)/cmplx.Abs(ref))
			}
			t.Logf("n=%d worst relative error %.3g", n, worst)
			require.Less(t, worst, 1e-13)
			require.InDelta(t, -float64(n*(n+1))/2, real(sum), 1e-12*float64(n*n))
			require.InDelta(t, 0, imag(sum), 1e-12*float64(n*n))
		})
	}
}

// TestBesselCoeffs checks besselCoeffs against θ_4 = s⁴+10s³+45s²+105s+105
// (the standard fourth-order reverse Bessel polynomial).
func TestBesselCoeffs(t *testing.T) {
	t.Parallel()
	want := []int64{105, 105, 45, 10, 1}
	for k, a := range besselCoeffs(4) {
		require.Equal(t, want[k], a.Int64())
	}
}

// TestBesselLossMatchesScipy checks besselLossAt (what MinOrder evaluates)
// against the scipy-derived loss curves and order searches in
// testdata/scipy/proto.json ("besselap+brentq": scipy's unit-delay Bessel
// poles, brentq for the rippleDB frequency), orders 1..30.
func TestBesselLossMatchesScipy(t *testing.T) {
	t.Parallel()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scipy", "proto.json"))
	require.NoError(t, err)
	var d struct {
		Curves []struct {
			Gpass, Ratio float64
			LossDB       []float64 `json:"loss_db"`
		} `json:"bessel_curves"`
		Orders []struct {
			Gpass, Ratio float64
			LossDB       []float64 `json:"loss_db"`
		} `json:"bessel_orders"`
	}
	require.NoError(t, json.Unmarshal(b, &d))
	require.NotEmpty(t, d.Curves)
	for _, c := range append(d.Curves, d.Orders...) {
		for i, want := range c.LossDB {
			got := besselLossAt(i+1, c.Gpass, c.Ratio)
			require.InDelta(t, want, got, 1e-9*math.Max(1, want/10), "order %d, gpass %g, ratio %g", i+1, c.Gpass, c.Ratio)
		}
	}
}

// TestBesselLossUnimodal checks the property besselMinOrder relies on to
// declare a mask unreachable: at a fixed ratio the Amax-normalised loss
// rises with the order to a single maximum and then falls (toward the
// Gaussian limit rippleDB·ratio², which it stays above), over a grid of
// rippleDB and ratio and orders up to BesselSearchCap. Steps smaller than
// 1e-12 relative count as flat (rounding).
func TestBesselLossUnimodal(t *testing.T) {
	t.Parallel()
	for _, ap := range []float64{0.01, 0.1, 0.5, 1, 3, 6, 10, 30} {
		for _, r := range []float64{1.01, 1.1, 1.5, 2, 3, 5, 10} {
			t.Run(fmt.Sprintf("ap=%g/ratio=%g", ap, r), func(t *testing.T) {
				t.Parallel()
				falling := false
				prev := besselLossAt(1, ap, r)
				for n := 2; n <= BesselSearchCap; n++ {
					l := besselLossAt(n, ap, r)
					if l > MaxLossDB*2 {
						break // beyond any attenDB MinOrder accepts
					}
					switch d := l - prev; {
					case math.Abs(d) <= 1e-12*l:
					case d < 0:
						falling = true
					default:
						require.False(t, falling, "loss rises again at order %d (%.15g after %.15g)", n, l, prev)
					}
					if falling {
						require.Greater(t, l, ap*r*r*(1-1e-12), "below the Gaussian limit at order %d", n)
					}
					prev = l
				}
			})
		}
	}
}

// TestBesselRootPaths checks that each of besselRoots' two starting paths
// settles on its own (so neither relies on the other) for orders 2..30,
// and that they agree.
func TestBesselRootPaths(t *testing.T) {
	t.Parallel()
	for n := 2; n <= 30; n++ {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			t.Parallel()
			au, are := besselArcGuesses(n)
			besselAberth(n, au, &are, besselStep64, 1e-9, 100)
			require.True(t, besselAberth(n, au, &are, besselNewtonStep, 1e-15, 60), "arc start")
			eu, ere, ok := besselEigenGuesses(n)
			require.True(t, ok, "eigenvalues split into n/2 upper and n%%2 real")
			require.True(t, besselAberth(n, eu, &ere, besselNewtonStep, 1e-15, 60), "eigenvalue start")
			a, e := besselAssemble(n, au, are), besselAssemble(n, eu, ere)
			for i := range a {
				require.InEpsilon(t, real(a[i]), real(e[i]), 1e-14)
				require.InDelta(t, imag(a[i]), imag(e[i]), 1e-14*cmplx.Abs(a[i]))
			}
		})
	}
}
