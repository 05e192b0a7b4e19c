package step

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestMeasureModalAgainstStateSpace: Model.Measure through the partial
// fractions (measureModal) gives the figures of the exact state-space
// model (matrix exponentials, the path it falls back to) on 300 random
// stable cascades of first- and second-order stages — lowpass, highpass,
// bandpass and notch numerators, Q from 0.5 to 20, f0 over three decades,
// some with far poles like an op-amp's — within 1e-6 relative (the
// settling time, a crossing of the band refined on each, to 1e-6 of
// itself plus 1e-9 of the grid's span).
func TestMeasureModalAgainstStateSpace(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	logU := func(lo, hi float64) float64 { return lo * math.Pow(hi/lo, rng.Float64()) }
	compared := 0
	for i := range 300 {
		var stages []Stage
		for range 1 + rng.IntN(5) {
			w := 2 * math.Pi * logU(100, 1e5)
			if rng.IntN(4) == 0 {
				stages = append(stages, Stage{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: w})
				continue
			}
			q := logU(0.5, 20)
			num := [][]float64{{1}, {0, 0, 1}, {0, 1 / q}, {logU(0.1, 10), 0, 1}}[rng.IntN(4)]
			stages = append(stages, Stage{Num: num, Den: []float64{1, 1 / q, 1}, ScaleRadPerSec: w})
		}
		if rng.IntN(3) == 0 { // an op-amp-like far pole
			stages = append(stages, Stage{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 2 * math.Pi * logU(1e6, 1e8)})
		}
		band := Band{Frac: []float64{1e-3, 1.5e-5}[rng.IntN(2)], FullScale: []float64{0, 1}[rng.IntN(2)]}
		m, err := NewModel(stages)
		require.NoError(t, err)
		measureModal = true
		got, errM := m.Measure(band)
		measureModal = false
		want, errS := m.Measure(band)
		measureModal = true
		require.Equal(t, errS, errM, "case %d", i)
		if errS != nil {
			continue
		}
		for _, f := range []struct {
			name      string
			got, want float64
		}{
			{"overshoot", got.OvershootPct, want.OvershootPct},
			{"undershoot", got.UndershootPct, want.UndershootPct},
			{"rise", got.RiseTimeS, want.RiseTimeS},
			{"settling", got.SettlingS, want.SettlingS},
			{"final", got.FinalValue, want.FinalValue},
			{"peak", got.PeakAbs, want.PeakAbs},
			{"band", got.BandAbs, want.BandAbs},
		} {
			if math.IsNaN(f.want) {
				require.True(t, math.IsNaN(f.got), "case %d %s: got %v, want NaN", i, f.name, f.got)
				continue
			}
			require.InDelta(t, f.want, f.got, 1e-6*math.Abs(f.want)+1e-9*math.Max(want.SettlingS, 1e-9)+1e-12, "case %d %s", i, f.name)
		}
		compared++
	}
	require.Greater(t, compared, 250)
}

// TestCurveAgainstResponse: Model.Curve (partial fractions where well
// conditioned) against Model.Response (the exact state space) on 300
// random stable cascades, within 1e-9 of the response's scale (the
// largest |y|), on the uniform grid a design's plot uses.
func TestCurveAgainstResponse(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	logU := func(lo, hi float64) float64 { return lo * math.Pow(hi/lo, rng.Float64()) }
	for i := range 300 {
		var stages []Stage
		for range 1 + rng.IntN(5) {
			w := 2 * math.Pi * logU(100, 1e5)
			q := logU(0.5, 20)
			num := [][]float64{{1}, {0, 0, 1}, {0, 1 / q}, {logU(0.1, 10), 0, 1}}[rng.IntN(4)]
			stages = append(stages, Stage{Num: num, Den: []float64{1, 1 / q, 1}, ScaleRadPerSec: w})
		}
		if rng.IntN(3) == 0 {
			stages = append(stages, Stage{Num: []float64{1}, Den: []float64{1, 1}, ScaleRadPerSec: 2 * math.Pi * logU(1e6, 1e8)})
		}
		m, err := NewModel(stages)
		require.NoError(t, err)
		ts := Grid(SettlingGrid(stages, 2, 1e-3)[1], 1000)
		got, err := m.Curve(ts)
		require.NoError(t, err)
		want, err := m.Response(ts)
		require.NoError(t, err)
		scale := 0.0
		for _, v := range want {
			scale = math.Max(scale, math.Abs(v))
		}
		for k := range want {
			require.InDelta(t, want[k], got[k], 1e-9*scale, "case %d, t = %g", i, ts[k])
		}
	}
}
