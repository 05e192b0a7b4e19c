package schematic_test

import (
	"bytes"
	"encoding/xml"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/plotting/schematic"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
)

// TestDifferentialStage draws a fully differential MFB lowpass (both
// inputs driven, and converting a single-ended input) as its two halves:
// well-formed XML, every part's designator once, both halves' captions,
// and the terminals of each half.
func TestDifferentialStage(t *testing.T) {
	t.Parallel()
	se := circuittest.MFBLP(10e3, 10e3, 4.7e3, 47e-9, 2.2e-9)
	fd, err := se.ToFullyDifferential(true)
	require.NoError(t, err)
	for _, tc := range []struct {
		name  string
		st    circuit.Stage
		terms []string
	}{
		{"differential-input", fd, []string{">in+<", ">in−<", ">out+<", ">out−<"}},
		{"conversion", fd.SingleEndedInput(), []string{">in<", ">ref<", ">out+<", ">out−<"}},
		{"crossed", fd.CrossOutputs(), []string{">in+<", ">in−<", ">out+<", ">out−<"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var b bytes.Buffer
			require.NoError(t, schematic.Stage(&b, tc.st, schematic.Options{Title: "Stage 1"}))
			svg := b.String()
			dec := xml.NewDecoder(strings.NewReader(svg))
			for {
				_, err := dec.Token()
				if err != nil {
					require.Equal(t, "EOF", err.Error(), "well-formed XML")
					break
				}
			}
			for _, p := range tc.st.Parts {
				require.Equal(t, 1, strings.Count(svg, ">"+p.Ref+"<"), "%s drawn once", p.Ref)
			}
			require.Contains(t, svg, "half A: ")
			require.Contains(t, svg, "half B, the mirror: ")
			for _, term := range tc.terms {
				require.Contains(t, svg, term)
			}
		})
	}
	// The crossed stage's half A drives out−.
	var b bytes.Buffer
	require.NoError(t, schematic.Stage(&b, fd.CrossOutputs(), schematic.Options{}))
	require.Contains(t, b.String(), "half A: in+ to out−")
}

// TestConvertedStage draws a single-ended section followed by its
// conversion to differential (circuit.Stage.WithConversion): the
// section above the conversion's two halves, every part's designator
// once, the section's output labelled as the conversion's input, half
// B's input at the reference.
func TestConvertedStage(t *testing.T) {
	t.Parallel()
	se := circuittest.MFBLP(10e3, 10e3, 4.7e3, 47e-9, 2.2e-9)
	st, err := se.WithConversion(circuit.Part{Value: 10e3})
	require.NoError(t, err)
	for _, st := range []circuit.Stage{st, st.CrossOutputs()} {
		var b bytes.Buffer
		require.NoError(t, schematic.Stage(&b, st, schematic.Options{Title: "Stage 3"}))
		svg := b.String()
		dec := xml.NewDecoder(strings.NewReader(svg))
		for {
			_, err := dec.Token()
			if err != nil {
				require.Equal(t, "EOF", err.Error(), "well-formed XML")
				break
			}
		}
		for _, p := range st.Parts {
			require.Equal(t, 1, strings.Count(svg, ">"+p.Ref+"<"), "%s drawn once", p.Ref)
		}
		for _, u := range st.OpAmps {
			require.Contains(t, svg, ">"+u.Ref+"<")
		}
		for _, want := range []string{"single-ended section", ">to conversion<", "conversion to differential — half A: from section to ", ">from section<", "half B, the mirror: ref to ", ">out+<", ">out−<"} {
			require.Contains(t, svg, want)
		}
		require.Equal(t, 3, strings.Count(svg, `class="schematic-half"`))
	}
}
