package circuit_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// follower is a unity-gain buffer: the plainest stage a driver can hang on.
func follower() circuit.Stage {
	return circuit.Stage{Topology: "buffer", OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: circuit.In, Minus: "out", Out: "out"}}, Out: "out"}
}

func driverParts(r, c float64) (circuit.Part, circuit.Part) {
	return circuit.Part{Value: r, Exact: r, Series: "E96", TolerancePct: 1},
		circuit.Part{Value: c, Exact: c, Series: "E12", TolerancePct: 5}
}

func TestWithDriver(t *testing.T) {
	t.Parallel()
	st := circuit.Stage{Topology: "rc-buffer", Parts: []circuit.Part{
		{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "x", Value: 1e3, Exact: 1e3},
		{Ref: "C1", Kind: circuit.Capacitor, A: "x", B: circuit.Ground, Value: 1e-9, Exact: 1e-9},
	}, OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "x", Minus: "out", Out: "out"}}, Out: "out"}
	r, c := driverParts(49.9, 2.2e-9)
	d := st.WithDriver(r, c)
	require.NoError(t, d.Validate())
	require.True(t, d.HasDriver())
	require.False(t, st.HasDriver())
	require.Equal(t, circuit.DriverNode, d.Out)
	require.Equal(t, circuit.Part{Ref: "R2", Kind: circuit.Resistor, A: "out", B: circuit.DriverNode, Value: 49.9, Exact: 49.9, Series: "E96", TolerancePct: 1, Driver: true}, d.Parts[2])
	require.Equal(t, circuit.Part{Ref: "C2", Kind: circuit.Capacitor, A: circuit.DriverNode, B: circuit.Ground, Value: 2.2e-9, Exact: 2.2e-9, Series: "E12", TolerancePct: 5, Driver: true}, d.Parts[3])
	require.Equal(t, st, d.WithoutDriver())
	require.Len(t, st.Parts, 2, "the stage itself is left alone")

	// Only the last stage of a chain may carry the driver.
	m := circuit.Model{Ideal: true}
	require.NoError(t, circuit.Chain{Stages: []circuit.Stage{st, d}, Model: m}.Validate())
	require.ErrorIs(t, circuit.Chain{Stages: []circuit.Stage{d, st}, Model: m}.Validate(), circuit.ErrInvalid)
	// Without the driver's parts, an Out that is no op-amp output is
	// still refused.
	bad := st
	bad.Out = "x"
	require.ErrorIs(t, bad.Validate(), circuit.ErrInvalid)

	// The response through the driver is the stage's times the R–C's
	// divider 1/(1 + sRC), closed form (ideal op-amp).
	for _, f := range []float64{1e3, 1e5, 1e6, 1e7} {
		s := complex(0, 2*math.Pi*f)
		h0, err := st.SolveAt(m, s)
		require.NoError(t, err)
		h1, err := d.SolveAt(m, s)
		require.NoError(t, err)
		require.InDelta(t, 0, cmplx.Abs(h1-h0/(1+s*complex(49.9*2.2e-9, 0)))/cmplx.Abs(h1), 1e-12, "f %g", f)
	}
}

// TestLoopGainClosedForm checks the broken loop of a follower driving
// R–C through its output resistance Ro against the closed form
// L(s) = A(s)·(1 + sRC)/(1 + s(R + Ro)C), A(s) = A0/(1 + s·A0/ωt): the
// feedback is taken at the op-amp's pin, which divides the internal
// output by Ro against R + 1/(sC). The phase margin is checked against
// the same closed form's crossover, found here by bisection on |L| = 1.
func TestLoopGainClosedForm(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name                 string
		gbw, ro              float64
		r, c                 float64
		wantAbove, wantBelow float64
	}{
		{"no output resistance", 10e6, 0, 49.9, 2.2e-9, 89, 91},
		{"40 Ohm, 49.9 Ohm, 2.2 nF", 10e6, 40, 49.9, 2.2e-9, 45, 90},
		{"100 Ohm, 10 Ohm, 10 nF", 50e6, 100, 10, 10e-9, 45, 90},
		{"100 Ohm, 1 Ohm, 100 nF: too little R", 50e6, 100, 1, 100e-9, 0, 45},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			m := circuit.Model{GBWHz: tc.gbw, DCGainDB: 100, OutputResistanceOhm: tc.ro}
			r, c := driverParts(tc.r, tc.c)
			st := follower().WithDriver(r, c)
			a0 := math.Pow(10, 100.0/20)
			wt := 2 * math.Pi * tc.gbw
			closed := func(s complex128) complex128 {
				a := complex(a0, 0) / (1 + s*complex(a0/wt, 0))
				return a * (1 + s*complex(tc.r*tc.c, 0)) / (1 + s*complex((tc.r+tc.ro)*tc.c, 0))
			}
			for _, f := range []float64{10, 1e3, 1e5, 1e6, 1e7, 1e8} {
				s := complex(0, 2*math.Pi*f)
				got, err := st.LoopGain(m, 1, s)
				require.NoError(t, err)
				want := closed(s)
				require.InDelta(t, 0, cmplx.Abs(got-want)/cmplx.Abs(want), 1e-9, "f %g: got %v want %v", f, got, want)
			}
			// The closed form's crossover by bisection.
			lo, hi := 1.0, 1e12
			for hi/lo > 1+1e-12 {
				mid := math.Sqrt(lo * hi)
				if cmplx.Abs(closed(complex(0, 2*math.Pi*mid))) >= 1 {
					lo = mid
				} else {
					hi = mid
				}
			}
			wantPM := 180 + cmplx.Phase(closed(complex(0, 2*math.Pi*lo)))*180/math.Pi
			pm, fc, ok, err := st.PhaseMarginDeg(m, 1)
			require.NoError(t, err)
			require.True(t, ok)
			t.Logf("%s: phase margin %.4f° at %.5g Hz (closed form %.4f° at %.5g Hz)", tc.name, pm, fc, wantPM, lo)
			require.InDelta(t, wantPM, pm, 1e-6)
			require.InEpsilon(t, lo, fc, 1e-8)
			require.Greater(t, pm, tc.wantAbove)
			require.Less(t, pm, tc.wantBelow)
		})
	}
}

func TestLoopGainErrors(t *testing.T) {
	t.Parallel()
	st := follower()
	_, err := st.LoopGain(circuit.Model{Ideal: true}, 1, 1)
	require.ErrorIs(t, err, circuit.ErrInvalid)
	_, err = st.LoopGain(circuit.Model{GBWHz: 1e6, DCGainDB: 100}, 2, 1)
	require.ErrorIs(t, err, circuit.ErrInvalid)
	_, err = st.LoopGain(circuit.Model{GBWHz: 1e6, DCGainDB: 100}, 1, complex(math.NaN(), 0))
	require.ErrorIs(t, err, circuit.ErrInvalid)
}
