package step_test

import (
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/step"
)

// TestModalResponseMatchesResponse checks the partial-fraction step
// response against the exact state-space one (package step's Response,
// itself checked against scipy and ngspice) on cascades of distinct
// poles: they agree to 1e-9 of the response's scale; and that nearly
// repeated poles across stages are refused rather than answered wrongly.
func TestModalResponseMatchesResponse(t *testing.T) {
	t.Parallel()
	lp2 := func(w, q float64) step.Stage { // ω²/(s² + s·ω/q + ω²)
		return step.Stage{Num: []float64{w * w}, Den: []float64{w * w, w / q, 1}, ScaleRadPerSec: 1}
	}
	hp2 := func(w, q float64) step.Stage {
		return step.Stage{Num: []float64{0, 0, 1}, Den: []float64{w * w, w / q, 1}, ScaleRadPerSec: 1}
	}
	lp1 := func(w float64) step.Stage {
		return step.Stage{Num: []float64{w}, Den: []float64{w, 1}, ScaleRadPerSec: 1}
	}
	for _, tc := range []struct {
		name   string
		stages []step.Stage
		ill    bool
	}{
		{"butterworth-4", []step.Stage{lp2(1000, 0.5412), lp2(1000, 1.3066)}, false},
		{"lowpass with op-amp pole", []step.Stage{lp2(2000, 0.7), lp1(6e6)}, false},
		{"bandpass-like", []step.Stage{hp2(900, 3), lp2(1100, 3), lp1(5000)}, false},
		{"repeated across stages", []step.Stage{lp2(1000, 0.7), lp2(1000, 0.7)}, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			// A uniform grid (the recurrence) and a graded one (one
			// exponential per term and time).
			graded := make([]float64, 300)
			for i := range graded {
				x := float64(i) / 299
				graded[i] = 0.02 * x * x
			}
			for _, tS := range [][]float64{step.Grid(0.02, 400), graded} {
				y, err := step.ModalResponse(tc.stages, tS)
				if tc.ill {
					require.True(t, errors.Is(err, step.ErrIllConditioned), "%v", err)
					return
				}
				require.NoError(t, err)
				want, err := step.Response(tc.stages, tS)
				require.NoError(t, err)
				scale := 0.0
				for _, v := range want {
					scale = math.Max(scale, math.Abs(v))
				}
				for i := range tS {
					require.InDelta(t, want[i], y[i], 1e-9*scale, "t = %g s", tS[i])
				}
			}
		})
	}
}
