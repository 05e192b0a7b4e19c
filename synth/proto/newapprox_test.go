package proto_test

import (
	"fmt"
	"math"
	"math/big"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
)

// Optimum-L characteristic polynomials L_n(ω²) with integer coefficients,
// highest power first (ω^(2n) … ω²), as tabulated by Papoulis (Proc. IRE
// 46, 1958; 47, 1959) and reproduced by Fukada and in later handbooks.
// TYPED FROM MEMORY (no book at hand); each row sums to L_n(1) = 1.
var optimumLTable = map[int][]int64{
	1: {1},
	2: {1, 0},
	3: {3, -3, 1},
	4: {6, -8, 3, 0},
	5: {20, -40, 28, -8, 1},
	6: {50, -120, 105, -40, 6, 0},
	7: {175, -525, 615, -355, 105, -15, 1},
	8: {490, -1680, 2310, -1624, 615, -120, 10, 0},
}

// Linear-phase poles with an equiripple phase error of 0.05°, normalised to
// 3 dB at 1 rad/s, as tabulated in A. B. Williams and F. J. Taylor,
// "Electronic Filter Design Handbook" (McGraw-Hill), table "Linear phase
// with equiripple error of 0.05°" (the same values as A. I. Zverev,
// "Handbook of Filter Synthesis"). TYPED FROM MEMORY, and only the rows
// recalled with confidence (orders 2 and 3); four printed decimals.
var linPhase005Poles = map[int][]complex128{
	2: {-1.0087 + 0.6680i},
	3: {-1.0459, -0.8541 + 1.0725i},
}

// legendrePoly returns the Legendre polynomial P_i in the power basis, with
// exact rational coefficients (Bonnet's recurrence
// (i+1)·P_{i+1} = (2i+1)·x·P_i − i·P_{i−1}).
func legendrePoly(i int) []*big.Rat {
	p0 := []*big.Rat{big.NewRat(1, 1)}
	if i == 0 {
		return p0
	}
	p1 := []*big.Rat{new(big.Rat), big.NewRat(1, 1)}
	for k := 1; k < i; k++ {
		next := make([]*big.Rat, k+2)
		for j := range next {
			next[j] = new(big.Rat)
		}
		for j, c := range p1 { // (2k+1)·x·P_k
			next[j+1].Add(next[j+1], new(big.Rat).Mul(c, big.NewRat(int64(2*k+1), 1)))
		}
		for j, c := range p0 { // − k·P_{k−1}
			next[j].Sub(next[j], new(big.Rat).Mul(c, big.NewRat(int64(k), 1)))
		}
		for _, c := range next {
			c.Quo(c, big.NewRat(int64(k+1), 1))
		}
		p0, p1 = p1, next
	}
	return p1
}

func polyMul(a, b []*big.Rat) []*big.Rat {
	out := make([]*big.Rat, len(a)+len(b)-1)
	for i := range out {
		out[i] = new(big.Rat)
	}
	for i, x := range a {
		for j, y := range b {
			out[i+j].Add(out[i+j], new(big.Rat).Mul(x, y))
		}
	}
	return out
}

// optimumLExact returns the power-basis coefficients (in w = ω², lowest
// first) of Papoulis's L_n from its defining integral, in exact rationals:
// with x = 2w − 1,
//
//	n odd,  k = (n−1)/2: L_n = ∫_{−1}^{x} (Σ_{i≤k} a_i P_i)² dt,       a_i a_j = (2i+1)(2j+1)/(2(k+1)²)
//	n even, k = (n−2)/2: L_n = ∫_{−1}^{x} (1+t)(Σ_{i≡k} a_i P_i)² dt,  a_i a_j = (2i+1)(2j+1)/((k+1)(k+2))
//
// The products a_i·a_j are rational, so the square is formed term by term.
func optimumLExact(n int) []*big.Rat {
	k := (n - 1) / 2
	if n%2 == 0 {
		k = (n - 2) / 2
	}
	var sq []*big.Rat
	add := func(p []*big.Rat) {
		for len(sq) < len(p) {
			sq = append(sq, new(big.Rat))
		}
		for j, c := range p {
			sq[j].Add(sq[j], c)
		}
	}
	for i := 0; i <= k; i++ {
		for j := 0; j <= k; j++ {
			var w *big.Rat
			if n%2 == 1 {
				w = big.NewRat(int64((2*i+1)*(2*j+1)), int64(2*(k+1)*(k+1)))
			} else {
				if i%2 != k%2 || j%2 != k%2 {
					continue
				}
				w = big.NewRat(int64((2*i+1)*(2*j+1)), int64((k+1)*(k+2)))
			}
			prod := polyMul(legendrePoly(i), legendrePoly(j))
			for _, c := range prod {
				c.Mul(c, w)
			}
			add(prod)
		}
	}
	if n%2 == 0 {
		sq = polyMul(sq, []*big.Rat{big.NewRat(1, 1), big.NewRat(1, 1)})
	}
	// Antiderivative F with F(−1) = 0.
	f := make([]*big.Rat, len(sq)+1)
	f[0] = new(big.Rat)
	for j, c := range sq {
		f[j+1] = new(big.Rat).Quo(c, big.NewRat(int64(j+1), 1))
	}
	at := new(big.Rat) // F(−1)
	sign := big.NewRat(1, 1)
	for _, c := range f {
		at.Add(at, new(big.Rat).Mul(c, sign))
		sign.Neg(sign)
	}
	f[0].Sub(f[0], at)
	// Substitute x = 2w − 1 (Horner in polynomials).
	out := []*big.Rat{new(big.Rat)}
	for j := len(f) - 1; j >= 0; j-- {
		out = polyMul(out, []*big.Rat{big.NewRat(-1, 1), big.NewRat(2, 1)})
		out[0].Add(out[0], f[j])
	}
	return out[:n+1]
}

func TestOptimumLPolynomialTable(t *testing.T) {
	t.Parallel()
	for n := 1; n <= 8; n++ {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			t.Parallel()
			got := optimumLExact(n)
			require.Zero(t, got[0].Sign(), "L_n(0) = 0")
			row := optimumLTable[n]
			for i, c := range row {
				require.Equal(t, big.NewRat(c, 1).String(), got[n-i].String(), "coefficient of ω^%d", 2*(n-i))
			}
		})
	}
}

// lossFromL returns 10·log10(1 + ε²·L_n(ω²)) with L_n evaluated exactly
// from its rational coefficients at ω² (rounded once to float64).
func lossFromL(l []*big.Rat, rippleDB, w float64) float64 {
	x := new(big.Rat).SetFloat64(w * w)
	v := new(big.Rat)
	for j := len(l) - 1; j >= 0; j-- {
		v.Mul(v, x)
		v.Add(v, l[j])
	}
	lf, _ := v.Float64()
	return 10 * math.Log10(1+math.Expm1(rippleDB*math.Ln10/10)*lf)
}

// TestLegendreAgainstDefinition checks the optimum-L prototype's loss
// against the defining |H|² = 1/(1 + ε²·L_n(ω²)), L_n from the exact
// integral above, at orders 1–20, and that its loss never falls as ω rises.
func TestLegendreAgainstDefinition(t *testing.T) {
	t.Parallel()
	for n := 1; n <= proto.MaxOrder; n++ {
		for _, ripple := range []float64{0.1, 1, 3.0102999566398121} {
			t.Run(fmt.Sprintf("n=%d/ap=%g", n, ripple), func(t *testing.T) {
				t.Parallel()
				h, err := proto.Lowpass(proto.Legendre, n, ripple, 0)
				require.NoError(t, err)
				l := optimumLExact(n)
				for _, w := range []float64{0.1, 0.3, 0.5, 0.7, 0.9, 0.99, 1, 1.01, 1.1, 1.5, 2, 3} {
					want := lossFromL(l, ripple, w)
					require.InDelta(t, want, lossDB(h, w), 1e-9*math.Max(1, want), "ω=%g", w)
				}
				prev := 0.0
				for i := 0; i <= 3000; i++ {
					w := float64(i) / 1000
					got := lossDB(h, w)
					require.GreaterOrEqual(t, got, prev-1e-12, "loss falls at ω=%g", w)
					prev = got
				}
			})
		}
	}
}

// gaussianA solves Σ_{k=0..n} a^k/k! = 10^(rippleDB/10) by plain bisection
// (independent of the package's Newton iteration on ln a).
func gaussianA(n int, rippleDB float64) float64 {
	target := math.Pow(10, rippleDB/10)
	e := func(a float64) float64 {
		s, t := 1.0, 1.0
		for k := 1; k <= n; k++ {
			t *= a / float64(k)
			s += t
		}
		return s
	}
	lo, hi := 0.0, 1.0
	for e(hi) < target {
		hi *= 2
	}
	for range 200 {
		m := (lo + hi) / 2
		if e(m) < target {
			lo = m
		} else {
			hi = m
		}
	}
	return (lo + hi) / 2
}

// TestGaussianAgainstSeries checks the Gaussian prototype's loss against
// its defining series |H(jω)|⁻² = Σ_{k=0..n} (a·ω²)^k/k! at orders 1–20,
// and that the loss tends to the Gaussian a·ω²·10/ln 10 dB as n grows.
func TestGaussianAgainstSeries(t *testing.T) {
	t.Parallel()
	for n := 1; n <= proto.MaxOrder; n++ {
		for _, ripple := range []float64{0.1, 1, 3.0102999566398121} {
			t.Run(fmt.Sprintf("n=%d/ap=%g", n, ripple), func(t *testing.T) {
				t.Parallel()
				h, err := proto.Lowpass(proto.Gaussian, n, ripple, 0)
				require.NoError(t, err)
				a := gaussianA(n, ripple)
				for _, w := range []float64{0.1, 0.5, 0.9, 1, 1.2, 1.5, 2, 3} {
					s, term := 1.0, 1.0
					for k := 1; k <= n; k++ {
						term *= a * w * w / float64(k)
						s += term
					}
					want := 10 * math.Log10(s)
					require.InDelta(t, want, lossDB(h, w), 1e-9*math.Max(1, want), "ω=%g", w)
				}
			})
		}
	}
	// The limit: at order 20 and 3 dB, a → ln 2 and the loss at 2 rad/s is
	// within 1e-6 dB of the Gaussian's 4·3.0103 dB (the series' remainder
	// there is below (4 ln 2)^21/21!).
	h, err := proto.Lowpass(proto.Gaussian, 20, 3.0102999566398121, 0)
	require.NoError(t, err)
	require.InDelta(t, 4*3.0102999566398121, lossDB(h, 2), 1e-6)
}

func TestNewApproximationHandbookTables(t *testing.T) {
	t.Parallel()
	for n, row := range linPhase005Poles {
		t.Run(fmt.Sprintf("linear-phase-0.05/n=%d", n), func(t *testing.T) {
			t.Parallel()
			h, err := proto.Lowpass(proto.LinearPhase, n, 3.0102999566398121, 0, proto.PhaseErrorDeg(0.05))
			require.NoError(t, err)
			// Four printed decimals: half a unit is 5e-5; 1e-4 as for
			// the other tables typed from memory.
			requireRootsWithin(t, h.Poles, withConjugates(row), 1e-4)
		})
	}
	// Optimum-L at order 3, 3 dB (ε = 1): |H(jω)|⁻² = 1 + L_3(ω²) with L_3
	// from the table above, 3ω⁶ − 3ω⁴ + ω².
	h, err := proto.Lowpass(proto.Legendre, 3, 3.0102999566398121, 0)
	require.NoError(t, err)
	for _, w := range []float64{0.3, 0.8, 1.7} {
		w2 := w * w
		want := 1 + 3*w2*w2*w2 - 3*w2*w2 + w2
		m := h.MagnitudeAt(w)
		require.InEpsilon(t, want, 1/(m*m), 1e-12)
	}
}
