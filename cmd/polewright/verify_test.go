package main

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/noise"
	"github.com/polewright/polewright/synth/step"
)

// verifySpec is a 16-bit anti-alias scenario of our own with a converter,
// so the exported deck's noise and transient analyses are compared with
// the design's noise and step figures.
const verifySpec = `{"approximation": "chebyshev1", "passband_hz": 2000, "stopband_hz": 9000,
  "passband_ripple_db": 0.5, "stopband_atten_db": 60,
  "converter": {"bits": 16, "sample_rate_hz": 20000, "full_scale_vpp": 4},
  "opamp": {"gbw_hz": 5e6, "dc_gain_db": 110, "noise_v_per_rthz": 8e-9, "noise_a_per_rthz": 2e-12}}`

// TestExportedDeckNoiseAndStep runs the exported deck in ngspice (the
// outside reference) and compares (a) its .noise output density with the
// tool's noise analysis of the same chain within 0.1 dB, and (b) its .tran
// step response with the design's as-built step within 0.1 % of full
// scale (issue 5).
func TestExportedDeckNoiseAndStep(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	code, out, errOut := runCLI(t, verifySpec, "design", "-spec", "-")
	require.Equal(t, exitOK, code, errOut)
	var d struct {
		Noise struct {
			FreqHz []float64 `json:"freq_hz"`
			Out    []float64 `json:"output_v_per_rthz"`
			RMS    float64   `json:"output_rms_v"`
			LSB    float64   `json:"lsb_v"`
		} `json:"noise"`
		Step struct {
			TimeS    []float64 `json:"time_s"`
			Realized []float64 `json:"realized"`
			Settling *float64  `json:"settling_s"`
		} `json:"step"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &d))
	require.NotEmpty(t, d.Noise.Out)
	require.InDelta(t, 4/math.Pow(2, 16), d.Noise.LSB, 1e-15) // full scale / 2^bits
	require.NotNil(t, d.Step.Settling)

	code, deck, errOut := runCLI(t, verifySpec, "export", "-spec", "-", "-as", "spice")
	require.Equal(t, exitOK, code, errOut)
	dir := t.TempDir()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	_, _, err := spicerun.RunDir(ctx, dir, []byte(deck))
	require.NoError(t, err)

	// (a) noise: ngspice's onoise_spectrum against noise.Output of the
	// design's chain at ngspice's frequencies.
	f, err := os.Open(filepath.Join(dir, circuit.DefaultNoiseDataFile))
	require.NoError(t, err)
	freq, vecs, err := spicerun.ReadData(f)
	f.Close()
	require.NoError(t, err)
	s, err := synth.ParseSpecBytes([]byte(verifySpec))
	require.NoError(t, err)
	design, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	ch, err := design.Chain()
	require.NoError(t, err)
	ours, err := noise.Output(ch, noise.OpAmpNoise{VoltageVPerRtHz: 8e-9, CurrentAPerRtHz: 2e-12}, 300, freq, [2]float64{freq[0], freq[len(freq)-1]})
	require.NoError(t, err)
	for i, fr := range freq {
		got := real(vecs[0][i])
		require.InDelta(t, 20*math.Log10(ours.OutputVPerRtHz[i]), 20*math.Log10(got), 0.1, "noise at %g Hz", fr)
	}
	// The design's own noise spectrum is that analysis on its grid.
	again, err := noise.Output(ch, noise.OpAmpNoise{VoltageVPerRtHz: 8e-9, CurrentAPerRtHz: 2e-12}, 300, d.Noise.FreqHz, design.Noise.BandHz)
	require.NoError(t, err)
	require.InEpsilon(t, again.OutputRMSV, d.Noise.RMS, 1e-12)

	// (b) step: ngspice's transient against the tool's exact as-built step
	// response (the same computation as the design's step.realized) at
	// ngspice's own time points, which need not fall on the design's grid.
	f, err = os.Open(filepath.Join(dir, circuit.DefaultTranDataFile))
	require.NoError(t, err)
	times, tv, err := spicerun.ReadData(f)
	f.Close()
	require.NoError(t, err)
	tfs, err := ch.TransferFunctions()
	require.NoError(t, err)
	var stages []step.Stage
	for _, r := range tfs {
		stages = append(stages, step.FromRational(r))
	}
	want, err := step.Response(stages, times)
	require.NoError(t, err)
	final := d.Step.Realized[len(d.Step.Realized)-1]
	worst := 0.0
	for i := range times {
		worst = math.Max(worst, math.Abs(real(tv[0][i])-want[i])/math.Abs(final))
	}
	require.Less(t, worst, 0.001, "worst step difference as a fraction of full scale")
	// The design's step.realized is that response on the design's grid.
	mine, err := step.Response(stages, d.Step.TimeS)
	require.NoError(t, err)
	require.InDeltaSlice(t, mine, d.Step.Realized, 1e-12)
}
