package synth

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// TestStageSpreadAgainstMonteCarlo: stageSpread, the first-order rms of
// |ΔH(s)| over a stage's parts, against the rms of H(s) − H0(s) over 3000
// boards drawn uniform within the tolerances (nodal analysis of each
// board): within 15 % for a one-op-amp lowpass-notch at its zero
// frequency (where H0 = 0) and a Sallen-Key lowpass at 2·f0.
func TestStageSpreadAgainstMonteCarlo(t *testing.T) {
	t.Parallel()
	w0, wz := 2*math.Pi*1000, 2*math.Pi*2000
	p := complex(-w0/6, w0*math.Sqrt(1-1/36.0))
	notch := section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Zeros: []complex128{complex(0, wz), complex(0, -wz)}, Gain: w0 * w0 / (wz * wz)}
	lp := section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Gain: w0 * w0}
	rng := rand.New(rand.NewPCG(5, 6))
	for _, tc := range []struct {
		sec section.Section
		top string
		s   complex128
	}{{notch, topology.OneAmpNotch, complex(0, wz)}, {lp, topology.SallenKey, complex(0, 2*w0)}} {
		r, err := topology.Realize(tc.sec, tc.top, topology.DefaultOptions())
		require.NoError(t, err)
		want, err := stageSpread(r.Stage, tc.s, 1, 5)
		require.NoError(t, err)
		h0, err := r.Stage.SolveAt(circuit.Model{Ideal: true}, tc.s)
		require.NoError(t, err)
		var sum float64
		const trials = 3000
		for range trials {
			st := r.Stage
			st.Parts = slices.Clone(st.Parts)
			for j := range st.Parts {
				tol := 0.01
				if st.Parts[j].Kind == circuit.Capacitor {
					tol = 0.05
				}
				st.Parts[j].Value *= 1 + tol*(2*rng.Float64()-1)
			}
			h, err := st.SolveAt(circuit.Model{Ideal: true}, tc.s)
			require.NoError(t, err)
			sum += math.Pow(cmplx.Abs(h-h0), 2)
		}
		got := math.Sqrt(sum / trials)
		t.Logf("%s: first order %.4g, Monte Carlo %.4g", tc.top, want, got)
		require.InEpsilon(t, want, got, 0.15)
	}
}

// TestKeepNotchesInMaskThreshold: the rule of keepNotchesInMask at its
// threshold, on the anti-alias example's section with zeros at 176 kHz
// inside its 100 dB stopband. The level is first order in the parts'
// errors, so with every tolerance t it is L1 + 20·log10(t/1 %), L1 its
// value at 1 % (read from the reason); the stage stays on one op-amp at
// 0.9 times the tolerance that puts the level at −100 dB and turns
// two-integrator-notch (three op-amps) at 1.1 times it. The part values do not depend on the
// spec's tolerances.
func TestKeepNotchesInMaskThreshold(t *testing.T) {
	t.Parallel()
	design := func(tolPct float64) *Design {
		s, err := ParseSpecBytes([]byte(fmt.Sprintf(`{"approximation": "elliptic", "passband_hz": 20000, "stopband_hz": 172000,
			"passband_ripple_db": 0.05, "stopband_atten_db": 100, "tolerance": {"resistor_pct": %g, "capacitor_pct": %g}}`, tolPct, tolPct)))
		require.NoError(t, err)
		d, err := Synthesize(context.Background(), s)
		require.NoError(t, err)
		return d
	}
	far := func(d *Design) Section {
		for _, sec := range d.Sections {
			if sec.ZeroHz != nil && *sec.ZeroHz > 172e3 {
				return sec
			}
		}
		t.Fatal("no section with zeros above 172 kHz")
		return Section{}
	}
	sec := far(design(1))
	require.Equal(t, topology.TwoIntegratorNotch, sec.Topology)
	i := strings.Index(sec.TopologyReason, "would leave about ")
	require.GreaterOrEqual(t, i, 0, sec.TopologyReason)
	var l1 float64
	_, err := fmt.Sscanf(sec.TopologyReason[i+len("would leave about "):], "%g dB", &l1)
	require.NoError(t, err)
	tStar := math.Pow(10, (-100-l1)/20) // percent
	t.Logf("level %.1f dB at 1 %% parts: −100 dB at %.3g %%", l1, tStar)
	require.Equal(t, topology.OneAmpNotch, far(design(0.9*tStar)).Topology)
	require.Equal(t, topology.TwoIntegratorNotch, far(design(1.1*tStar)).Topology)
}
