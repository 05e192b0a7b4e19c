package zpk_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/zpk"
)

func TestAtAndMagnitude(t *testing.T) {
	t.Parallel()
	// H(s) = 2(s+3)/((s+1)(s+2)): at s = j, by hand,
	// 2(3+j)/((1+j)(2+j)) = 2(3+j)/(1+3j) = 2(3+j)(1−3j)/10 = (12−16j)/10 = 1.2 − 1.6j.
	h := zpk.ZPK{Zeros: []complex128{-3}, Poles: []complex128{-1, -2}, Gain: 2}
	v := h.AtOmega(1)
	require.InDelta(t, 1.2, real(v), 1e-15)
	require.InDelta(t, -1.6, imag(v), 1e-15)
	require.InDelta(t, 2.0, h.MagnitudeAt(1), 1e-15) // |1.2 − 1.6j| = 2
	require.Equal(t, 2, h.Order())
}

func TestScale(t *testing.T) {
	t.Parallel()
	// H'(s) = H(s/a): the value at a·s0 must equal the original at s0.
	h := zpk.ZPK{Zeros: []complex128{complex(0, 3), complex(0, -3)}, Poles: []complex128{complex(-0.5, 1), complex(-0.5, -1), -2}, Gain: 0.7}
	for _, a := range []float64{1e-3, 1, 6283.2, 1e8} {
		g := h.Scale(a)
		for _, s0 := range []complex128{complex(0, 0.3), complex(0, 1), complex(0.1, 7)} {
			require.InEpsilon(t, cmplx.Abs(h.At(s0)), cmplx.Abs(g.At(s0*complex(a, 0))), 1e-12)
		}
	}
	require.Panics(t, func() { h.Scale(0) })
	c := h.Clone()
	c.Poles[0] = 0
	require.NotEqual(t, c.Poles[0], h.Poles[0])
}

func TestMagnitudeHighOrderNoOverflow(t *testing.T) {
	t.Parallel()
	// 40 poles and 20 zeros at −1e9 rad/s with K = 1e180: at DC
	// |H| = 1e180·(1e9)^20/(1e9)^40 = 1, though the product of the pole
	// distances alone (1e360) overflows float64.
	h := zpk.ZPK{Poles: make([]complex128, 40), Zeros: make([]complex128, 20), Gain: 1e180}
	for i := range h.Poles {
		h.Poles[i] = -1e9
	}
	for i := range h.Zeros {
		h.Zeros[i] = -1e9
	}
	require.InEpsilon(t, 1.0, h.MagnitudeAt(0), 1e-12)
}

func ExampleZPK_AtOmega() {
	// A second-order lowpass with ω0 = 1 rad/s and Q = 1/√2: |H(j)| = 1/√2.
	p := complex(-1/math.Sqrt2, 1/math.Sqrt2)
	h := zpk.ZPK{Poles: []complex128{p, cmplx.Conj(p)}, Gain: 1}
	fmt.Printf("%.4f\n", cmplx.Abs(h.AtOmega(1)))
	// Output: 0.7071
}
