package circuit_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// mfbLowpassClosed is the multiple-feedback lowpass with an ideal op-amp,
// hand-derived from the node equations with V(−) = 0 (as in
// TestClosedForms): H = −(R2/R1)/(1 + sC2(R2 + R3 + R2R3/R1) + s²R2R3C1C2).
func mfbLowpassClosed(s complex128) complex128 {
	b := mfC2 * (mfR2 + mfR3 + mfR2*mfR3/mfR1)
	return complex(-mfR2/mfR1, 0) / (1 + s*complex(b, 0) + s*s*complex(mfR2*mfR3*mfC1*mfC2, 0))
}

// TestFullyDifferentialMFB checks the fully differential multiple-feedback
// lowpass (two matched halves around one FDA) against the closed form of
// the single-ended section (ideal op-amps: the bisection theorem makes
// each half the single-ended circuit) and against the single-ended stage
// with the single-pole model, for a differential and a single-ended
// input, by the direct solve and by the rational form.
func TestFullyDifferentialMFB(t *testing.T) {
	t.Parallel()
	se := mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)
	ideal := circuit.Model{Ideal: true}
	pole := circuit.Model{GBWHz: 1e5, DCGainDB: 80}
	w0 := 1 / math.Sqrt(mfR2*mfR3*mfC1*mfC2)
	for _, diffIn := range []bool{true, false} {
		fd, err := se.ToFullyDifferential(diffIn)
		require.NoError(t, err)
		if !diffIn {
			fd2, err := se.ToFullyDifferential(true)
			require.NoError(t, err)
			require.Equal(t, fd, fd2.SingleEndedInput())
		}
		require.Len(t, fd.Parts, 10)
		require.True(t, fd.Differential())
		for _, m := range []circuit.Model{ideal, pole} {
			rd, err := fd.TransferFunction(m)
			require.NoError(t, err)
			rs, err := se.TransferFunction(m)
			require.NoError(t, err)
			// The common-mode poles cancel: the section's order remains.
			require.Len(t, rd.Den, len(rs.Den), "diffIn %v ideal %v", diffIn, m.Ideal)
			for _, k := range ratios() {
				s := complex(0, k*w0)
				got, err := fd.SolveAt(m, s)
				require.NoError(t, err)
				want, err := se.SolveAt(m, s)
				require.NoError(t, err)
				require.Less(t, relErr(got, want), 1e-9, "solve diffIn %v ideal %v at %g·w0", diffIn, m.Ideal, k)
				require.Less(t, relErr(rd.At(s), want), 1e-9, "rational diffIn %v ideal %v at %g·w0", diffIn, m.Ideal, k)
				if m.Ideal {
					require.Less(t, relErr(got, mfbLowpassClosed(s)), 1e-12)
				}
			}
		}
	}
}

// TestFullyDifferentialMismatch: a single-ended-input stage whose half B
// input resistor is 1 % high, at DC with the ideal FDA (capacitors open).
// Closed form from the node equations: both FDA inputs sit at the same
// Vx (V(n1) = V(n2) in each half at DC), the outputs at ±d/2, and
//
//	(1 − Vx)/R1 = (Vx − d/2)/R2,  (0 − Vx)/R1B = (Vx + d/2)/R2,
//
// so Vx = (R2/R1)/(2 + R2/R1 + R2/R1B) and d = −R2/R1 + Vx·(R2/R1 − R2/R1B):
// the mismatch moves the gain by Vx·(R2/R1 − R2/R1B).
func TestFullyDifferentialMismatch(t *testing.T) {
	t.Parallel()
	se := mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)
	fd, err := se.ToFullyDifferential(false)
	require.NoError(t, err)
	r1b := mfR1 * 1.01
	for i := range fd.Parts {
		if fd.Parts[i].Ref == "R1B" {
			fd.Parts[i].Value = r1b
		}
	}
	from, per, err := fd.DCNodeTransfers(circuit.Model{Ideal: true}, nil, []string{fd.Out, fd.OutN, circuit.DiffOut})
	require.NoError(t, err)
	require.Len(t, per, 3)
	vx := (mfR2 / mfR1) / (2 + mfR2/mfR1 + mfR2/r1b)
	d := -mfR2/mfR1 + vx*(mfR2/mfR1-mfR2/r1b)
	require.InDelta(t, d, from[2], 1e-12)
	require.InDelta(t, d/2, from[0], 1e-12)
	require.InDelta(t, -d/2, from[1], 1e-12)
	// The rational form keeps the mismatched stage's poles (nothing
	// cancels) and agrees with the direct solve.
	m := circuit.Model{Ideal: true}
	r, err := fd.TransferFunction(m)
	require.NoError(t, err)
	require.Greater(t, len(r.Den), 3)
	w0 := 1 / math.Sqrt(mfR2*mfR3*mfC1*mfC2)
	for _, k := range ratios() {
		s := complex(0, k*w0)
		want, err := fd.SolveAt(m, s)
		require.NoError(t, err)
		require.Less(t, relErr(r.At(s), want), 1e-9)
	}
}

// TestInputModes: the differential and common-mode drives of a matched
// stage give the section's transfer and zero; with half B's input
// resistor 1 % high the common-mode drive reaches the output as, at DC
// (closed form from the node equations with the outputs at ±d/2 and the
// FDA inputs at a common Vx: (1 − Vx)/R1 = (Vx − d/2)/R2 and
// (1 − Vx)/R1B = (Vx + d/2)/R2), d = R2·(1/R1B − 1/R1)·(1 − Vx) with
// Vx = (R2/R1 + R2/R1B)/(2 + R2/R1 + R2/R1B).
func TestInputModes(t *testing.T) {
	t.Parallel()
	se := mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2)
	fd, err := se.ToFullyDifferential(true)
	require.NoError(t, err)
	m := circuit.Model{Ideal: true}
	for _, st := range []circuit.Stage{fd, fd.SingleEndedInput(), fd.CrossOutputs()} {
		diff, common, err := st.InputModes()
		require.NoError(t, err)
		require.True(t, diff.DiffIn)
		d, err := diff.SolveAt(m, 0)
		require.NoError(t, err)
		c, err := common.SolveAt(m, 0)
		require.NoError(t, err)
		sign := 1.0
		if st.Out != fd.Out {
			sign = -1
		}
		require.InDelta(t, sign*-mfR2/mfR1, real(d), 1e-12)
		require.InDelta(t, 0, cmplx.Abs(c), 1e-12)
	}
	r1b := mfR1 * 1.01
	for i := range fd.Parts {
		if fd.Parts[i].Ref == "R1B" {
			fd.Parts[i].Value = r1b
		}
	}
	_, common, err := fd.SingleEndedInput().InputModes()
	require.NoError(t, err)
	c, err := common.SolveAt(m, 0)
	require.NoError(t, err)
	vx := (mfR2/mfR1 + mfR2/r1b) / (2 + mfR2/mfR1 + mfR2/r1b)
	want := mfR2 * (1/r1b - 1/mfR1) * (1 - vx)
	require.InDelta(t, want, real(c), 1e-12)
	_, _, err = se.InputModes()
	require.ErrorIs(t, err, circuit.ErrInvalid)
}

// TestLoopGainRefusesFDA: the broken-loop analysis is for single-ended
// op-amps; a fully differential one is refused, not misread.
func TestLoopGainRefusesFDA(t *testing.T) {
	t.Parallel()
	fd, err := mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2).ToFullyDifferential(true)
	require.NoError(t, err)
	_, err = fd.LoopGain(circuit.Model{GBWHz: 1e6, DCGainDB: 100}, 1, complex(0, 1e3))
	require.ErrorIs(t, err, circuit.ErrInvalid)
}
