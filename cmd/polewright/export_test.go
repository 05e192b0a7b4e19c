package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// TestExportExamples exports every example spec as a SPICE deck and a
// BOM: the deck runs unchanged in ngspice -b (the outside reference), the
// BOM has INTERFACE.md's header, every resistor and capacitor is a series
// value times a power of ten (IEC 60063), and the designators of the deck
// and the BOM match.
func TestExportExamples(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	files, err := filepath.Glob("../../testdata/examples/*.json")
	require.NoError(t, err)
	require.NotEmpty(t, files)
	for _, file := range files {
		t.Run(filepath.Base(file), func(t *testing.T) {
			t.Parallel()
			code, deck, errOut := runCLI(t, "", "export", "-spec", file, "-as", "spice")
			require.Equal(t, exitOK, code, errOut)
			require.True(t, strings.HasSuffix(strings.TrimSpace(deck), ".end"))
			require.Regexp(t, `(?m)^Vin in (0|ref) `, deck, "the source drives in (from the reference on a supplied board)")
			require.Contains(t, deck, "AC 1")

			ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
			defer cancel()
			freq, v, err := spicerun.Run(ctx, []byte(deck))
			require.NoError(t, err)
			require.NotEmpty(t, freq)
			require.Len(t, v, len(freq))

			code, bom, errOut := runCLI(t, "", "export", "-spec", file, "-as", "bom")
			require.Equal(t, exitOK, code, errOut)
			rows, err := csv.NewReader(strings.NewReader(bom)).ReadAll()
			require.NoError(t, err)
			require.Equal(t, []string{"ref", "kind", "value", "unit", "series", "tolerance", "stage"}, rows[0][:7], "INTERFACE.md's seven columns first")
			spec, err := os.ReadFile(file)
			require.NoError(t, err)
			for _, row := range rows[1:] {
				ref, kind := row[0], row[1]
				name := ref
				if kind == "opamp" || kind == "fda" {
					name = "X" + ref
				}
				require.Regexp(t, `(?m)^`+name+` `, deck, "BOM ref %s is not in the deck", ref)
				if kind != "resistor" && kind != "capacitor" {
					continue
				}
				series, err := eseries.Lookup(row[4])
				require.NoError(t, err, "%s of %s", row[4], spec)
				require.Regexp(t, `^[0-9]+(\.[0-9]+)?$`, row[2], "a plain decimal value, no exponent")
				var val float64
				_, err = fmt.Sscan(row[2], &val)
				require.NoError(t, err)
				// The same value as the element in the deck ngspice ran.
				m := regexp.MustCompile(`(?m)^` + ref + ` \S+ \S+ (\S+)$`).FindStringSubmatch(deck)
				require.NotNil(t, m, "%s in the deck", ref)
				inDeck, err := strconv.ParseFloat(m[1], 64)
				require.NoError(t, err)
				require.InEpsilon(t, inDeck, val, 1e-11, "%s: BOM %s, deck %s", ref, row[2], m[1])
				require.True(t, series.Contains(val), "%s = %s is not an %s value", ref, row[2], row[4])
			}
		})
	}
}

// TestExportSVGKinds checks that every SVG kind is written by the CLI as
// the API writes it (package export, shared), with its title and spec.
func TestExportSVGKinds(t *testing.T) {
	t.Parallel()
	spec := `{"approximation": "elliptic", "order": 5, "passband_hz": 20000, "stopband_hz": 25000, "passband_ripple_db": 0.5, "stopband_atten_db": 60}`
	tests := []struct {
		kind, title string
	}{
		{"noise-svg", "output noise density"},
		{"schematic-svg", "schematic, every stage"},
		{"bode-svg", "magnitude and phase"},
		{"passband-svg", "magnitude over the passband"},
	}
	for _, tc := range tests {
		t.Run(tc.kind, func(t *testing.T) {
			t.Parallel()
			code, out, errOut := runCLI(t, spec, "export", "-spec", "-", "-as", tc.kind)
			require.Equal(t, exitOK, code, errOut)
			require.Empty(t, errOut)
			require.True(t, strings.HasPrefix(out, "<?xml"), out[:min(len(out), 80)])
			require.Contains(t, out, "<title>polewright: elliptic lowpass, order 5, passband 20 kHz, "+tc.title+"</title>")
			require.Contains(t, out, `<desc>spec: {"response":"lowpass","approximation":"elliptic"`)
		})
	}
}

// TestExportReport checks that the CLI writes the report (one HTML file)
// and names it in its usage.
func TestExportReport(t *testing.T) {
	t.Parallel()
	spec := `{"approximation": "chebyshev1", "passband_hz": 1000, "stopband_hz": 3000, "passband_ripple_db": 0.5, "stopband_atten_db": 50, "order": 4}`
	code, out, errOut := runCLI(t, spec, "export", "-spec", "-", "-as", "report")
	require.Equal(t, exitOK, code, errOut)
	require.True(t, strings.HasPrefix(out, "<!DOCTYPE html>"))
	require.Contains(t, out, "<title>Filter design report: chebyshev1 lowpass, order 4, passband 1 kHz</title>")
	require.True(t, strings.HasSuffix(out, "</html>\n"))
}
