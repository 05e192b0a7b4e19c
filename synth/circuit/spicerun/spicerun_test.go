package spicerun_test

import (
	"context"
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit/spicerun"
)

func TestReadData(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		in    string
		freq  []float64
		vecs  [][]complex128
		error string
	}{
		{"one-vector", " frequency  v(out)  v(out)\n 1.0e+01  9.9e-01 -1.0e-02\n 1.0e+02  5.0e-01 -5.0e-01\n",
			[]float64{10, 100}, [][]complex128{{complex(0.99, -0.01), complex(0.5, -0.5)}}, ""},
		{"two-vectors-no-header", "1 1 2 3 4\n2 5 6 7 8\n",
			[]float64{1, 2}, [][]complex128{{1 + 2i, 5 + 6i}, {3 + 4i, 7 + 8i}}, ""},
		{"odd-columns", "f v\n1 2\n", nil, nil, "columns"},
		{"ragged", "1 1 2\n2 1 2 3 4\n", nil, nil, "earlier lines"},
		{"empty", "frequency v(out) v(out)\n", nil, nil, "no rows"},
		{"not-a-number", "1 1 x\n", nil, nil, "invalid syntax"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			freq, vecs, err := spicerun.ReadData(strings.NewReader(tc.in))
			if tc.error != "" {
				require.ErrorContains(t, err, tc.error)
				return
			}
			require.NoError(t, err)
			require.Equal(t, tc.freq, freq)
			require.Equal(t, tc.vecs, vecs)
		})
	}
}

func TestDataFile(t *testing.T) {
	t.Parallel()
	tests := []struct{ name, deck, want, error string }{
		{"found", ".control\nrun\n  wrdata ac.data v(out)\n.endc\n", "ac.data", ""},
		{"case", "WRDATA out.txt v(out)\n", "out.txt", ""},
		{"missing", ".control\nrun\n.endc\n", "", "no wrdata"},
		{"absolute", "wrdata /tmp/x v(out)\n", "", "plain relative"},
		{"parent", "wrdata ../x v(out)\n", "", "plain relative"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := spicerun.DataFile([]byte(tc.deck))
			if tc.error != "" {
				require.ErrorContains(t, err, tc.error)
				return
			}
			require.NoError(t, err)
			require.Equal(t, tc.want, got)
		})
	}
}

// fakeTB records what Require does.
type fakeTB struct{ skipped, failed string }

func (f *fakeTB) Helper()                           {}
func (f *fakeTB) Skipf(format string, args ...any)  { f.skipped = fmt.Sprintf(format, args...) }
func (f *fakeTB) Fatalf(format string, args ...any) { f.failed = fmt.Sprintf(format, args...) }

// TestRequire is not parallel: it changes the environment.
func TestRequire(t *testing.T) {
	t.Setenv("PATH", t.TempDir()) // no ngspice here
	for _, tc := range []struct {
		name, ci     string
		skip, failed bool
	}{{"local", "", true, false}, {"ci", "true", false, true}, {"ci-false", "false", true, false}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Setenv("CI", tc.ci)
			var f fakeTB
			spicerun.Require(&f)
			require.Equal(t, tc.skip, f.skipped != "", "skipped: %q", f.skipped)
			require.Equal(t, tc.failed, f.failed != "", "failed: %q", f.failed)
			if tc.skip {
				require.Contains(t, f.skipped, "ngspice")
			}
		})
	}
}

// TestRun runs a one-resistor-divider deck: v(out) = 1/2 at every
// frequency (closed form).
func TestRun(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	deck := "* divider\nVin in 0 DC 0 AC 1\nR1 in out 1e3\nR2 out 0 1e3\n.ac dec 2 10 1000\n" +
		".control\nset wr_singlescale\nset wr_vecnames\nset numdgt=15\nrun\nwrdata d.data v(out)\nquit\n.endc\n.end\n"
	ctx, cancel := context.WithTimeout(t.Context(), 30*time.Second)
	defer cancel()
	freq, v, err := spicerun.Run(ctx, []byte(deck))
	require.NoError(t, err)
	require.Len(t, freq, 5) // 10 Hz to 1 kHz at 2 per decade
	require.InDelta(t, 10, freq[0], 1e-9)
	for _, x := range v {
		require.InDelta(t, 0.5, real(x), 1e-12)
		require.InDelta(t, 0, imag(x), 1e-12)
	}

	// A deck ngspice rejects is an error, with ngspice's message.
	_, _, err = spicerun.Run(ctx, []byte(strings.Replace(deck, "R2 out 0 1e3", "R2 out 0 abc", 1)))
	require.ErrorContains(t, err, "ngspice")
}
