package circuit_test

import (
	"bytes"
	"encoding/csv"
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
			"R101,resistor,10200,Ohm,E96,1%,1\n" +
			"R102,resistor,22100,Ohm,E96,1%,1\n" +
			"C101,capacitor,2.2e-08,F,E24,5%,1\n" +
			"C102,capacitor,1e-08,F,E24,5%,1\n" +
			"U101,opamp,1e+06,Hz,,,1\n" +
			"R201,resistor,3333.3333333333335,Ohm,exact,,2\n" +
			"C201,capacitor,1.59e-08,F,E24,2.5%,2\n" +
			"U201,opamp,1e+06,Hz,,,2\n"},
		{"ideal", ideal, circuit.BOMHeader + "\n" +
			"R101,resistor,10200,Ohm,E96,1%,1\n" +
			"R102,resistor,22100,Ohm,E96,1%,1\n" +
			"C101,capacitor,2.2e-08,F,E24,5%,1\n" +
			"C102,capacitor,1e-08,F,E24,5%,1\n" +
			"U101,opamp,,,,,1\n" +
			"R201,resistor,3333.3333333333335,Ohm,exact,,2\n" +
			"C201,capacitor,1.59e-08,F,E24,2.5%,2\n" +
			"U201,opamp,,,,,2\n"},
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
			require.Equal(t, "ref,kind,value,unit,series,tolerance,stage", strings.Join(rows[0], ","), "header exactly as the contract")
			n := 0
			for _, st := range chain.Stages {
				n += len(st.Parts) + len(st.OpAmps)
			}
			require.Len(t, rows, 1+n, "one row per part and op-amp")
		})
	}
}
