package synth_test

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// TestCommonModeRejection: a differential design with a Monte Carlo
// carries the first stage's common-mode rejection; exact parts carry
// none; and the rejection scales as the mismatch does (a closed-form
// property: to first order the common-mode to differential conversion is
// linear in the parts' relative errors, so a tenth of the tolerance
// gives 20 dB more rejection, here within 3 dB over 400 trials).
func TestCommonModeRejection(t *testing.T) {
	t.Parallel()
	spec := func(rPct, cPct float64) synth.Spec {
		s, err := synth.ParseSpecBytes([]byte(`{"response": "lowpass", "approximation": "butterworth", "order": 4, "passband_hz": 1000,
		  "converter": {"bits": 20, "sample_rate_hz": 128000, "output_rate_hz": 2000, "full_scale_vpp": 5, "architecture": "sigma-delta", "input": "differential"},
		  "montecarlo": {"trials": 400, "seed": 7}}`))
		require.NoError(t, err)
		s.Tolerance.ResistorPct, s.Tolerance.CapacitorPct = rPct, cPct
		return s
	}
	design := func(s synth.Spec) *synth.Design {
		d, err := synth.Synthesize(context.Background(), s)
		require.NoError(t, err)
		return d
	}
	wide := design(spec(1, 0))
	cm := wide.MonteCarlo.CommonMode
	require.NotNil(t, cm)
	require.Equal(t, 400, cm.Trials)
	require.Len(t, cm.Points, 2)
	require.Zero(t, cm.Points[0].FreqHz)
	require.Equal(t, 1000.0, cm.Points[1].FreqHz)
	for _, p := range cm.Points {
		require.LessOrEqual(t, p.WorstDB, p.MedianDB)
		require.Greater(t, p.WorstDB, 0.0)
	}
	narrow := design(spec(0.1, 0)).MonteCarlo.CommonMode
	for i := range cm.Points {
		require.InDelta(t, 20, narrow.Points[i].MedianDB-cm.Points[i].MedianDB, 3, "median rejection at %g Hz", cm.Points[i].FreqHz)
	}
	ids := map[string]bool{}
	for _, c := range wide.Checks {
		ids[c.ID] = true
	}
	require.True(t, ids[synth.CheckCommonMode])

	exact := design(spec(0, 0))
	require.Nil(t, exact.MonteCarlo.CommonMode, "exact parts reject perfectly: no figure")
	require.False(t, math.IsNaN(cm.Points[0].MedianDB))
}

// TestCommonModeConverted: a differential design built single-ended
// (elliptic: notch sections) carries the common-mode figure of the
// conversion after its last section (stage = the last), and its
// rejection scales as the mismatch does (the same closed-form property
// as in TestCommonModeRejection: a tenth of the resistor tolerance gives
// 20 dB more, here within 3 dB over 400 trials); the conversion has no
// capacitors, so the figure is the same at DC and at the passband edge.
func TestCommonModeConverted(t *testing.T) {
	t.Parallel()
	design := func(rPct float64) *synth.Design {
		s, err := synth.ParseSpecBytes([]byte(`{"response": "lowpass", "approximation": "elliptic", "order": 4, "passband_hz": 1000, "stopband_atten_db": 50,
		  "converter": {"bits": 20, "sample_rate_hz": 128000, "output_rate_hz": 2000, "full_scale_vpp": 5, "architecture": "sigma-delta", "input": "differential"},
		  "montecarlo": {"trials": 400, "seed": 7}}`))
		require.NoError(t, err)
		s.Tolerance.ResistorPct = rPct
		d, err := synth.Synthesize(context.Background(), s)
		require.NoError(t, err)
		return d
	}
	wide := design(1)
	cm := wide.MonteCarlo.CommonMode
	require.NotNil(t, cm)
	require.Equal(t, len(wide.Sections), cm.Stage)
	require.Len(t, cm.Points, 2)
	require.InDelta(t, cm.Points[0].MedianDB, cm.Points[1].MedianDB, 1e-6)
	narrow := design(0.1).MonteCarlo.CommonMode
	require.InDelta(t, 20, narrow.Points[0].MedianDB-cm.Points[0].MedianDB, 3)
	var check *synth.Check
	for i, c := range wide.Checks {
		if c.ID == synth.CheckCommonMode {
			check = &wide.Checks[i]
		}
	}
	require.NotNil(t, check)
	require.NotNil(t, check.Stage)
	require.Equal(t, cm.Stage, *check.Stage)
	require.Contains(t, check.Text, "conversion")
}
