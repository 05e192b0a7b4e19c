package main

import (
	"context"
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// loadingSpecs are chains where each stage's input loads the op-amp
// output before it through a large open-loop output resistance (200 Ω)
// and a slow op-amp (1–5 MHz), scenarios of our own. unloadedDB is how
// far, at least, the product of the unloaded stages strays from ngspice
// somewhere above −120 dB: the loading is not negligible there.
var loadingSpecs = []loadingCase{
	{"multiple-feedback highpass, 1 MHz", `{"response": "highpass", "approximation": "butterworth", "passband_hz": 1000, "stopband_hz": 300,
	  "stopband_atten_db": 60, "topology": "multiple-feedback", "opamp": {"gbw_hz": 1e6, "output_resistance_ohm": 200}}`, 0.05},
	{"Chebyshev Sallen-Key lowpass, 2 MHz", `{"approximation": "chebyshev1", "passband_hz": 10000, "stopband_hz": 30000, "stopband_atten_db": 60,
	  "topology": "sallen-key", "opamp": {"gbw_hz": 2e6, "output_resistance_ohm": 200}}`, 0.005},
	{"elliptic with notch stages, 5 MHz", `{"approximation": "elliptic", "passband_hz": 10000, "stopband_hz": 15000, "stopband_atten_db": 60,
	  "opamp": {"gbw_hz": 5e6, "output_resistance_ohm": 200}}`, 0.02},
	{"Butterworth bandpass, 3 MHz", `{"response": "bandpass", "approximation": "butterworth", "passband_hz": [9000, 11000], "stopband_hz": [7000, 14000],
	  "stopband_atten_db": 40, "opamp": {"gbw_hz": 3e6, "output_resistance_ohm": 100}}`, 0.002},
}

// loadingCase is a chain for TestLoadingAgainstNgspice.
type loadingCase struct {
	name, spec string
	unloadedDB float64
}

// worstDB returns the largest |own − 20·log10|sim|| over the frequencies
// where gate (the design's as-built response) is above −120 dB, and where
// it is.
func worstDB(gate, own []float64, sim []complex128, freq []float64) (worst, at float64) {
	for i, f := range freq {
		if gate[i] < -120 {
			continue
		}
		if e := math.Abs(own[i] - 20*math.Log10(cmplx.Abs(sim[i]))); e > worst {
			worst, at = e, f
		}
	}
	return worst, at
}

// TestLoadingAgainstNgspice runs each exported deck's .ac in ngspice
// (Debian's ngspice, the outside reference; the deck has every op-amp's
// output resistance inside its subcircuit, so each stage loads the one
// before as on the board) and requires the design's as-built response
// within 1e-6 dB of it wherever it is above −120 dB (the loading is
// exact: circuit.Loading), and the unloaded stages' product to miss by at
// least unloadedDB somewhere (the check would catch the loading being
// left out). Besides the single-ended chains above: the two differential
// examples with 300 Ω on a 1 MHz op-amp, one of fully differential
// stages (taken by their half circuits), one of single-ended sections
// converted to differential by its last stage.
func TestLoadingAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	cases := append([]loadingCase(nil), loadingSpecs...)
	for _, ex := range []struct {
		name       string
		unloadedDB float64
	}{{"geophone-differential-sigma-delta", 0.0001}, {"vibration-elliptic-differential-sigma-delta", 1}} {
		b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "examples", ex.name+".json"))
		require.NoError(t, err)
		var obj map[string]any
		require.NoError(t, json.Unmarshal(b, &obj))
		op := obj["opamp"].(map[string]any)
		op["output_resistance_ohm"], op["gbw_hz"] = 300, 1e6
		delete(obj, "montecarlo")
		spec, err := json.Marshal(obj)
		require.NoError(t, err)
		cases = append(cases, loadingCase{ex.name + ", 300 Ω on 1 MHz", string(spec), ex.unloadedDB})
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, deck, errOut := runCLI(t, tc.spec, "export", "-spec", "-", "-as", "spice")
			require.Equal(t, exitOK, code, errOut)
			ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
			defer cancel()
			freq, v, err := spicerun.RunAll(ctx, t.TempDir(), []byte(deck))
			require.NoError(t, err)
			s, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			ch, err := d.Chain()
			require.NoError(t, err)
			own, err := ch.MagnitudeDB(nil, freq)
			require.NoError(t, err)
			tfs, err := ch.TransferFunctions()
			require.NoError(t, err)
			plain := tfs.MagnitudeDB(nil, freq)
			worst, at := worstDB(own, own, v[0], freq)
			miss, _ := worstDB(own, plain, v[0], freq)
			t.Logf("%s: as built vs ngspice %.2g dB at worst (%.4g Hz); unloaded stages %.4f dB", tc.name, worst, at, miss)
			require.Less(t, worst, 1e-6)
			require.Greater(t, miss, tc.unloadedDB)
		})
	}
}
