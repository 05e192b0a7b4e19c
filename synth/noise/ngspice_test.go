package noise_test

import (
	"bytes"
	"context"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/noise"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// spiceDBTol is the agreement required of the output noise density
// against ngspice (issue 5).
const spiceDBTol = 0.1

// TestNgspiceNoise writes each chain's deck with the op-amp noise sources
// (circuit.SpiceOptions.Noise: the spec's default densities at 300 K and
// 350 K, noiseless op-amps so that the resistors dominate, and a large
// current noise), runs
// ngspice's noise analysis over the deck's sweep, and compares
// onoise_spectrum (reference: ngspice 39, an independent SPICE3
// implementation reading the deck as written) with noise.Output's density
// at the simulator's frequencies. It also checks that the noise helpers do
// not change the AC response.
func TestNgspiceNoise(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	chains := []struct {
		name   string
		stages []circuit.Stage
	}{
		{"rc-buffer", []circuit.Stage{rcBuffer(rcR, rcC)}},
		{"sallen-key-lowpass", []circuit.Stage{sallenKeyLP(skR1, skR2, skC1, skC2)}},
		{"mfb-lowpass", []circuit.Stage{mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)}},
		{"butterworth-8th", butterworth8(1000, ideal).Stages},
		{"two-integrator-notch", []circuit.Stage{twoIntegratorNotch(t)}},
	}
	sources := []struct {
		name  string
		on    noise.OpAmpNoise
		tempK float64
	}{
		{"default-300K", noise.DefaultOpAmpNoise(), noise.DefaultTempK},
		{"default-350K", noise.DefaultOpAmpNoise(), 350},
		{"resistors-only", noise.OpAmpNoise{}, 0},
		{"current-heavy", noise.OpAmpNoise{VoltageVPerRtHz: 3e-9, CurrentAPerRtHz: 2e-10}, 0},
	}
	for _, ch := range chains {
		for _, md := range []struct {
			name  string
			model circuit.Model
		}{{"ideal", ideal}, {"single-pole-1MHz", singlePole}} {
			for _, src := range sources {
				t.Run(ch.name+"/"+md.name+"/"+src.name, func(t *testing.T) {
					t.Parallel()
					chain := circuit.Chain{Stages: ch.stages, Model: md.model}
					opt := circuit.SpiceOptions{PointsPerDecade: 20, StartHz: 1, StopHz: 1e6, Noise: &circuit.SpiceNoise{
						VoltageVPerRtHz: src.on.VoltageVPerRtHz, CurrentAPerRtHz: src.on.CurrentAPerRtHz, TempK: src.tempK, Analysis: true,
					}}
					var deck bytes.Buffer
					require.NoError(t, chain.WriteSPICE(&deck, opt))
					ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
					defer cancel()
					dir := t.TempDir()
					freqAC, vAC, err := spicerun.RunDir(ctx, dir, deck.Bytes())
					require.NoError(t, err)
					h, err := chain.Response(nil, freqAC)
					require.NoError(t, err)
					for i := range h {
						require.InDelta(t, 0, 20*math.Log10(abs(vAC[i])/abs(h[i])), 0.01, "AC response at %v Hz with the noise helpers", freqAC[i])
					}
					f, err := os.Open(filepath.Join(dir, circuit.DefaultNoiseDataFile))
					require.NoError(t, err)
					defer f.Close()
					freq, vecs, err := spicerun.ReadData(f)
					require.NoError(t, err)
					require.Len(t, freq, 121)
					res, err := noise.Output(chain, src.on, src.tempK, freq, [2]float64{freq[0], freq[len(freq)-1]})
					require.NoError(t, err)
					var worst float64
					for i, fr := range freq {
						ng := real(vecs[0][i])
						d := 20 * math.Log10(res.OutputVPerRtHz[i]/ng)
						require.LessOrEqual(t, math.Abs(d), spiceDBTol, "at %v Hz: ngspice %v V/√Hz, noise.Output %v", fr, ng, res.OutputVPerRtHz[i])
						worst = math.Max(worst, math.Abs(d))
					}
					t.Logf("%d points %.3g..%.3g Hz: worst |Δ| %.3g dB; %.4g µV rms, top %s %.3f", len(freq), freq[0], freq[len(freq)-1],
						worst, res.OutputRMSV*1e6, res.Contributors[0].Ref, res.Contributors[0].Share)
				})
			}
		}
	}
}

func abs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// twoIntegratorNotch is the three-op-amp notch stage (package topology's
// two-integrator-notch) of a lowpass-notch section, f0 1 kHz, Q 2, zeros
// at 3 kHz, DC gain 1, with E96/E12 parts.
func twoIntegratorNotch(t *testing.T) circuit.Stage {
	t.Helper()
	w0, wz := 2*math.Pi*1000, 2*math.Pi*3000
	p := complex(-w0/4, w0*math.Sqrt(1-1.0/16))
	sec := section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Zeros: []complex128{complex(0, wz), complex(0, -wz)}, Gain: w0 * w0 / (wz * wz)}
	r, err := topology.Realize(sec, topology.TwoIntegratorNotch, topology.DefaultOptions())
	require.NoError(t, err)
	return r.Stage
}
