package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/noise"
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

// differentialLoading returns the two differential examples with 300 Ω on
// a 1 MHz op-amp and no Monte Carlo, with how far, at least, their
// unloaded stages stray from ngspice (see loadingCase): one of fully
// differential stages (taken by their half circuits), one of single-ended
// sections converted to differential by its last stage.
func differentialLoading(t *testing.T) []loadingCase {
	t.Helper()
	var cases []loadingCase
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
	return cases
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
	cases = append(cases, differentialLoading(t)...)
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

// TestSwingLoadingAgainstNgspice checks the swing's node gains as loaded:
// each node the swing lists has gain_max, its largest |V(node)/V(in)| on
// the design's grid, at peak_hz; ngspice's .ac of the exported deck at
// exactly that frequency (Debian's ngspice, the outside reference; 1 mHz
// for a node whose peak is at DC) must give the same within 1e-6
// relative. The chains are those of TestLoadingAgainstNgspice with rails
// added (±10 V, 2 Vpp), and its two differential examples; before the
// swing took the loading, the multiple-feedback highpass's nodes missed
// by 0.8–1.2 %. The geophone example's first stage turns the single-ended
// input differential: the swing takes the next stage's input as purely
// differential, leaving out the common mode that the first stage's
// outputs carry (through the op-amp's output resistance) and the
// common-mode current the next stage draws. Its nodes are allowed 1e-3
// of the input besides (the largest miss: 5e-4 at s2_mb, a node of gain
// 2.6e-4 that only the common mode drives; 5e-5 relative at the others).
func TestSwingLoadingAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	cases := append([]loadingCase(nil), loadingSpecs...)
	for i := range cases {
		var obj map[string]any
		require.NoError(t, json.Unmarshal([]byte(cases[i].spec), &obj))
		obj["supply"] = map[string]any{"positive_v": 10, "negative_v": -10, "reference_v": 0}
		obj["signal_vpp"] = 2
		b, err := json.Marshal(obj)
		require.NoError(t, err)
		cases[i].spec = string(b)
	}
	cases = append(cases, differentialLoading(t)...)
	commonMode := map[string]float64{"geophone-differential-sigma-delta, 300 Ω on 1 MHz": 1e-3}
	acLine := regexp.MustCompile(`(?m)^\.ac .*$`)
	control := regexp.MustCompile(`(?s)\.control\n.*\.endc\n`)
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errOut := runCLI(t, tc.spec, "design", "-spec", "-")
			require.Equal(t, exitOK, code, errOut)
			var d struct {
				Sections []struct {
					Swing *struct {
						Nodes []struct {
							Node    string  `json:"node"`
							GainMax float64 `json:"gain_max"`
							PeakHz  float64 `json:"peak_hz"`
						} `json:"nodes"`
					} `json:"swing"`
				} `json:"sections"`
			}
			require.NoError(t, json.Unmarshal([]byte(out), &d))
			code, deck, errOut := runCLI(t, tc.spec, "export", "-spec", "-", "-as", "spice")
			require.Equal(t, exitOK, code, errOut)
			// The nodes by the frequency of their peak.
			type node struct {
				name string
				gain float64
			}
			byFreq := map[float64][]node{}
			for _, sec := range d.Sections {
				require.NotNil(t, sec.Swing)
				for _, n := range sec.Swing.Nodes {
					f := n.PeakHz
					if f == 0 {
						f = 1e-6
					}
					byFreq[f] = append(byFreq[f], node{n.Node, n.GainMax})
				}
			}
			require.NotEmpty(t, byFreq)
			worst := 0.0
			for f, nodes := range byFreq {
				vecs := ""
				for _, n := range nodes {
					vecs += " v(" + n.name + ")"
				}
				dk := acLine.ReplaceAllString(deck, fmt.Sprintf(".ac lin 1 %.17g %.17g", f, f))
				dk = control.ReplaceAllString(dk, ".control\nset wr_singlescale\nset wr_vecnames\nset numdgt=15\nrun\nwrdata ac.data"+vecs+"\nquit\n.endc\n")
				ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
				freq, v, err := spicerun.RunAll(ctx, t.TempDir(), []byte(dk))
				cancel()
				require.NoError(t, err)
				require.Len(t, freq, 1)
				require.Len(t, v, len(nodes))
				for i, n := range nodes {
					sim := cmplx.Abs(v[i][0])
					e := math.Abs(n.gain/sim - 1)
					worst = math.Max(worst, e)
					assert.InDelta(t, sim, n.gain, 1e-6*sim+commonMode[tc.name], "%s at %.6g Hz", n.name, f)
				}
			}
			t.Logf("%s: %d peak frequencies, worst relative difference %.2g", tc.name, len(byFreq), worst)
		})
	}
}

// TestNoiseLoadingAgainstNgspice compares the output noise density of
// each chain of TestLoadingAgainstNgspice with ngspice's .noise of the
// exported deck (Debian's ngspice, the outside reference), within
// 0.015 dB everywhere on its grid. The design's noise takes each stage's
// output as loaded by the stages after it: its own sources and its input
// reach the port through the same factor 1/(1 + Zout·YL) (Thévenin).
// Left out: the next stage's noise currents through this stage's output
// impedance, which leaves 0.010 dB in two chains. Before the loading was
// taken, the multiple-feedback highpass missed by 0.052 dB.
func TestNoiseLoadingAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, tc := range loadingSpecs {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, deck, errOut := runCLI(t, tc.spec, "export", "-spec", "-", "-as", "spice")
			require.Equal(t, exitOK, code, errOut)
			freq, density := ngspiceNoise(t, deck)
			s, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			ch, err := d.Chain()
			require.NoError(t, err)
			// The spec's op-amp noise is the default (INTERFACE.md: 10 nV/√Hz, 1 pA/√Hz).
			on := noise.OpAmpNoise{VoltageVPerRtHz: 10e-9, CurrentAPerRtHz: 1e-12}
			ours, err := noise.Output(ch, on, 300, freq, [2]float64{freq[0], freq[len(freq)-1]})
			require.NoError(t, err)
			worst, at := 0.0, 0.0
			for i, fr := range freq {
				e := math.Abs(20*math.Log10(ours.OutputVPerRtHz[i]) - 20*math.Log10(density[i]))
				if e > worst {
					worst, at = e, fr
				}
			}
			t.Logf("%s: worst %.4f dB at %.4g Hz over %d points", tc.name, worst, at, len(freq))
			require.Less(t, worst, 0.015)
		})
	}
}

// ellipticNotches is an ordinary board of our own where the loading moves
// the step: an order-8 elliptic on one-op-amp notch stages, 50 Ω on a
// 10 MHz op-amp, ±15 V, 3 Vpp. With the stages unloaded its output's step
// minimum read −1.592 V; ngspice gives −1.427 V with a 20 ns step
// (−1.424 V with 1 ns); loaded to first order it reads −1.424 V. (Its
// inner stage outputs jump at the step's edge through the op-amps'
// output resistance; the deck's edge, 1.1 ns, rounds that jump off, so
// only out, which does not jump, is compared.)
var ellipticNotches = loadingCase{name: "elliptic on one-op-amp notches, 10 MHz, 50 Ω", spec: `{"approximation": "elliptic", "order": 8,
  "passband_hz": 10000, "passband_ripple_db": 1, "stopband_atten_db": 60, "supply": {"positive_v": 15, "negative_v": -15, "reference_v": 0},
  "signal_vpp": 3, "opamp": {"gbw_hz": 10e6, "input_capacitance_farad": 3e-12, "output_resistance_ohm": 50}}`}

// TestStepLoadingAgainstNgspice compares the swing's step extremes at the
// output (step_v of out: the full-scale step, 2 Vpp on ±10 V) with
// ngspice's .tran of the exported deck run with a 20 ns maximum step
// (Debian's ngspice, the outside reference; the deck has every stage
// loading the one before). The design's step takes each single-ended
// stage as loaded by the next stage's input to first order
// (circuit.Loading.FirstOrder): within 0.1 % of signal_vpp in three
// chains, 0.2 % in ellipticNotches (ngspice's 20 ns step itself moves
// that one by 0.1 %). The multiple-feedback highpass of 200 Ω on 1 MHz is the
// extreme: at the step's edge its stages' input capacitors tie each
// input to its own op-amp's output, so the next stage's input admittance
// depends on how the stage after it loads that output, which first
// order leaves out. It is allowed 0.35 of signal_vpp, carries the
// step-model check (which the others must not), and reads
// [−1.51, 5.24] V against ngspice's [−0.92, 4.96] V; with the stages
// unloaded it read [−4.87, 9.38] V.
func TestStepLoadingAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	tolVpp := map[string]float64{"multiple-feedback highpass, 1 MHz": 0.35, ellipticNotches.name: 0.002}
	cases := append(slices.Clone(loadingSpecs), ellipticNotches)
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var obj map[string]any
			require.NoError(t, json.Unmarshal([]byte(tc.spec), &obj))
			if obj["supply"] == nil {
				obj["supply"] = map[string]any{"positive_v": 10, "negative_v": -10, "reference_v": 0}
				obj["signal_vpp"] = 2
			}
			b, err := json.Marshal(obj)
			require.NoError(t, err)
			spec := string(b)
			code, out, errOut := runCLI(t, spec, "design", "-spec", "-")
			require.Equal(t, exitOK, code, errOut)
			var d boardDesign
			require.NoError(t, json.Unmarshal([]byte(out), &d))
			code, deck, errOut := runCLI(t, spec, "export", "-spec", "-", "-as", "spice")
			require.Equal(t, exitOK, code, errOut)
			lo, hi := fineTranExtremes(t, deck)
			last := d.Sections[len(d.Sections)-1].Swing.Nodes
			n := last[len(last)-1]
			require.Equal(t, "out", n.Node)
			require.NotNil(t, n.StepV)
			frac, ok := tolVpp[tc.name]
			if !ok {
				frac = 0.001
			}
			// The design says where its step may be off: the step-model
			// check is there for the loose case and only there.
			flagged := false
			for _, c := range d.Checks {
				flagged = flagged || c.ID == "step-model"
			}
			require.Equal(t, frac > 0.01, flagged, "the step-model check")
			tol := frac * d.Spec.SignalVppV()
			t.Logf("%s: step extremes ngspice (20 ns) [%.5f, %.5f] V, design [%.5f, %.5f] V", tc.name, lo, hi, n.StepV[0], n.StepV[1])
			require.InDelta(t, lo, n.StepV[0], tol)
			require.InDelta(t, hi, n.StepV[1], tol)
		})
	}
}
