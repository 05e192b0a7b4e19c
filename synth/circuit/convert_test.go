package circuit_test

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// TestWithConversion checks a single-ended stage followed by the
// single-ended to differential conversion (a unity-gain FDA inverter,
// half B's input on the reference) against closed forms: the mixed
// stage's differential transfer is the Sallen-Key lowpass's
// (skLowpassSinglePole) times the conversion's, which by the bisection
// theorem is the half-circuit's inverting amplifier with equal resistors,
// −A/(A + 2) (−1 for ideal op-amps; A the model's single-pole gain) —
// by the direct solve and by the rational form of the whole nodal system
// (two kinds of op-amp in one stage, no half-circuit shortcut). Crossing
// the outputs flips the sign; SplitConversion gives the two parts back.
func TestWithConversion(t *testing.T) {
	t.Parallel()
	se := sallenKeyLP(skR1, skR2, skC1, skC2)
	mixed, err := se.WithConversion(circuit.Part{Value: 10e3, Exact: 10e3, Series: "E96", TolerancePct: 1})
	require.NoError(t, err)
	require.True(t, mixed.Differential())
	require.False(t, mixed.DiffIn)
	require.Len(t, mixed.OpAmps, 2)
	require.True(t, mixed.OpAmps[1].FullyDifferential())
	require.Len(t, mixed.Parts, len(se.Parts)+4)
	for _, p := range mixed.Parts[len(se.Parts):] {
		require.Equal(t, circuit.Resistor, p.Kind)
		require.Equal(t, 10e3, p.Value)
		require.NotEmpty(t, circuit.HalfOf(p.Ref), p.Ref)
	}
	w0 := 1 / math.Sqrt(skR1*skR2*skC1*skC2)
	for _, tc := range []struct {
		name  string
		model circuit.Model
	}{
		{"ideal", circuit.Model{Ideal: true}},
		{"single-pole", circuit.Model{GBWHz: 1e5, DCGainDB: 80}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			crossed := mixed.CrossOutputs()
			r, err := mixed.TransferFunction(tc.model)
			require.NoError(t, err)
			require.Equal(t, 2, r.SectionOrder)
			for _, x := range ratios() {
				s := complex(0, x*w0)
				conv := complex(-1, 0)
				if !tc.model.Ideal {
					a := gainOf(tc.model, s)
					conv = -a / (a + 2)
				}
				want := skLowpassSinglePole(tc.model, s) * conv
				if tc.model.Ideal {
					want = 1 / (1 + s*complex(skC2*(skR1+skR2), 0) + s*s*complex(skR1*skR2*skC1*skC2, 0)) * conv
				}
				got, err := mixed.SolveAt(tc.model, s)
				require.NoError(t, err)
				require.Less(t, relErr(got, want), 1e-9, "solve at %g·w0", x)
				require.Less(t, relErr(r.At(s), want), 1e-8, "rational at %g·w0", x)
				got, err = crossed.SolveAt(tc.model, s)
				require.NoError(t, err)
				require.Less(t, relErr(got, -want), 1e-9, "crossed at %g·w0", x)
			}
		})
	}
	// With the model's parasitics the section is still second order:
	// the conversion's halves hold no capacitor of the section's.
	par := circuit.Model{GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 5e-12, OutputResistanceOhm: 50}
	r, err := mixed.TransferFunction(par)
	require.NoError(t, err)
	require.Equal(t, 2, r.SectionOrder)
	for _, st := range []circuit.Stage{mixed, mixed.CrossOutputs()} {
		back, conv, ok := st.SplitConversion()
		require.True(t, ok)
		require.Equal(t, se.Out, back.Out)
		require.Equal(t, se.Parts, back.Parts)
		require.Equal(t, se.OpAmps, back.OpAmps)
		require.Len(t, conv.OpAmps, 1)
		require.Equal(t, st.Out, conv.Out)
		require.Equal(t, st.OutN, conv.OutN)
		// The conversion alone: the form ToFullyDifferential builds for a
		// single-ended input, so its input modes are found.
		_, _, err := conv.InputModes()
		require.NoError(t, err)
	}
	// Neither a single-ended stage nor a one-FDA stage splits.
	_, _, ok := se.SplitConversion()
	require.False(t, ok)
	fd, err := se.WithConversion(circuit.Part{Value: 1e3})
	require.NoError(t, err)
	_, conv, _ := fd.SplitConversion()
	_, _, ok = conv.SplitConversion()
	require.False(t, ok)
	// A differential stage is not converted again.
	_, err = fd.WithConversion(circuit.Part{Value: 1e3})
	require.ErrorIs(t, err, circuit.ErrInvalid)
}

// TestConversionCommonMode: the conversion's common-mode to
// differential transfer with mismatched halves against the closed form
// from its node equations (ideal FDA: both inputs at Vx, outputs summing
// to zero; ka = RfA/RinA, kb = RfB/RinB): a common-mode input Vc gives
// Vod = −2·Vc·(ka − kb)/(2 + ka + kb), and a differential one (In at
// +½, half B's input at −½) Vod = −(ka + kb + 2·ka·kb)/(2 + ka + kb)
// (−1 when matched at unity).
func TestConversionCommonMode(t *testing.T) {
	t.Parallel()
	mixed, err := sallenKeyLP(skR1, skR2, skC1, skC2).WithConversion(circuit.Part{Value: 10e3})
	require.NoError(t, err)
	_, conv, ok := mixed.SplitConversion()
	require.True(t, ok)
	// Mismatch: R?A input +1 %, half B feedback −0.5 %.
	var rinA, rfA, rinB, rfB float64
	for i := range conv.Parts {
		p := &conv.Parts[i]
		switch {
		case p.A == circuit.In || p.B == circuit.In:
			p.Value *= 1.01
			rinA = p.Value
		case circuit.HalfOf(p.Ref) == circuit.HalfA:
			rfA = p.Value
		case p.A == circuit.Ground || p.B == circuit.Ground:
			rinB = p.Value
		default:
			p.Value *= 0.995
			rfB = p.Value
		}
	}
	require.NotZero(t, rinA*rfA*rinB*rfB)
	ka, kb := rfA/rinA, rfB/rinB
	dm, cm, err := conv.InputModes()
	require.NoError(t, err)
	ideal := circuit.Model{Ideal: true}
	hc, err := cm.SolveAt(ideal, 0)
	require.NoError(t, err)
	hd, err := dm.SolveAt(ideal, 0)
	require.NoError(t, err)
	require.InEpsilon(t, -2*(ka-kb)/(2+ka+kb), real(hc), 1e-9)
	require.InEpsilon(t, -(ka+kb+2*ka*kb)/(2+ka+kb), real(hd), 1e-9)
}
