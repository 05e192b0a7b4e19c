package plotting

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// TestPassbandCurveCarriesLoading checks that the passband view's
// as-built curve, which is computed afresh on its own grid, carries the
// inter-stage loading as the design's realized_db does: at every point
// of the design's sweep inside the view the two agree within 1e-9 dB. The
// chain (a 1 MHz op-amp with 200 Ω of output resistance in a
// multiple-feedback highpass) is one where the loading is 0.1 dB inside
// the passband, so leaving it out fails the test.
func TestPassbandCurveCarriesLoading(t *testing.T) {
	t.Parallel()
	s, err := synth.ParseSpecBytes([]byte(`{"response": "highpass", "approximation": "butterworth", "passband_hz": 1000, "stopband_hz": 300,
	  "stopband_atten_db": 60, "topology": "multiple-feedback", "opamp": {"gbw_hz": 1e6, "output_resistance_ohm": 200}}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	require.False(t, builtLoad(d).Empty())
	sw := designSweep(d)
	lo, hi := 1000.0, 10000.0
	f, _, built := passbandCurves(d, sw, usable(asBuilt(d)), lo, hi)
	idx := map[float64]int{}
	for i, x := range f {
		idx[x] = i
	}
	n, most := 0, 0.0
	for i, x := range d.Response.FreqHz {
		j, ok := idx[x]
		if !ok || x <= lo || x >= hi {
			continue
		}
		require.InDelta(t, d.Response.RealizedDB[i], built[j], 1e-9, "at %g Hz", x)
		most = math.Max(most, math.Abs(builtLoad(d).DBAt(x)))
		n++
	}
	require.Greater(t, n, 10)
	require.Greater(t, most, 0.05, "the loading should matter inside this view")
}
