package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/web/export"
)

func runCLI(t *testing.T, stdin string, args ...string) (int, string, string) {
	t.Helper()
	var out, errOut bytes.Buffer
	code := run(context.Background(), args, strings.NewReader(stdin), &out, &errOut)
	return code, out.String(), errOut.String()
}

func TestDesignCommand(t *testing.T) {
	t.Parallel()
	spec := `{"approximation":"chebyshev1","passband_hz":1000,"stopband_hz":3000,"passband_ripple_db":0.5,"stopband_atten_db":50}`
	code, out, errOut := runCLI(t, spec, "design", "-spec", "-")
	require.Equal(t, exitOK, code, errOut)
	require.Empty(t, errOut)
	var d map[string]any
	require.NoError(t, json.Unmarshal([]byte(out), &d))
	// scipy.signal.cheb1ord(1000, 3000, 0.5, 50, analog=True) returns 5
	// (and the closed form acosh(√((10⁵−1)/(10^0.05−1)))/acosh(3) = 4.54).
	require.InDelta(t, 5, d["order"], 0)
	for _, k := range []string{"order", "poles_rad_s", "zeros_rad_s", "gain", "sections", "response", "meets_mask"} {
		require.Contains(t, d, k)
	}
	require.Equal(t, true, d["meets_mask"])

	// export -as json writes the same design.
	code, out2, _ := runCLI(t, spec, "export", "-spec", "-", "-as", "json")
	require.Equal(t, exitOK, code)
	require.JSONEq(t, out, out2)
}

func TestDesignFromFile(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "spec.json")
	require.NoError(t, os.WriteFile(path, []byte(`{"passband_hz": 100, "order": 3}`), 0o600))
	code, out, _ := runCLI(t, "", "design", "-spec", path)
	require.Equal(t, exitOK, code)
	require.Contains(t, out, `"poles_rad_s"`)
}

// TestBadSpecs checks INTERFACE.md's error contract: status 2, nothing on
// stdout, one stderr line beginning "spec: " that names the field, and
// quickly.
func TestBadSpecs(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name  string
		spec  string
		field string
	}{
		{"negative passband", `{"passband_hz": -1}`, "passband_hz"},
		{"stopband below", `{"passband_hz": 1000, "stopband_hz": 800}`, "stopband_hz"},
		{"malformed", `{"passband_hz": `, "json"},
		{"empty", ``, "json"},
		{"unknown field", `{"passband_hz": 1000, "order": 2, "wobble": 1}`, "wobble"},
		{"order 21", `{"passband_hz": 1000, "order": 21}`, "order"},
		// Butterworth needs order 25 here: log10((10^8−1)/(10^0.1−1))/(2·log10(1.5)) = 24.4 (Amax 1 dB).
		{"needs order above 20", `{"passband_hz": 1000, "stopband_hz": 1500, "stopband_atten_db": 80}`, "stopband_hz"},
		// 0.06 Hz needs more than 220 kΩ with 1 µF: outside the default part windows.
		{"unbuildable section", `{"passband_hz": 0.05, "stopband_hz": 0.5}`, "topology"},
		{"impossible window", `{"passband_hz": 1000, "order": 2, "capacitor_range_farad": [1e-9, 2e-9]}`, "capacitor_range_farad"},
		{"unknown series", `{"passband_hz": 1000, "order": 2, "resistor_series": "E97"}`, "resistor_series"},
		{"oversized", `{"passband_hz": 1000, "order": 2` + strings.Repeat(" ", 1<<20) + `}`, "json"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			start := time.Now()
			for _, cmd := range [][]string{{"design", "-spec", "-"}, {"export", "-spec", "-", "-as", "json"}} {
				code, out, errOut := runCLI(t, tc.spec, cmd...)
				require.Equal(t, exitUsage, code)
				require.Empty(t, out)
				require.True(t, strings.HasPrefix(errOut, "spec: "+tc.field+": "), errOut)
				require.Equal(t, 1, strings.Count(errOut, "\n"), errOut)
			}
			require.Less(t, time.Since(start), 5*time.Second) // "in under a second" (issue 2), with slack for -race
		})
	}
}

func TestNeedsOrderMessage(t *testing.T) {
	t.Parallel()
	_, _, errOut := runCLI(t, `{"passband_hz": 1000, "stopband_hz": 1500, "stopband_atten_db": 80}`, "design", "-spec", "-")
	// The order it would need: ceil(24.4) = 25 (closed form above).
	require.Contains(t, errOut, "order 25")
}

// TestHelp checks the usage: on stdout with status 0 when asked for, on
// stderr after the error with status 2 for an unknown command or a
// mistake on serve (what polewright runs without a command); it names
// every command and every export kind.
func TestHelp(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		args     []string
		code     int
		toStdout bool
		first    string // the first line, for the errors
	}{
		{"help", []string{"help"}, exitOK, true, ""},
		{"-h", []string{"-h"}, exitOK, true, ""},
		{"--help", []string{"--help"}, exitOK, true, ""},
		{"-help", []string{"-help"}, exitOK, true, ""},
		{"unknown command", []string{"frobnicate"}, exitUsage, false, `polewright: unknown command "frobnicate" (commands: serve, design, export, explore, help)`},
		{"unknown flag", []string{"-frobnicate"}, exitUsage, false, "polewright serve: flag provided but not defined: -frobnicate"},
		{"serve argument", []string{"serve", "now"}, exitUsage, false, `polewright serve: unexpected argument "now"`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errOut := runCLI(t, "", tc.args...)
			require.Equal(t, tc.code, code)
			text := errOut
			if tc.toStdout {
				require.Empty(t, errOut)
				text = out
			} else {
				require.Empty(t, out)
				require.Equal(t, tc.first, strings.SplitN(errOut, "\n", 2)[0])
			}
			for _, want := range []string{"polewright serve", "polewright design -spec FILE", "polewright export -spec FILE -as KIND"} {
				require.Contains(t, text, want)
			}
			for _, kind := range export.Kinds {
				require.Contains(t, text, kind)
			}
		})
	}
}

func TestUsageErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		args []string
		want string
	}{
		{"no spec", []string{"design"}, "-spec FILE is required"},
		{"missing file", []string{"design", "-spec", "/nonexistent/spec.json"}, "spec: json: cannot open"},
		{"bad flag", []string{"design", "-bogus"}, "flag provided but not defined"},
		{"no kind", []string{"export", "-spec", "-"}, "-as KIND is required"},
		{"bad kind", []string{"export", "-spec", "-", "-as", "pdf"}, "not a kind"},
		{"too many trials", []string{"design", "-spec", "-", "-trials", "200000"}, "spec: montecarlo.trials: must be from 0 to 100000"},
		// Issue 9: the flags are validated like the spec's fields, just
		// inside and just outside (the accepted rows are in TestMCFlags).
		{"trials just above", []string{"design", "-spec", "-", "-trials", "100001"}, "spec: montecarlo.trials: must be from 0 to 100000, a whole number"},
		{"negative trials", []string{"design", "-spec", "-", "-trials", "-5"}, "spec: montecarlo.trials: "},
		{"trials just below", []string{"export", "-spec", "-", "-as", "json", "-trials", "-1"}, "spec: montecarlo.trials: "},
		{"fractional trials", []string{"design", "-spec", "-", "-trials", "2.5"}, "spec: montecarlo.trials: must be from 0 to 100000, a whole number"},
		{"hexadecimal trials", []string{"design", "-spec", "-", "-trials", "0x10"}, "spec: montecarlo.trials: "},
		{"trials not a number", []string{"design", "-spec", "-", "-trials", "many"}, "spec: montecarlo.trials: "},
		{"empty trials", []string{"design", "-spec", "-", "-trials", ""}, "spec: montecarlo.trials: "},
		{"negative seed", []string{"design", "-spec", "-", "-seed", "-5"}, "spec: montecarlo.seed: "},
		// 2^53 + 2: the next float64 above 2^53 (2^53 + 1 rounds to 2^53, as in the spec JSON).
		{"seed above 2^53", []string{"design", "-spec", "-", "-seed", "9007199254740994"}, "spec: montecarlo.seed: "},
		{"long value cut", []string{"design", "-spec", "-", "-seed", strings.Repeat("9", 300)}, strings.Repeat("9", 40) + "…"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errOut := runCLI(t, `{"passband_hz": 100, "order": 2}`, tc.args...)
			require.Equal(t, exitUsage, code)
			require.Empty(t, out)
			require.Contains(t, errOut, tc.want)
			require.Equal(t, 1, strings.Count(errOut, "\n"), errOut)
			if strings.HasPrefix(tc.want, "spec: ") {
				require.True(t, strings.HasPrefix(errOut, tc.want), errOut)
			}
			require.Less(t, len(errOut), 300, errOut)
		})
	}
}

func TestTrialsFlag(t *testing.T) {
	t.Parallel()
	spec := `{"passband_hz": 1000, "stopband_hz": 3000, "stopband_atten_db": 30}`
	code, out, errOut := runCLI(t, spec, "design", "-spec", "-", "-trials", "300", "-seed", "9")
	require.Equal(t, exitOK, code, errOut)
	var d struct {
		MC struct {
			Trials int     `json:"trials"`
			Seed   uint64  `json:"seed"`
			Yield  float64 `json:"yield"`
		} `json:"montecarlo"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &d))
	require.Equal(t, 300, d.MC.Trials)
	require.Equal(t, uint64(9), d.MC.Seed)
	require.GreaterOrEqual(t, d.MC.Yield, 0.0)
	require.LessOrEqual(t, d.MC.Yield, 1.0)
	// The same seed gives the same run.
	_, out2, _ := runCLI(t, spec, "design", "-spec", "-", "-trials", "300", "-seed", "9")
	require.JSONEq(t, out, out2)
}

// TestMCFlags: the Monte Carlo flags at the edges of their ranges are
// accepted and override the spec (issue 9: just inside the refused rows of
// TestUsageErrors).
func TestMCFlags(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name       string
		args       []string
		trials     int
		seed       uint64
		specTrials string // the spec's montecarlo member, overridden by the flags
	}{
		{"zero trials", []string{"-trials", "0"}, 0, 1, `"montecarlo": {"trials": 5}`},
		{"one trial", []string{"-trials", "1"}, 1, 1, ""},
		{"exponent", []string{"-trials", "2e1"}, 20, 1, ""},
		{"seed zero", []string{"-seed", "0"}, 3, 0, `"montecarlo": {"trials": 3, "seed": 9}`},
		{"seed 2^53", []string{"-seed", "9007199254740992"}, 3, 1 << 53, `"montecarlo": {"trials": 3}`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			spec := `{"passband_hz": 100, "order": 2}`
			if tc.specTrials != "" {
				spec = `{"passband_hz": 100, "order": 2, ` + tc.specTrials + `}`
			}
			code, out, errOut := runCLI(t, spec, append([]string{"design", "-spec", "-"}, tc.args...)...)
			require.Equal(t, exitOK, code, errOut)
			var d struct {
				Spec struct {
					MonteCarlo struct {
						Trials int    `json:"trials"`
						Seed   uint64 `json:"seed"`
					} `json:"montecarlo"`
				} `json:"spec"`
			}
			require.NoError(t, json.Unmarshal([]byte(out), &d))
			require.Equal(t, tc.trials, d.Spec.MonteCarlo.Trials)
			require.Equal(t, tc.seed, d.Spec.MonteCarlo.Seed)
		})
	}
}
