package schematic

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
)

var regen = flag.Bool("regen", false, "rewrite the golden SVG files under testdata")

// TestGolden compares the SVG of a Sallen-Key lowpass byte for byte with
// testdata/sallen-key-lowpass.svg (go test -run TestGolden -regen rewrites
// it; look at the new file before committing it).
func TestGolden(t *testing.T) {
	t.Parallel()
	var b bytes.Buffer
	require.NoError(t, Stage(&b, sallenKeyLowpass(), Options{Title: "Stage 1: Sallen-Key lowpass", Refs: chainRefs}))
	path := filepath.Join("testdata", "sallen-key-lowpass.svg")
	if *regen {
		require.NoError(t, os.WriteFile(path, b.Bytes(), 0o644))
	}
	want, err := os.ReadFile(path)
	require.NoError(t, err, "create it with -regen")
	require.Equal(t, string(want), b.String())
}

// TestDeterministic: the same stage renders to the same bytes.
func TestDeterministic(t *testing.T) {
	t.Parallel()
	for _, tc := range stages() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var a, b bytes.Buffer
			require.NoError(t, Stage(&a, tc.st, Options{Refs: chainRefs}))
			require.NoError(t, Stage(&b, tc.st, Options{Refs: chainRefs}))
			require.Equal(t, a.String(), b.String())
		})
	}
}
