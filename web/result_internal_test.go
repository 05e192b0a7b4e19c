package web

import (
	"testing"

	"github.com/stretchr/testify/require"
)

// TestSchematicStyle checks the custom properties a schematic's figure
// carries: its own size read from the root element, as package
// plotting/schematic writes it, and nothing for a root without one.
func TestSchematicStyle(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ name, svg, want string }{
		{"schematic root", `<svg xmlns="http://www.w3.org/2000/svg" class="schematic" viewBox="3 -94 362 218" width="362" height="218" font-family="sans-serif">`,
			"--sw: 362; --sh: 218; --schematic-scale: 1.5"},
		{"no size", `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 10 10">`, ""},
		{"size on a child only", `<svg viewBox="0 0 10 10"><rect width="5" height="5"/></svg>`, ""},
		{"zero", `<svg width="0" height="218">`, ""},
		{"absurd", `<svg width="1000000" height="218">`, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.want, schematicStyle(tc.svg))
		})
	}
}
