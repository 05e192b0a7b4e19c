package topology_test

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// TestFullyDifferential realises lowpass, highpass, bandpass and
// first-order sections fully differentially and checks, with ideal
// op-amps, that the stage's differential transfer is the section's
// (the section's zpk, a closed form) to the design's part rounding, that
// it equals the single-ended multiple-feedback (or inverting RC) stage's
// exactly, and that the halves carry the same values under A/B
// designators. Notch and all-pass sections are refused with ErrNoForm.
func TestFullyDifferential(t *testing.T) {
	t.Parallel()
	const w0 = 2 * math.Pi * 1000
	pair := func(q float64) []complex128 {
		re := -w0 / (2 * q)
		p := complex(re, math.Sqrt(w0*w0-re*re))
		return []complex128{p, cmplx.Conj(p)}
	}
	ideal := circuit.Model{Ideal: true}
	for _, tc := range []struct {
		name string
		sec  section.Section
		se   string
	}{
		{"lowpass", section.Section{Poles: pair(0.707), Gain: w0 * w0}, topology.MultipleFeedback},
		{"highpass", section.Section{Poles: pair(0.9), Zeros: []complex128{0, 0}, Gain: 1}, topology.MultipleFeedback},
		{"bandpass", section.Section{Poles: pair(3), Zeros: []complex128{0}, Gain: 2 * w0 / 3}, topology.MultipleFeedback},
		{"first-order-lowpass", section.Section{Poles: []complex128{complex(-w0, 0)}, Gain: 2 * w0}, topology.InvertingRC},
		{"first-order-highpass", section.Section{Poles: []complex128{complex(-w0, 0)}, Zeros: []complex128{0}, Gain: 1}, topology.InvertingRC},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			r, err := topology.Realize(tc.sec, topology.FullyDifferential, topology.DefaultOptions())
			require.NoError(t, err)
			st := r.Stage
			require.True(t, st.Differential())
			require.True(t, st.DiffIn)
			require.Len(t, st.OpAmps, 1)
			require.True(t, st.OpAmps[0].FullyDifferential())
			values := map[string]float64{}
			for _, p := range st.Parts {
				half := circuit.HalfOf(p.Ref)
				require.Contains(t, []string{circuit.HalfA, circuit.HalfB}, half)
				base := p.Ref[:len(p.Ref)-1]
				if v, ok := values[base]; ok {
					require.Equal(t, v, p.Value, "%s: both halves the same value", p.Ref)
				}
				values[base] = p.Value
			}
			single, err := topology.Realize(tc.sec, tc.se, topology.DefaultOptions())
			require.NoError(t, err)
			z := tc.sec.ZPK()
			for _, k := range []float64{0.1, 0.5, 1, 2, 10} {
				s := complex(0, k*w0)
				got, err := st.SolveAt(ideal, s)
				require.NoError(t, err)
				se, err := single.Stage.SolveAt(ideal, s)
				require.NoError(t, err)
				if r.Stage.Parts[0].Series == single.Stage.Parts[0].Series && len(single.Stage.OpAmps) == 1 && single.Stage.OpAmps[0].Plus == circuit.Ground {
					require.Less(t, cmplx.Abs(got-se)/cmplx.Abs(se), 1e-9)
				}
				want := z.At(s)
				if r.Inverting {
					want = -want
				}
				require.Less(t, cmplx.Abs(got-want)/cmplx.Abs(want), 0.05, "at %g·w0: %v vs section %v", k, got, want)
			}
		})
	}
	notch := section.Section{Poles: pair(2), Zeros: []complex128{complex(0, 2*w0), complex(0, -2*w0)}, Gain: 0.25}
	_, err := topology.Realize(notch, topology.FullyDifferential, topology.DefaultOptions())
	require.ErrorIs(t, err, topology.ErrNoForm)
}
