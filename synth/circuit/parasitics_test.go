package circuit_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
)

// TestOutputResistanceDrivingCapacitance checks the op-amp parasitics
// against a closed form derived here from the single-pole model (not typed
// from a book): a unity follower whose op-amp, of gain A(s) = A0/(1 +
// s/ωa), ωa = ωt/A0, and open-loop output resistance Ro, drives a
// capacitance C from its output to ground. The amplifier's internal source
// A·(vin − vout) drives C through Ro, so vout = A·(vin − vout)/(1 + s·Ro·C)
// and
//
//	H(s) = A0 / ((1 + s·Ro·C)·(1 + s/ωa) + A0).
//
// The input capacitance at the + input is driven by the ideal source (no
// effect) and at the − input sits on the output node, in parallel with C:
// it adds to C.
func TestOutputResistanceDrivingCapacitance(t *testing.T) {
	t.Parallel()
	const cLoad = 1e-9
	st := circuit.Stage{
		Topology: "follower-load",
		Parts:    []circuit.Part{{Ref: "C1", Kind: circuit.Capacitor, A: "out", B: circuit.Ground, Value: cLoad}},
		OpAmps:   []circuit.OpAmp{{Ref: "U1", Plus: circuit.In, Minus: "out", Out: "out"}},
		Out:      "out",
	}
	for _, tc := range []struct {
		name       string
		roOhm, cin float64
	}{
		{"50 ohm", 50, 0},
		{"200 ohm and 5 pF", 200, 5e-12},
		{"none", 0, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			m := circuit.Model{GBWHz: 10e6, DCGainDB: 100, OutputResistanceOhm: tc.roOhm, InputCapacitanceFarad: tc.cin}
			a0 := math.Pow(10, m.DCGainDB/20)
			wa := 2 * math.Pi * m.GBWHz / a0
			c := cLoad + tc.cin
			tf, err := st.TransferFunction(m)
			require.NoError(t, err)
			for _, f := range []float64{1e3, 1e5, 1e6, 3e6, 1e7, 3e7} {
				s := complex(0, 2*math.Pi*f)
				want := complex(a0, 0) / ((1+s*complex(tc.roOhm*c, 0))*(1+s/complex(wa, 0)) + complex(a0, 0))
				got := tf.AtHz(f)
				require.Less(t, cmplx.Abs(got-want)/cmplx.Abs(want), 1e-9, "H at %g Hz: got %v, want %v", f, got, want)
				direct, err := st.SolveAt(m, s)
				require.NoError(t, err)
				require.Less(t, cmplx.Abs(direct-want)/cmplx.Abs(want), 1e-9, "nodal solve at %g Hz", f)
			}
		})
	}
}

// TestParasiticsLeaveThePartsAlone checks that the parasitic parts are the
// model's, not the stage's: the stage keeps its parts, WithParasitics
// appends them after, flagged, and a model without parasitics changes
// nothing.
func TestParasiticsLeaveThePartsAlone(t *testing.T) {
	t.Parallel()
	st := circuittest.SallenKeyLP(skR1, skR2, skC1, skC2)
	m := circuit.Model{GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 3e-12, OutputResistanceOhm: 50}
	aug := st.WithParasitics(m)
	require.Len(t, st.Parts, 4)
	require.Greater(t, len(aug.Parts), len(st.Parts))
	for i, p := range aug.Parts {
		require.Equal(t, i >= len(st.Parts), p.Parasitic, "part %d", i)
	}
	require.Equal(t, circuit.ParasiticNode("U1"), aug.OpAmps[0].Out)
	require.Equal(t, st.Out, aug.Out)
	plain := circuit.Model{GBWHz: 1e6, DCGainDB: 100}
	require.Equal(t, st, st.WithParasitics(plain))
	slopes, err := st.Slopes(m, 0)
	require.NoError(t, err)
	require.Len(t, slopes.DNum, len(st.Parts), "slopes for the stage's own parts only")
}

// TestModelRejectsBadParasitics checks the model's validation of the new
// fields.
func TestModelRejectsBadParasitics(t *testing.T) {
	t.Parallel()
	for _, m := range []circuit.Model{
		{Ideal: true, InputCapacitanceFarad: -1e-12},
		{Ideal: true, OutputResistanceOhm: math.Inf(1)},
		{Ideal: true, OffsetV: math.NaN()},
		{Ideal: true, BiasA: math.Inf(-1)},
	} {
		require.ErrorIs(t, m.Validate(), circuit.ErrInvalid, "%+v", m)
	}
}
