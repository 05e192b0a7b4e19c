package schematic

import (
	"bytes"
	"regexp"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestGroundLabel checks the label a single-supply board puts beside its
// ground symbols: filled text, not stroked with the wires (which blurs
// it), beside every ground symbol.
func TestGroundLabel(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		svg  func() []byte
	}{
		{"sallen-key", func() []byte {
			var b bytes.Buffer
			require.NoError(t, Stage(&b, sallenKeyLowpass(), Options{GroundLabel: "ref"}))
			return b.Bytes()
		}},
		{"state-variable notch", func() []byte {
			var b bytes.Buffer
			require.NoError(t, Stage(&b, stateVariable("out", true), Options{GroundLabel: "ref"}))
			return b.Bytes()
		}},
		{"one-amp-notch", func() []byte {
			var b bytes.Buffer
			require.NoError(t, Stage(&b, oneAmpNotch(true, true, true, false), Options{GroundLabel: "ref"}))
			return b.Bytes()
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			svg := tc.svg()
			labels := regexp.MustCompile(`<text class="label ground-label"[^>]*>ref</text>`).FindAll(svg, -1)
			require.NotEmpty(t, labels)
			for _, l := range labels {
				require.Contains(t, string(l), `fill="currentColor" stroke="none"`, "filled, not stroked")
			}
			grounds := regexp.MustCompile(`<path class="ground" `).FindAll(svg, -1)
			require.Len(t, labels, len(grounds), "a label beside every ground symbol")
		})
	}
}
