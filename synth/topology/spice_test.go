package topology_test

import (
	"bytes"
	"context"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/topology"
)

// TestStagesInNgspice: one stage of every topology and kind, with series
// values, written as a SPICE deck (circuit.Chain.WriteSPICE) and simulated
// by ngspice with ideal op-amps (VCVS of gain 1e12), agrees with the nodal
// analysis circuit.Stage.SolveAt within 0.01 dB and 0.1° (the export's
// simulator contract in package circuit; ngspice writes its AC data with
// limited precision). The reference is ngspice, an independent SPICE3
// implementation reading the deck as written.
func TestStagesInNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	picks := map[string]bool{
		"rc-buffer/lp1-g0.3": true, "rc-buffer/hp1-g4": true, "inverting-rc/lp1-g4": true, "inverting-rc/hp1-g0.3": true,
		"sallen-key/lp-q0.7071-g0.5": true, "sallen-key/lp-q1.3066-g2.5": true, "sallen-key/hp-q0.5412-g0.37": true, "sallen-key/hp-q1.3066-g3": true,
		"multiple-feedback/lp-q4-g0.8": true, "multiple-feedback/hp-q0.7071": true, "multiple-feedback/bp-q2-g12": true,
		"state-variable/lp-q25": true, "state-variable/hp-q3-g0.5": true, "state-variable/bp-q20-g3": true,
		"state-variable/lowpass-notch": true, "state-variable/highpass-notch": true, "state-variable/notch-q8-g1.5": true,
		"one-amp-notch/lowpass-notch-g1.2": true, "one-amp-notch/lowpass-notch-far": true, "one-amp-notch/highpass-notch-g0.8": true,
		"one-amp-notch/highpass-notch-g1.3": true, "one-amp-notch/notch-q3-g1.5": true, "one-amp-notch/notch-q0.7-g0.5": true,
		"two-integrator-notch/lowpass-notch-far": true, "two-integrator-notch/highpass-notch": true, "two-integrator-notch/notch-q30": true,
	}
	n := 0
	for _, tc := range cases() {
		if !picks[tc.name] {
			continue
		}
		n++
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r, err := topology.Realize(tc.sec, tc.top, topology.DefaultOptions())
			require.NoError(t, err)
			f0 := tc.sec.OmegaRadPerSec() / (2 * math.Pi)
			chain := circuit.Chain{Stages: []circuit.Stage{r.Stage}, Model: ideal}
			var deck bytes.Buffer
			require.NoError(t, chain.WriteSPICE(&deck, circuit.SpiceOptions{StartHz: f0 / 100, StopHz: f0 * 100, PointsPerDecade: 10}))
			freq, v, err := spicerun.Run(context.Background(), deck.Bytes())
			require.NoError(t, err)
			require.NotEmpty(t, freq)
			for i, f := range freq {
				want, err := r.Stage.SolveAt(ideal, complex(0, 2*math.Pi*f))
				require.NoError(t, err)
				if g := tc.sec.ReferenceGain(); cmplx.Abs(want) < 0.1*g {
					// Next to a notch zero the output is the difference of
					// branches that peak at about g·Q: an absolute bound of
					// 1e-4 of that (ngspice's precision with its 1e12-gain
					// op-amps).
					require.Less(t, cmplx.Abs(v[i]-want), 1e-4*g*(1+tc.sec.Q()), "%g Hz: ngspice %v, nodal %v", f, v[i], want)
					continue
				}
				dDB := 20 * math.Log10(cmplx.Abs(v[i])/cmplx.Abs(want))
				dDeg := cmplx.Phase(v[i]/want) * 180 / math.Pi
				require.LessOrEqual(t, math.Abs(dDB), 0.01, "%g Hz: ngspice %v, nodal %v", f, v[i], want)
				require.LessOrEqual(t, math.Abs(dDeg), 0.1, "%g Hz: ngspice %v, nodal %v", f, v[i], want)
			}
		})
	}
	require.Equal(t, len(picks), n, "every picked case exists")
}
