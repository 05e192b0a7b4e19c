package topology_test

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/topology"
)

// TestNotchZerosUnderTolerance is a Monte Carlo over part tolerances (1 %
// resistors, 5 % capacitors, uniform; seeded) of one section built both
// ways: the far-zero lowpass-notch of the studio anti-alias filter (f0
// 17.2 kHz, Q 0.86, zeros at 176 kHz). The zeros are read off each
// perturbed stage's own transfer function (circuit.Stage.TransferFunction,
// ideal op-amps: the nodal analysis, which knows nothing of the design
// equations). The two-integrator notch keeps them on the jω axis in every
// trial (their Q, |z|/(2·|Re z|), infinite: |Re z| below 1e-9·|z|, the
// analysis' rounding), because no part carries an s term into its
// numerator; the one-op-amp notch, which cancels that term by a resistor
// ratio, leaves them off the axis (finite Q) in almost every trial.
func TestNotchZerosUnderTolerance(t *testing.T) {
	t.Parallel()
	sec := notch2(17.2e3, 0.86, 176e3, 1)
	const trials = 300
	offAxis := func(st circuit.Stage) (worst float64, finiteQ int, qz []float64) {
		rng := rand.New(rand.NewPCG(1, 2))
		p := st
		p.Parts = slices.Clone(st.Parts)
		for range trials {
			for j, part := range st.Parts {
				tol := 0.01
				if part.Kind == circuit.Capacitor {
					tol = 0.05
				}
				p.Parts[j].Value = part.Value * (1 + tol*(2*rng.Float64()-1))
			}
			tf, err := p.TransferFunction(ideal)
			require.NoError(t, err)
			// The pair near the design's zeros (the rational form can
			// carry a spurious root far out, 1e15 times beyond them).
			var zs []complex128
			for _, z := range tf.Zeros() {
				if cmplx.Abs(z) < 1e3*w(176e3) {
					zs = append(zs, z)
				}
			}
			require.Len(t, zs, 2)
			for _, z := range zs {
				r := math.Abs(real(z)) / cmplx.Abs(z)
				worst = max(worst, r)
				if r > 1e-9 {
					finiteQ++
					qz = append(qz, 1/(2*r))
				}
			}
		}
		return worst, finiteQ, qz
	}
	tin, err := topology.Realize(sec, topology.TwoIntegratorNotch, topology.DefaultOptions())
	require.NoError(t, err)
	worst, n, _ := offAxis(tin.Stage)
	t.Logf("two-integrator-notch: largest |Re z|/|z| %.3g over %d trials", worst, trials)
	require.Zero(t, n, "zeros off the axis")

	one, err := topology.Realize(sec, topology.OneAmpNotch, topology.DefaultOptions())
	require.NoError(t, err)
	worst, n, qz := offAxis(one.Stage)
	slices.Sort(qz)
	t.Logf("one-amp-notch: largest |Re z|/|z| %.3g; %d of %d zeros off the axis, median zero Q %.3g", worst, n, 2*trials, qz[len(qz)/2])
	require.Greater(t, n, 2*trials*9/10)
	require.Greater(t, worst, 1e-4)
}
