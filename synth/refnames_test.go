package synth_test

import (
	"context"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// designator matches a designator of any form in a sentence: a letter R,
// C or U and a number.
var designator = regexp.MustCompile(`\b[RCU][0-9]+\b`)

// TestReasonsNameChainWideParts checks that every part a stage's reason
// names is named as the schematic, the SPICE deck and the bill of
// materials name it: a designator of the design's own parts (R101, not
// R1), over designs that reach every stage form with ratios in its
// reason.
func TestReasonsNameChainWideParts(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ name, spec string }{
		{"sallen-key", `{"approximation": "chebyshev1", "passband_hz": 20000, "stopband_hz": 180000, "passband_ripple_db": 0.1, "stopband_atten_db": 110.12}`},
		{"multiple-feedback, odd order", `{"approximation": "butterworth", "passband_hz": 1000, "order": 5, "topology": "multiple-feedback"}`},
		{"multiple-feedback highpass", `{"response": "highpass", "approximation": "chebyshev1", "passband_hz": 1000, "order": 4, "topology": "multiple-feedback"}`},
		{"state-variable notches", `{"approximation": "elliptic", "passband_hz": 1000, "order": 6, "stopband_atten_db": 60, "topology": "state-variable"}`},
		{"one-amp-notch", `{"approximation": "elliptic", "passband_hz": 1000, "order": 4, "stopband_atten_db": 40, "topology": "one-amp-notch"}`},
		{"bandpass", `{"response": "bandpass", "approximation": "chebyshev1", "passband_hz": [2000, 40000], "stopband_hz": [400, 200000], "passband_ripple_db": 0.5, "stopband_atten_db": 45}`},
		{"delay equaliser", `{"approximation": "chebyshev1", "passband_hz": 1000, "order": 3, "passband_ripple_db": 0.5, "delay_equalizer": {"max_spread_pct": 20}}`},
		{"gain", `{"approximation": "butterworth", "passband_hz": 1000, "order": 4, "gain_db": 12}`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			spec, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), spec)
			require.NoError(t, err)
			var refs []string
			for _, s := range d.Sections {
				for _, c := range s.Components {
					refs = append(refs, c.Ref)
				}
				refs = append(refs, s.OpAmps...)
			}
			named := 0
			for i, s := range d.Sections {
				for _, ref := range designator.FindAllString(s.TopologyReason, -1) {
					require.Contains(t, refs, ref, "stage %d's reason names %s, which the BOM does not have: %s", i+1, ref, s.TopologyReason)
					named++
				}
			}
			t.Logf("%d designators named in the reasons", named)
		})
	}
}

// TestReasonsNameChainWidePartsSeen makes sure the check above has
// something to check: the Sallen-Key reasons name their capacitors.
func TestReasonsNameChainWidePartsSeen(t *testing.T) {
	t.Parallel()
	spec, err := synth.ParseSpecBytes([]byte(`{"approximation": "butterworth", "passband_hz": 1000, "order": 4, "topology": "sallen-key"}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), spec)
	require.NoError(t, err)
	for i, s := range d.Sections {
		got := designator.FindAllString(s.TopologyReason, -1)
		// Sallen-Key at unity gain: C1/C2 ≥ 4Q², so C101/C102 in stage 1.
		want := []string{"C" + string(rune('1'+i)) + "01", "C" + string(rune('1'+i)) + "02"}
		require.True(t, slices.Contains(got, want[0]) && slices.Contains(got, want[1]), "stage %d: %q", i+1, s.TopologyReason)
	}
}

// TestReasonsAsAsked checks that a reason says "as asked" only of a form
// the spec asked for: under auto none does, and when the spec asks for
// Sallen-Key its first-order stage (always an RC and a follower) does not
// claim to be asked for.
func TestReasonsAsAsked(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name, spec string
		asked      int // reasons that say "as asked"
	}{
		{"auto, odd order", `{"approximation": "butterworth", "passband_hz": 1000, "order": 5}`, 0},
		{"auto, highpass", `{"response": "highpass", "approximation": "chebyshev1", "passband_hz": 1000, "order": 5}`, 0},
		// Two second-order Sallen-Key stages and the first-order one.
		{"sallen-key asked", `{"approximation": "butterworth", "passband_hz": 1000, "order": 5, "topology": "sallen-key"}`, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			spec, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), spec)
			require.NoError(t, err)
			asked, first := 0, 0
			for _, s := range d.Sections {
				if strings.Contains(s.TopologyReason, "as asked") {
					asked++
				}
				if s.Order == 1 {
					first++
					require.True(t, strings.HasPrefix(s.TopologyReason, "first-order section, built as rc-buffer: "), s.TopologyReason)
				}
			}
			require.Equal(t, tc.asked, asked)
			require.Equal(t, 1, first, "the odd order's first-order stage")
		})
	}
}
