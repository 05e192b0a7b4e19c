package plotting

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"
)

var regen = flag.Bool("regen", false, "regenerate the golden SVG files in testdata")

// TestGolden draws the plots of a 5th-order Chebyshev lowpass, an elliptic
// bandpass and a Butterworth bandstop, with the stand-in as-built chain of
// fakeBuilt, writes each into testdata/NAME.svg and compares it byte for
// byte with testdata/NAME_golden.svg, as gonum/plot's own golden tests do.
// Run with -regen to accept a change:
//
//	go test ./plotting -run TestGolden -regen
func TestGolden(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		spec  string
		built bool
		kinds []string
	}{
		{"cheby1_lowpass5", lowpassSpec, true, []string{"bode", "delay", "step", "passband"}},
		{"cheby1_lowpass5_ideal", lowpassSpec, false, []string{"bode", "passband"}},
		{"elliptic_bandpass", bandpassSpec, true, []string{"bode", "delay", "step", "passband"}},
		{"butterworth_bandstop", bandstopSpec, true, []string{"bode", "delay", "step", "passband"}},
	}
	for _, tc := range cases {
		d := idealDesign(t, tc.spec)
		tfs := fakeBuilt(d)
		if !tc.built {
			tfs = nil
		}
		for _, pf := range plotFuncs {
			if !contains(tc.kinds, pf.name) {
				continue
			}
			name := tc.name + "_" + pf.name
			t.Run(name, func(t *testing.T) {
				t.Parallel()
				var buf bytes.Buffer
				require.NoError(t, pf.fn(&buf, d, tfs, Options{}))
				got := buf.Bytes()
				out := filepath.Join("testdata", name+".svg")
				golden := filepath.Join("testdata", name+"_golden.svg")
				require.NoError(t, os.WriteFile(out, got, 0o644))
				if *regen {
					require.NoError(t, os.WriteFile(golden, got, 0o644))
					return
				}
				want, err := os.ReadFile(golden)
				require.NoError(t, err, "run with -regen to create it")
				require.True(t, bytes.Equal(want, got), "%s differs from %s; inspect it and run with -regen to accept", out, golden)
			})
		}
	}
}

func contains(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}
