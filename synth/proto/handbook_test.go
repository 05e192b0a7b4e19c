package proto_test

import (
	"fmt"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
)

// Printed handbook tables, typed in by hand. There was no access to the
// books while writing this: the values are TYPED FROM MEMORY of the classic
// four-decimal tables, so the tolerance is 1e-4 (half a unit in the last
// printed digit is 5e-5, plus a margin for a memory slip in rounding).
// Each row lists one member of every conjugate pair (positive imaginary
// part) and the real pole.

// besselUnitDelayPoles are the Bessel (Thomson) poles normalised to unit
// group delay at DC, i.e. the zeros of the reverse Bessel polynomial, as
// tabulated in A. I. Zverev, "Handbook of Filter Synthesis" (Wiley, 1967)
// and reproduced in most filter handbooks. Typed from memory.
var besselUnitDelayPoles = map[int][]complex128{
	2: {-1.5000 + 0.8660i},
	3: {-2.3222, -1.8389 + 1.7544i},
	4: {-2.8962 + 0.8672i, -2.1038 + 2.6574i},
	5: {-3.6467, -3.3520 + 1.7427i, -2.3247 + 3.5710i},
	6: {-4.2484 + 0.8675i, -3.7357 + 2.6263i, -2.5159 + 4.4927i},
	7: {-4.9718, -4.7583 + 1.7393i, -4.0701 + 3.5172i, -2.6857 + 5.4207i},
	8: {-5.5879 + 0.8676i, -5.2048 + 2.6162i, -4.3683 + 4.4144i, -2.8390 + 6.3539i},
}

// cheb05Poles are the 0.5 dB Chebyshev I poles normalised to the ripple
// bandwidth (loss 0.5 dB at 1 rad/s), as tabulated in A. B. Williams and
// F. J. Taylor, "Electronic Filter Design Handbook" (McGraw-Hill), table of
// 0.5 dB Chebyshev pole locations. Typed from memory.
var cheb05Poles = map[int][]complex128{
	2: {-0.7128 + 1.0040i},
	3: {-0.6265, -0.3132 + 1.0219i},
	4: {-0.1754 + 1.0163i, -0.4233 + 0.4209i},
	5: {-0.3623, -0.1120 + 1.0116i, -0.2931 + 0.6252i},
	6: {-0.0777 + 1.0085i, -0.2121 + 0.7382i, -0.2898 + 0.2702i},
	7: {-0.2562, -0.0570 + 1.0064i, -0.1597 + 0.8071i, -0.2308 + 0.4479i},
	8: {-0.0436 + 1.0050i, -0.1242 + 0.8520i, -0.1859 + 0.5693i, -0.2193 + 0.1999i},
}

// withConjugates completes a table row with the lower-half-plane members.
func withConjugates(row []complex128) []complex128 {
	out := append([]complex128(nil), row...)
	for _, p := range row {
		if imag(p) != 0 {
			out = append(out, complex(real(p), -imag(p)))
		}
	}
	return out
}

// requireRootsWithin matches each table pole to the nearest computed pole
// and requires an absolute distance ≤ tol (the tables print fixed decimals).
func requireRootsWithin(t *testing.T, got, want []complex128, tol float64) {
	t.Helper()
	require.Len(t, got, len(want))
	used := make([]bool, len(got))
	for _, w := range want {
		best, bestD := -1, 1e300
		for i, g := range got {
			d := real(g-w)*real(g-w) + imag(g-w)*imag(g-w)
			if !used[i] && d < bestD {
				best, bestD = i, d
			}
		}
		used[best] = true
		require.InDelta(t, real(w), real(got[best]), tol, "real part of table pole %v (got %v)", w, got[best])
		require.InDelta(t, imag(w), imag(got[best]), tol, "imaginary part of table pole %v (got %v)", w, got[best])
	}
}

func TestHandbookTables(t *testing.T) {
	t.Parallel()
	type tc struct {
		name string
		want []complex128
		got  func() ([]complex128, error)
	}
	var cases []tc
	for n := 2; n <= 8; n++ {
		cases = append(cases, tc{
			name: fmt.Sprintf("bessel-unit-delay/n=%d", n),
			want: withConjugates(besselUnitDelayPoles[n]),
			got: func() ([]complex128, error) {
				// Our Bessel prototype is normalised to rippleDB at 1 rad/s;
				// scaling by its DC group delay τ(0) = Σ −Re(1/p) gives
				// the unit-delay poles the table uses.
				h, err := proto.Lowpass(proto.Bessel, n, 1, 0)
				return h.Scale(delayAtDC(h)).Poles, err
			},
		})
		cases = append(cases, tc{
			name: fmt.Sprintf("chebyshev1-0.5dB/n=%d", n),
			want: withConjugates(cheb05Poles[n]),
			got: func() ([]complex128, error) {
				// Same normalisation as the table: 0.5 dB at 1 rad/s.
				h, err := proto.Lowpass(proto.Chebyshev1, n, 0.5, 0)
				return h.Poles, err
			},
		})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			got, err := c.got()
			require.NoError(t, err)
			requireRootsWithin(t, got, c.want, 1e-4)
		})
	}
}
