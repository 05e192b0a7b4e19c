package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestExploreCommand: the contract's fields on stdout, from a file and
// from standard input alike.
func TestExploreCommand(t *testing.T) {
	t.Parallel()
	spec := `{"passband_hz": 1000, "order": 2, "topology": "multiple-feedback", "resistor_series": "E24"}`
	code, out, errOut := runCLI(t, spec, "explore", "-spec", "-")
	require.Equal(t, exitOK, code, errOut)
	require.Empty(t, errOut)
	var res map[string]any
	require.NoError(t, json.Unmarshal([]byte(out), &res))
	for _, k := range []string{"candidates", "pareto", "recommended", "reason", "objectives"} {
		require.Contains(t, res, k)
	}
	cands := res["candidates"].([]any)
	require.NotEmpty(t, cands)
	for _, k := range []string{"approximation", "order", "topology", "resistor_series", "design_margin", "meets_mask",
		"built_meets_mask", "yield", "opamps", "passive_parts", "gbw_needed_hz", "slew_needed_v_per_s",
		"sampled_rms_v", "group_delay_spread_s", "settling_s", "permalink"} {
		require.Contains(t, cands[0], k)
	}
	path := filepath.Join(t.TempDir(), "spec.json")
	require.NoError(t, os.WriteFile(path, []byte(spec), 0o600))
	code, out2, _ := runCLI(t, "", "explore", "-spec", path)
	require.Equal(t, exitOK, code)
	require.JSONEq(t, out, out2)
}

// TestExploreErrors: the design command's conventions — status 2,
// nothing on stdout, one stderr line beginning "spec: " naming the field
// (the command line's own mistakes: "polewright explore: ").
func TestExploreErrors(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name, stdin string
		args        []string
		prefix      string
	}{
		{"bad spec", `{"passband_hz": 1000, "stopband_hz": 500}`, []string{"-spec", "-"}, "spec: stopband_hz: "},
		{"empty", ``, []string{"-spec", "-"}, "spec: json: "},
		{"trials over the bound", `{"passband_hz": 1000, "order": 2, "montecarlo": {"trials": 9000}}`, []string{"-spec", "-"}, "spec: montecarlo.trials: "},
		{"missing file", ``, []string{"-spec", "/nonexistent/spec.json"}, "spec: json: "},
		{"no -spec", ``, nil, "polewright explore: "},
		{"stray argument", ``, []string{"-spec", "-", "extra"}, "polewright explore: "},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errOut := runCLI(t, tc.stdin, append([]string{"explore"}, tc.args...)...)
			require.Equal(t, exitUsage, code)
			require.Empty(t, out)
			require.True(t, strings.HasPrefix(errOut, tc.prefix), errOut)
			require.Equal(t, 1, strings.Count(errOut, "\n"), errOut)
		})
	}
}
