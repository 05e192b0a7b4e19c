package circuit_test

import (
	"bytes"
	"encoding/csv"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

func TestWriteBOM(t *testing.T) {
	t.Parallel()
	exact := rcBuffer(1.0/3*1e4, 15.9e-9)
	exact.Parts[0].Series, exact.Parts[0].TolerancePct = "", 0 // exact value, tolerance unspecified
	exact.Parts[1].TolerancePct = 2.5
	stages := []circuit.Stage{sallenKeyLP(10.2e3, 22.1e3, 22e-9, 10e-9), exact}
	tests := []struct {
		name  string
		model circuit.Model
		want  string // hand-written from the part lists above and the documented columns
	}{
		{"single-pole", singlePole, circuit.BOMHeader + "\n" +
			"R101,resistor,10200,Ohm,E96,1%,1,10.2 kΩ\n" +
			"R102,resistor,22100,Ohm,E96,1%,1,22.1 kΩ\n" +
			"C101,capacitor,0.000000022,F,E24,5%,1,22 nF\n" +
			"C102,capacitor,0.00000001,F,E24,5%,1,10 nF\n" +
			"U101,opamp,1000000,Hz,,,1,1 MHz\n" +
			"R201,resistor,3333.3333333333335,Ohm,exact,,2,3.33333 kΩ\n" +
			"C201,capacitor,0.0000000159,F,E24,2.5%,2,15.9 nF\n" +
			"U201,opamp,1000000,Hz,,,2,1 MHz\n"},
		{"ideal", ideal, circuit.BOMHeader + "\n" +
			"R101,resistor,10200,Ohm,E96,1%,1,10.2 kΩ\n" +
			"R102,resistor,22100,Ohm,E96,1%,1,22.1 kΩ\n" +
			"C101,capacitor,0.000000022,F,E24,5%,1,22 nF\n" +
			"C102,capacitor,0.00000001,F,E24,5%,1,10 nF\n" +
			"U101,opamp,,,,,1,\n" +
			"R201,resistor,3333.3333333333335,Ohm,exact,,2,3.33333 kΩ\n" +
			"C201,capacitor,0.0000000159,F,E24,2.5%,2,15.9 nF\n" +
			"U201,opamp,,,,,2,\n"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			chain := circuit.Chain{Stages: stages, Model: tc.model}
			var buf bytes.Buffer
			require.NoError(t, chain.WriteBOM(&buf))
			require.Equal(t, tc.want, buf.String())

			rows, err := csv.NewReader(strings.NewReader(buf.String())).ReadAll()
			require.NoError(t, err)
			require.Equal(t, "ref,kind,value,unit,series,tolerance,stage", strings.Join(rows[0][:7], ","), "the contract's seven columns first")
			for _, row := range rows[1:] {
				require.NotContains(t, row[2], "e", "value %q is plain decimal", row[2])
				if row[2] == "" {
					continue
				}
				v, err := strconv.ParseFloat(row[2], 64)
				require.NoError(t, err, "value is machine-readable")
				// The display reads back to the value within its digits
				// (SI prefixes, BIPM SI brochure 9th ed.).
				require.InEpsilon(t, v, parseDisplay(t, row[7]), 5e-6, row[7])
			}
			n := 0
			for _, st := range chain.Stages {
				n += len(st.Parts) + len(st.OpAmps)
			}
			require.Len(t, rows, 1+n, "one row per part and op-amp")
		})
	}
}

// parseDisplay reads an engineering-notation display ("22 nF", "10.2 kΩ")
// back to a number, with the SI prefixes of the BIPM SI brochure.
func parseDisplay(t *testing.T, s string) float64 {
	t.Helper()
	num, unit, ok := strings.Cut(s, " ")
	require.True(t, ok, s)
	v, err := strconv.ParseFloat(num, 64)
	require.NoError(t, err, s)
	prefixes := map[string]float64{"f": 1e-15, "p": 1e-12, "n": 1e-9, "µ": 1e-6, "m": 1e-3, "k": 1e3, "M": 1e6, "G": 1e9, "T": 1e12}
	for _, u := range []string{"Ω", "F", "Hz"} {
		if p, found := strings.CutSuffix(unit, u); found {
			if p == "" {
				return v
			}
			f, ok := prefixes[p]
			require.True(t, ok, "prefix %q of %q", p, s)
			return v * f
		}
	}
	t.Fatalf("no unit in %q", s)
	return 0
}
