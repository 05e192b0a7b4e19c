package proto

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestEllipK(t *testing.T) {
	t.Parallel()
	type tc struct {
		name   string
		k, kp  float64
		K, Kp  float64 // expected K(k), K′(k)
		relTol float64
	}
	r := math.Sqrt(0.5)
	g := math.Gamma(0.25)
	lemniscatic := g * g / (4 * math.Sqrt(math.Pi))
	cases := []tc{
		// K(0) = π/2 by definition; K′(0) is infinite, so only K is checked.
		{name: "k=0", k: 0, kp: 1, K: math.Pi / 2, Kp: math.NaN(), relTol: 1e-15},
		// K(1/√2) = Γ(1/4)²/(4√π) = 1.8540746773… (the lemniscatic case,
		// Abramowitz & Stegun 17.3), and K′ = K there by symmetry.
		{name: "k=1/sqrt2", k: r, kp: r, K: lemniscatic, Kp: lemniscatic, relTol: 2e-15},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			K, Kp := ellipK(c.k, c.kp)
			require.InEpsilon(t, c.K, K, c.relTol)
			if !math.IsNaN(c.Kp) {
				require.InEpsilon(t, c.Kp, Kp, c.relTol)
			}
		})
	}
}

// TestKFromNome: the nome of k = 1/√2 is e^(−π), since K′ = K there
// (definition q = exp(−π·K′/K)).
func TestKFromNome(t *testing.T) {
	t.Parallel()
	require.InEpsilon(t, math.Sqrt(0.5), kFromNome(math.Exp(-math.Pi)), 1e-15)
	require.Zero(t, kFromNome(0))
}

// TestDegreeEquation checks that ellipdeg's k satisfies its defining
// equation N·K′(k)/K(k) = K′(k₁)/K(k₁) and k² + k′² = 1, over moduli from
// 1e-12 to within 1e-12 of 1 (both branches of the nome).
func TestDegreeEquation(t *testing.T) {
	t.Parallel()
	for _, n := range []int{2, 3, 5, 8, 13, 20} {
		for _, lk1 := range []float64{-12, -6, -3, -1, -0.1, -1e-6} {
			t.Run(fmt.Sprintf("n=%d/log10k1=%g", n, lk1), func(t *testing.T) {
				t.Parallel()
				k1 := math.Pow(10, lk1)
				k1p := math.Sqrt((1 - k1) * (1 + k1))
				k, kp := ellipdeg(n, k1, k1p)
				K, Kp := ellipK(k, kp)
				K1, K1p := ellipK(k1, k1p)
				require.InEpsilon(t, K1p/K1, float64(n)*Kp/K, 1e-13)
				require.InDelta(t, 1, k*k+kp*kp, 1e-15)
				require.Greater(t, k, k1, "selectivity above discrimination")
			})
		}
	}
}

// TestJacobiIdentities checks scd against identities of the definitions:
// sn² + cn² = 1, dn² + k²·sn² = 1, the quarter-period values
// sn(K) = 1, cn(K) = 0, dn(K) = k′, and the half-period values.
func TestJacobiIdentities(t *testing.T) {
	t.Parallel()
	for _, kp := range []float64{1e-12, 1e-6, 0.01, 0.3, 0.7071, 0.99, 1 - 1e-9} {
		t.Run(fmt.Sprintf("kp=%g", kp), func(t *testing.T) {
			t.Parallel()
			k := math.Sqrt((1 - kp) * (1 + kp))
			l := newLanden(k, kp)
			for i := 0; i <= 64; i++ {
				u := float64(i) / 64
				s, c, d := l.scd(u)
				require.InDelta(t, 1, s*s+c*c, 1e-15)
				require.InDelta(t, 1, d*d+k*k*s*s, 1e-15)
			}
			s, c, d := l.scd(1)
			require.Equal(t, 1.0, s)
			require.Zero(t, c)
			require.InEpsilon(t, kp, d, 1e-15)
			// At K/2: sn = 1/√(1+k′), cn = √(k′/(1+k′)), dn = √k′ (A&S
			// 16.5), the hard case when k′ is tiny.
			s, c, d = l.scd(0.5)
			require.InEpsilon(t, 1/math.Sqrt(1+kp), s, 2e-15)
			require.InEpsilon(t, math.Sqrt(kp/(1+kp)), c, 1e-14)
			require.InEpsilon(t, math.Sqrt(kp), d, 1e-14)
		})
	}
}

// TestAsnImag checks the inverse: for sn(j·v·K, k) = j·sc(v·K, k′), with
// sc = sn/cn of the complementary functions, asnImag(sc) returns v.
func TestAsnImag(t *testing.T) {
	t.Parallel()
	for _, k := range []float64{1e-9, 0.01, 0.5, 0.9, 0.999999} {
		t.Run(fmt.Sprintf("k=%g", k), func(t *testing.T) {
			t.Parallel()
			kp := math.Sqrt((1 - k) * (1 + k))
			l, lc := newLanden(k, kp), newLanden(kp, k)
			for _, v := range []float64{1e-6, 0.01, 0.1, 0.5, 0.9} {
				// y = v·K′ is the argument of the complementary
				// functions, u = y/K the one of sn(j·u·K, k).
				u := v * lc.cap / l.cap
				s1, c1, _ := lc.scd(v)
				require.InEpsilon(t, u, l.asnImag(s1/c1), 1e-13, "v=%g", v)
			}
		})
	}
}
