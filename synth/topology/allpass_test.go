package topology_test

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// allpassCases are all-pass sections over the range a delay equaliser
// uses: first order at three frequencies (both forms), second order from
// the double real pole (Q = 0.5) to Q = 7 (equalize.MaxQ).
func allpassCases() []struct {
	name string
	sec  section.Section
	top  string
} {
	var out []struct {
		name string
		sec  section.Section
		top  string
	}
	for _, f := range []float64{47, 1000, 12300} {
		for _, top := range []string{topology.Allpass, topology.AllpassInverted} {
			out = append(out, struct {
				name string
				sec  section.Section
				top  string
			}{fmt.Sprintf("%s/ap1-%g", top, f), section.FirstOrderAllpass(w(f)), top})
		}
	}
	for _, q := range []float64{0.5, 0.56, 0.7071, 2, 5, 7} {
		for _, f := range []float64{300, 5000} {
			out = append(out, struct {
				name string
				sec  section.Section
				top  string
			}{fmt.Sprintf("allpass/ap2-%g-q%g", f, q), section.SecondOrderAllpass(w(f), q), topology.Allpass})
		}
	}
	return out
}

// TestAllpassStagesClosedForm: with exact resistors each all-pass stage's
// nodal response (ideal op-amps) is the section's transfer function times
// its sign within 1e-9 relative at probe frequencies (the design equations
// of allpass.go are closed forms); with E96 resistors the first-order stage
// keeps |H| = 1 exactly (equal R1, R2) and the second-order stage within
// 0.02 dB (its summer ratio R5/R6 against the bandpass gain, chosen together), and f0 moves
// by at most the E96 step (2.4 %) and Q by at most 5 %.
func TestAllpassStagesClosedForm(t *testing.T) {
	t.Parallel()
	for _, tc := range allpassCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, section.Allpass, tc.sec.Kind())
			opt := topology.DefaultOptions()
			opt.Exact = true
			r, err := topology.Realize(tc.sec, tc.top, opt)
			require.NoError(t, err)
			require.Equal(t, tc.top == topology.AllpassInverted || tc.sec.Order() == 2, r.Inverting)
			require.Less(t, maxRelDiff(t, tc.sec, r, 1), 1e-9)

			r, err = topology.Realize(tc.sec, tc.top, topology.DefaultOptions())
			require.NoError(t, err)
			require.LessOrEqual(t, math.Abs(r.F0ErrPct), 2.4)
			require.LessOrEqual(t, math.Abs(r.QErrPct), 5.0)
			worst := 0.0
			defer func() { t.Logf("E96: f0 %+.3f %%, Q %+.3f %%, |H| within %.4f dB", r.F0ErrPct, r.QErrPct, worst) }()
			for _, f := range append(probe(tc.sec), tc.sec.OmegaRadPerSec()/(2*math.Pi)) {
				h, err := r.Stage.SolveAt(ideal, complex(0, w(f)))
				require.NoError(t, err)
				db := 20 * math.Log10(cmplx.Abs(h))
				worst = math.Max(worst, math.Abs(db))
				if tc.sec.Order() == 1 {
					require.InDelta(t, 0, db, 1e-9, "%g Hz", f)
				} else {
					require.InDelta(t, 0, db, 0.02, "%g Hz", f)
				}
			}
		})
	}
}

// TestAllpassRefusals: the all-pass stages build all-pass sections only,
// the inverted form is first order only, and an all-pass section cannot be
// asked of a filter topology.
func TestAllpassRefusals(t *testing.T) {
	t.Parallel()
	opt := topology.DefaultOptions()
	for _, tc := range []struct {
		name string
		sec  section.Section
		top  string
	}{
		{"lowpass as allpass", lp2(1000, 0.7071, 1), topology.Allpass},
		{"second order inverted", section.SecondOrderAllpass(w(1000), 1), topology.AllpassInverted},
		{"allpass as sallen-key", section.SecondOrderAllpass(w(1000), 1), topology.SallenKey},
	} {
		_, err := topology.Realize(tc.sec, tc.top, opt)
		require.ErrorIs(t, err, topology.ErrNoForm, tc.name)
	}
	// Far outside the windows: the limit, with numbers.
	_, err := topology.Realize(section.FirstOrderAllpass(w(1e-3)), topology.Allpass, opt)
	require.ErrorIs(t, err, topology.ErrLimits)
}

// TestAllpassStagesInNgspice: every all-pass stage of allpassCases, with
// exact values, written as a SPICE deck and simulated by ngspice with ideal
// op-amps, agrees with the section's transfer function (times the stage's
// sign) within 0.01 dB and 0.1°; with E96 values, with the nodal analysis
// of the stage as built (what the design's realized_db is made of) within
// 0.01 dB. The reference is ngspice (Debian package), reading the deck as
// written.
func TestAllpassStagesInNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, tc := range allpassCases() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			f0 := tc.sec.OmegaRadPerSec() / (2 * math.Pi)
			for _, exact := range []bool{true, false} {
				opt := topology.DefaultOptions()
				opt.Exact = exact
				r, err := topology.Realize(tc.sec, tc.top, opt)
				require.NoError(t, err)
				chain := circuit.Chain{Stages: []circuit.Stage{r.Stage}, Model: ideal}
				var deck bytes.Buffer
				require.NoError(t, chain.WriteSPICE(&deck, circuit.SpiceOptions{StartHz: f0 / 100, StopHz: f0 * 100, PointsPerDecade: 20}))
				freq, v, err := spicerun.Run(context.Background(), deck.Bytes())
				require.NoError(t, err)
				require.Len(t, freq, 81)
				sign := complex(1, 0)
				if r.Inverting {
					sign = -1
				}
				for i, f := range freq {
					s := complex(0, 2*math.Pi*f)
					want := sign * tc.sec.ZPK().At(s)
					if !exact {
						want, err = r.Stage.SolveAt(ideal, s)
						require.NoError(t, err)
					}
					dDB := 20 * math.Log10(cmplx.Abs(v[i])/cmplx.Abs(want))
					dDeg := cmplx.Phase(v[i]/want) * 180 / math.Pi
					require.LessOrEqual(t, math.Abs(dDB), 0.01, "exact %v, %g Hz: ngspice %v, want %v", exact, f, v[i], want)
					require.LessOrEqual(t, math.Abs(dDeg), 0.1, "exact %v, %g Hz: ngspice %v, want %v", exact, f, v[i], want)
				}
			}
		})
	}
}
