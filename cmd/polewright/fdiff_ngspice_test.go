package main

import (
	"context"
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// TestDifferentialExampleAgainstNgspice takes the differential
// sigma-delta examples (testdata/examples/geophone-differential-sigma-delta.json,
// and vibration-elliptic-differential-sigma-delta.json, whose notch
// sections are single-ended and converted after the last) through the
// CLI: the design's stages are fully differential (or, converted, the
// last carries the conversion) with the
// common-mode figure and check; the exported deck has the FDA
// subcircuit, outputs outp and outn and out = v(outp) − v(outn); and
// ngspice (the outside reference) runs it to v(out) within 0.05 dB of
// the as-built response (the chain's, checked equal to
// response.realized_db on the design's grid) wherever it is above
// −120 dB.
func TestDifferentialExampleAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, tc := range []struct {
		name      string
		converted bool // built single-ended, converted after the last section
	}{
		{"geophone-differential-sigma-delta", false},
		{"vibration-elliptic-differential-sigma-delta", true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			differentialExample(t, tc.name, tc.converted)
		})
	}
}

// differentialExample is TestDifferentialExampleAgainstNgspice for one
// example.
func differentialExample(t *testing.T, name string, converted bool) {
	spec, err := os.ReadFile(filepath.Join("..", "..", "testdata", "examples", name+".json"))
	require.NoError(t, err)
	code, out, errOut := runCLI(t, string(spec), "design", "-spec", "-")
	require.Equal(t, exitOK, code, errOut)
	var d struct {
		Sections []struct {
			Topology       string `json:"topology"`
			TopologyReason string `json:"topology_reason"`
		} `json:"sections"`
		Response struct {
			FreqHz     []float64 `json:"freq_hz"`
			RealizedDB []float64 `json:"realized_db"`
		} `json:"response"`
		MonteCarlo struct {
			CommonMode *synth.CommonModeReport `json:"common_mode"`
		} `json:"montecarlo"`
		Checks []synth.Check `json:"checks"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &d))
	require.NotEmpty(t, d.Sections)
	for _, s := range d.Sections {
		require.Equal(t, !converted, strings.HasPrefix(s.Topology, "fully-differential"), s.Topology)
	}
	if converted {
		require.Contains(t, d.Sections[len(d.Sections)-1].TopologyReason, "single-ended to differential conversion follows")
	}
	require.NotNil(t, d.MonteCarlo.CommonMode)
	ids := []string{}
	for _, c := range d.Checks {
		ids = append(ids, c.ID)
	}
	require.Contains(t, ids, synth.CheckCommonMode)

	code, deck, errOut := runCLI(t, string(spec), "export", "-spec", "-", "-as", "spice", "-trials", "0")
	require.Equal(t, exitOK, code, errOut)
	require.Contains(t, deck, "\nEout out 0 outp outn 1\n")
	require.Contains(t, deck, ".subckt pw_fda inp inn outp outn ref")
	if converted {
		require.Contains(t, deck, ".subckt pw_opamp ")
		require.Contains(t, deck, ", then its single-ended to differential conversion")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	freq, v, err := spicerun.RunAll(ctx, t.TempDir(), []byte(deck))
	require.NoError(t, err)

	s, err := synth.ParseSpecBytes(spec)
	require.NoError(t, err)
	s.MonteCarlo.Trials = 0
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
	worst, checked := 0.0, 0
	for i := range freq {
		if own[i] < -120 {
			continue
		}
		checked++
		worst = math.Max(worst, math.Abs(own[i]-20*math.Log10(cmplx.Abs(v[0][i]))))
	}
	t.Logf("%s: .ac vs realized over %d points: worst %.3g dB", name, checked, worst)
	require.Greater(t, checked, 100)
	require.Less(t, worst, 0.05)
}
