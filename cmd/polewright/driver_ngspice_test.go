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
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// driverSpecs are SAR scenarios of our own: the example in
// testdata/examples, and a 12-bit converter on a split supply whose
// driver sits behind a multiple-feedback stage.
var driverSpecs = []struct{ name, spec string }{
	{"example sar-driver-antialias", ""},
	{"12-bit split supply, multiple-feedback", `{"approximation": "chebyshev1", "passband_hz": 5000, "passband_ripple_db": 0.5,
	  "topology": "multiple-feedback",
	  "converter": {"bits": 12, "sample_rate_hz": 200000, "full_scale_vpp": 5, "architecture": "sar",
	                "sampling_capacitance_farad": 15e-12, "acquisition_time_s": 1e-6},
	  "opamp": {"gbw_hz": 10e6, "output_resistance_ohm": 80}}`},
}

// driverDesign is the part of the design JSON these checks read.
type driverDesign struct {
	Response struct {
		FreqHz     []float64 `json:"freq_hz"`
		RealizedDB []float64 `json:"realized_db"`
	} `json:"response"`
	Driver struct {
		ROhm            float64  `json:"r_ohm"`
		CFarad          float64  `json:"c_farad"`
		KickbackV       float64  `json:"kickback_v"`
		SettledErrorLSB float64  `json:"settled_error_lsb"`
		PhaseMarginDeg  *float64 `json:"phase_margin_deg"`
	} `json:"driver"`
}

// TestDriverAgainstNgspice runs the exported deck of each SAR scenario in
// ngspice (Debian package ngspice, the outside reference):
//
//   - the deck's acquisition .tran: the sampling capacitor, charged to the
//     other end of the range, is switched onto the driver's C; the error
//     of v(acq_samp) at the end of the acquisition, against v(out) before
//     it, agrees with driver.settled_error_lsb within 2 % (plus 1e-4 LSB);
//     the first point after the switch closes shows the charge-sharing
//     step Vfs·Cs/(Cs + C) (closed form) within 2 %;
//   - .ac of v(out) against response.realized_db within 0.05 dB wherever
//     it is above −120 dB (the chain's response at ngspice's frequencies,
//     the computation realized_db comes from, checked equal to
//     realized_db on the design's grid); the same chain without the
//     driver is more than 0.05 dB off somewhere, so the driver is seen.
func TestDriverAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	example, err := os.ReadFile(filepath.Join("..", "..", "testdata", "examples", "sar-driver-antialias.json"))
	require.NoError(t, err)
	for _, tc := range driverSpecs {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			spec := tc.spec
			if spec == "" {
				spec = string(example)
			}
			code, out, errOut := runCLI(t, spec, "design", "-spec", "-", "-trials", "0")
			require.Equal(t, exitOK, code, errOut)
			var d driverDesign
			require.NoError(t, json.Unmarshal([]byte(out), &d))
			require.Positive(t, d.Driver.ROhm)

			code, deck, errOut := runCLI(t, spec, "export", "-spec", "-", "-as", "spice", "-trials", "0")
			require.Equal(t, exitOK, code, errOut)
			require.Contains(t, deck, "Sacq out acq_samp")
			dir := t.TempDir()
			ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
			defer cancel()
			freq, v, err := spicerun.RunAll(ctx, dir, []byte(deck))
			require.NoError(t, err)

			s, err := synth.ParseSpecBytes([]byte(spec))
			require.NoError(t, err)
			lsb := s.Converter.FullScaleVpp / math.Exp2(float64(s.Converter.Bits))

			// The acquisition.
			f, err := os.Open(filepath.Join(dir, circuit.DefaultAcqDataFile))
			require.NoError(t, err)
			defer f.Close()
			tS, acq, err := spicerun.ReadData(f)
			require.NoError(t, err)
			require.Len(t, acq, 2)
			n := len(tS)
			require.InDelta(t, s.Converter.AcquisitionTimeS, tS[n-1], 1e-15)
			before := real(acq[1][0])
			settled := (real(acq[0][n-1]) - before) / lsb
			// The kick: the first point past the switch's closing ramp
			// (1e-4 of the acquisition) and the switch's own time
			// constant, decayed by the R–C over that time.
			k := 0
			for k < n && tS[k] < 2e-4*s.Converter.AcquisitionTimeS {
				k++
			}
			tau := d.Driver.ROhm * (d.Driver.CFarad + s.Converter.SamplingCapacitanceFarad)
			kick := (before - real(acq[0][k])) * math.Exp(tS[k]/tau)
			t.Logf("%s: R %g Ohm, C %g F; settled error: design %.5g LSB, ngspice %.5g LSB; kick: closed form %.5g V, ngspice %.5g V; phase margin %v°",
				tc.name, d.Driver.ROhm, d.Driver.CFarad, d.Driver.SettledErrorLSB, settled, d.Driver.KickbackV, kick, *d.Driver.PhaseMarginDeg)
			require.InDelta(t, d.Driver.SettledErrorLSB, math.Abs(settled), 0.02*d.Driver.SettledErrorLSB+1e-4)
			require.InEpsilon(t, d.Driver.KickbackV, kick, 0.02)

			// .ac of the output, with and without the driver.
			design, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			ch, err := design.Chain()
			require.NoError(t, err)
			own, err := ch.MagnitudeDB(nil, d.Response.FreqHz)
			require.NoError(t, err)
			for i := range own {
				if own[i] > -200 {
					require.InDelta(t, d.Response.RealizedDB[i], own[i], 1e-9)
				}
			}
			own, err = ch.MagnitudeDB(nil, freq)
			require.NoError(t, err)
			bare := ch
			bare.Stages = append([]circuit.Stage(nil), ch.Stages...)
			bare.Stages[len(bare.Stages)-1] = bare.Stages[len(bare.Stages)-1].WithoutDriver()
			without, err := bare.MagnitudeDB(nil, freq)
			require.NoError(t, err)
			worst, at, seen := 0.0, 0.0, 0.0
			for i, fHz := range freq {
				if own[i] < -120 {
					continue
				}
				spice := 20 * math.Log10(cmplx.Abs(v[0][i]))
				if e := math.Abs(own[i] - spice); e > worst {
					worst, at = e, fHz
				}
				seen = math.Max(seen, math.Abs(without[i]-spice))
			}
			t.Logf("%s: .ac vs realized: worst %.4f dB at %.4g Hz; without the driver up to %.3f dB off", tc.name, worst, at, seen)
			require.Less(t, worst, 0.05)
			require.Greater(t, seen, 0.05)
		})
	}
}
