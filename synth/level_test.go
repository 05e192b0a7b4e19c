package synth_test

import (
	"context"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// TestComparedLevel: a design at synth.Compared carries exactly the
// figures of the full design that a comparison reads (as-built verdict,
// noise, step, Monte Carlo, slew needs) and none of the per-part figures
// or the board report, which it does not compute.
func TestComparedLevel(t *testing.T) {
	withBoard := func(s synth.Spec) synth.Spec {
		s.Supply = &synth.Supply{PositiveV: 5, ReferenceV: 2.5}
		s.OpAmp.OffsetV, s.OpAmp.BiasA = 1e-3, 50e-9
		return s
	}
	mc := func(s synth.Spec) synth.Spec { s.MonteCarlo.Trials = 200; return s }
	for _, tc := range []struct {
		name string
		spec synth.Spec
	}{
		{"elliptic lowpass", withOrder(baseSpec(synth.Lowpass, "elliptic"), 5, 0.5)},
		{"chebyshev2 highpass with Monte Carlo", mc(withOrder(baseSpec(synth.Highpass, "chebyshev2"), 4, 1))},
		{"butterworth on a supply", withBoard(withOrder(baseSpec(synth.Lowpass, "butterworth"), 6, 1))},
	} {
		t.Run(tc.name, func(t *testing.T) {
			full, err := synth.Synthesize(context.Background(), tc.spec)
			require.NoError(t, err)
			cmp, err := synth.SynthesizeTo(context.Background(), tc.spec, synth.Compared)
			require.NoError(t, err)
			require.Equal(t, full.Built, cmp.Built)
			require.Equal(t, full.Noise, cmp.Noise)
			require.Equal(t, full.Step, cmp.Step)
			require.Equal(t, full.MonteCarlo, cmp.MonteCarlo)
			require.Equal(t, full.Response, cmp.Response)
			require.Len(t, cmp.Sections, len(full.Sections))
			for i, sec := range cmp.Sections {
				require.Equal(t, full.Sections[i].OpAmpNeeds, sec.OpAmpNeeds, "section %d", i+1)
				require.Nil(t, sec.Sensitivities, "section %d", i+1)
				require.Nil(t, sec.Swing, "section %d", i+1)
				for _, c := range sec.Components {
					require.Equal(t, [2]*float64{}, c.FailAtPct, "%s", c.Ref)
				}
			}
			require.Nil(t, cmp.DC)
			require.NotEmpty(t, full.Sections[0].Sensitivities)
			if tc.spec.Supply != nil {
				require.NotNil(t, full.DC)
			}
		})
	}
}
