package step_test

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/step"
)

// The circuits of the simulator check: package circuittest's stages.
var (
	ckRCBuffer     = circuittest.RCBuffer
	ckSallenKey    = circuittest.SallenKeyLP
	ckMFB          = circuittest.MFBLP
	ckButterworth8 = circuittest.Butterworth8
)

// stepFSTol is the agreement required of the step response against
// ngspice (issue 5): 0.1 % of full scale.
const stepFSTol = 1e-3

// TestNgspiceTransient writes each chain's deck with a transient analysis
// (circuit.SpiceOptions.Transient: a unit step rising in StepS/1000, which
// delays the response by about StepS/2000 and changes it by less than
// 1e-5 of full scale here), runs ngspice's transient analysis over
// step.Span, and compares v(out) (reference: ngspice 39's time-domain
// integration of the deck as written) at the simulator's time points with
// step.Response of the as-built chain (step.FromRational of each stage's
// circuit.Stage.TransferFunction). Full scale is the largest |y|. It also
// checks Measure's figures against the simulated waveform sampled by
// Analyze.
func TestNgspiceTransient(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	chains := []struct {
		name   string
		stages []circuit.Stage
	}{
		{"rc-buffer", []circuit.Stage{ckRCBuffer(10e3, 10e-9)}},
		{"sallen-key-lowpass", []circuit.Stage{ckSallenKey(10e3, 22e3, 22e-9, 10e-9)}},
		{"mfb-lowpass", []circuit.Stage{ckMFB(10e3, 10e3, 4.7e3, 47e-9, 2.2e-9)}},
		{"butterworth-8th", ckButterworth8(1000)},
	}
	for _, ch := range chains {
		for _, md := range []struct {
			name  string
			model circuit.Model
		}{{"ideal", circuit.Model{Ideal: true}}, {"single-pole-1MHz", circuit.Model{GBWHz: 1e6, DCGainDB: 100}}} {
			t.Run(ch.name+"/"+md.name, func(t *testing.T) {
				t.Parallel()
				chain := circuit.Chain{Stages: ch.stages, Model: md.model}
				tfs, err := chain.TransferFunctions()
				require.NoError(t, err)
				stages := make([]step.Stage, len(tfs))
				for i, r := range tfs {
					stages[i] = step.FromRational(r)
				}
				span := step.Span(stages)
				opt := circuit.SpiceOptions{PointsPerDecade: 5, Transient: &circuit.SpiceTransient{StopS: span, StepS: span / 2000}}
				var deck bytes.Buffer
				require.NoError(t, chain.WriteSPICE(&deck, opt))
				ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
				defer cancel()
				dir := t.TempDir()
				_, _, err = spicerun.RunDir(ctx, dir, deck.Bytes())
				require.NoError(t, err)
				f, err := os.Open(filepath.Join(dir, circuit.DefaultTranDataFile))
				require.NoError(t, err)
				defer f.Close()
				ts, vecs, err := spicerun.ReadData(f)
				require.NoError(t, err)
				require.GreaterOrEqual(t, len(ts), 2001)
				require.InDelta(t, span, ts[len(ts)-1], 1e-9*span)
				y, err := step.Response(stages, ts)
				require.NoError(t, err)
				fs := 0.0
				for _, v := range y {
					fs = math.Max(fs, math.Abs(v))
				}
				var worst float64
				ng := make([]float64, len(ts))
				for i := range ts {
					ng[i] = real(vecs[0][i])
					d := math.Abs(ng[i]-y[i]) / fs
					require.LessOrEqual(t, d, stepFSTol, "at %v s: ngspice %v, step.Response %v", ts[i], ng[i], y[i])
					worst = math.Max(worst, d)
				}
				fig, err := step.Measure(stages, step.Band{Frac: 1e-3})
				require.NoError(t, err)
				sim := step.Analyze(ts, ng, step.Band{Frac: 1e-3})
				t.Logf("%d points over %.4g ms: worst |Δ| %.2g of full scale; overshoot %.4g %% (ngspice %.4g %%), rise %.4g µs (%.4g µs)",
					len(ts), span*1e3, worst, fig.OvershootPct, sim.OvershootPct, fig.RiseTimeS*1e6, sim.RiseTimeS*1e6)
				require.InDelta(t, fig.OvershootPct, sim.OvershootPct, 100*stepFSTol)
				require.InDelta(t, fig.RiseTimeS, sim.RiseTimeS, 1e-3*span)
			})
		}
	}
}
