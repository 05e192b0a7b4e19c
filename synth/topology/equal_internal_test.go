package topology

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// TestEqualComponentSallenKey: the equal-component form (C1 = C2,
// R1 ≈ R2, K = 3 − 1/Q, TI SLOA049 and MT-220, from memory), which Realize
// uses only when the general-K design fails, realises the lowpass exactly
// with exact resistors, with and without its input divider; checked by
// nodal analysis against the target g·ω0²/(s² + s·ω0/Q + ω0²).
func TestEqualComponentSallenKey(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		q, g float64
	}{
		{"butterworth-native-gain", 0.7071, 3 - 1/0.7071}, // K = 1.586, no divider
		{"butterworth-divider", 0.7071, 1.2},
		{"q1.3066-divider", 1.3066, 2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			opt := DefaultOptions()
			opt.Exact = true
			o, err := newOptions(opt)
			require.NoError(t, err)
			w0 := 2 * math.Pi * 1000
			tg := target{order: 2, kind: section.Lowpass, w0: w0, q: tc.q, g: tc.g}
			amp, e := newAmplifier(SallenKey, o, 3-1/tc.q)
			require.Nil(t, e)
			alpha := tc.g / amp.k
			if alpha > 1-1e-3 {
				alpha = 1
			}
			d, _, ok := skLowpassSearch(tg, o, amp, alpha, true)
			require.True(t, ok)
			st := d.stage
			require.NoError(t, st.Validate())
			require.Equal(t, partValue(t, d.design, "a", "out"), partValue(t, d.design, "p", "0"), "C1 = C2")
			// Rf/Rg = 2 − 1/Q.
			require.InDelta(t, 2-1/tc.q, partValue(t, d.design, "out", "m")/partValue(t, d.design, "m", "0"), 1e-12)
			for _, f := range []float64{30, 300, 900, 1100, 4000, 30000} {
				s := complex(0, 2*math.Pi*f)
				got, err := st.SolveAt(circuit.Model{Ideal: true}, s)
				require.NoError(t, err)
				want := complex(tc.g*w0*w0, 0) / (s*s + s*complex(w0/tc.q, 0) + complex(w0*w0, 0))
				require.Less(t, cmplx.Abs(got-want)/cmplx.Abs(want), 1e-9, "%g Hz", f)
			}
		})
	}
}
