package export_test

import (
	"bytes"
	"encoding/csv"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/web/export"
)

// readCSV exports d as kind and parses it.
func readCSV(t *testing.T, spec, kind string) [][]string {
	t.Helper()
	d := design(t, spec)
	var b bytes.Buffer
	require.NoError(t, export.Write(&b, d, kind))
	rows, err := csv.NewReader(&b).ReadAll()
	require.NoError(t, err)
	return rows
}

// TestParts checks the grouped part list against the BOM of the same
// design: every part of the BOM in exactly one group whose kind, value,
// series and tolerance are the part's, quantities that count the
// designators, no two groups alike, capacitors in C0G/NP0 (common
// practice), and the op-amp row with every op-amp and the largest needs
// of the design's sections.
func TestParts(t *testing.T) {
	t.Parallel()
	for _, tc := range reportSpecs {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := design(t, tc.spec)
			parts := readCSV(t, tc.spec, "parts")
			bom := readCSV(t, tc.spec, "bom")
			require.Equal(t, export.PartsHeader, strings.Join(parts[0], ","))
			require.Equal(t, "text/csv; charset=utf-8", export.ContentType("parts"))

			byRef := map[string][]string{}
			opamps := 0
			for _, row := range bom[1:] {
				byRef[row[0]] = row
				if row[1] == "opamp" {
					opamps++
				}
			}
			seen := map[string]bool{}
			keys := map[string]bool{}
			opampRows := 0
			for _, row := range parts[1:] {
				require.NotContains(t, row[2], "e", "plain decimal value")
				q, err := strconv.Atoi(row[0])
				require.NoError(t, err)
				refs := strings.Fields(row[8])
				require.Len(t, refs, q, "quantity counts the designators")
				for _, ref := range refs {
					require.False(t, seen[ref], "%s in one group only", ref)
					seen[ref] = true
					b, ok := byRef[ref]
					require.True(t, ok, "%s is in the BOM", ref)
					require.Equal(t, b[1], row[1], "kind of %s", ref)
					if row[1] == "opamp" {
						continue
					}
					require.Equal(t, []string{b[2], b[3], b[4], b[5]}, []string{row[2], row[3], row[5], row[6]}, "value, unit, series, tolerance of %s", ref)
					require.Equal(t, b[7], row[4], "display of %s", ref)
				}
				switch row[1] {
				case "capacitor":
					require.Equal(t, "C0G/NP0", row[7])
				case "opamp":
					opampRows++
					require.Equal(t, opamps, q, "every op-amp")
					want := 0.0
					for _, s := range d.Sections {
						if s.OpAmpNeeds != nil && s.OpAmpNeeds.GBWHz != nil {
							want = max(want, *s.OpAmpNeeds.GBWHz)
						}
					}
					if row[9] != "" {
						got, err := strconv.ParseFloat(row[9], 64)
						require.NoError(t, err)
						require.Equal(t, want, got, "the largest GBW a stage needs")
					}
					noise, err := strconv.ParseFloat(row[11], 64)
					require.NoError(t, err)
					require.Equal(t, d.Spec.OpAmp.NoiseVPerRtHz, noise)
				default:
					require.Empty(t, row[7])
				}
				key := strings.Join([]string{row[1], row[2], row[5], row[6]}, "|")
				require.False(t, keys[key], "one row per kind, value, series and tolerance: %s", key)
				keys[key] = true
			}
			require.Len(t, seen, len(bom)-1, "every BOM row is in the part list")
			require.Equal(t, 1, opampRows)
		})
	}
}
