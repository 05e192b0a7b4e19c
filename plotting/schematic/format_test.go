package schematic

import (
	"math"
	"testing"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/stretchr/testify/require"
)

func TestFormatValue(t *testing.T) {
	t.Parallel()
	const (
		r = circuit.Resistor
		c = circuit.Capacitor
	)
	tests := []struct {
		name string
		v    float64
		kind circuit.PartKind
		want string
	}{
		{"E96 kilohm", 10200, r, "10.2 kΩ"},
		{"E12 nanofarad", 4.7e-9, c, "4.7 nF"},
		{"picofarad", 2.2e-10, c, "220 pF"},
		{"megohm", 1e6, r, "1 MΩ"},
		{"microfarad", 1.5e-6, c, "1.5 µF"},
		{"ohm", 100, r, "100 Ω"},
		{"rounds up into the next prefix", 9.999e3, r, "10 kΩ"},
		{"rounds up to a thousand", 999.7, r, "1 kΩ"},
		{"three figures", 12345, r, "12.3 kΩ"},
		{"rounds half away", 1.235e3 + 1e-9, r, "1.24 kΩ"},
		{"E192", 97.6e3, r, "97.6 kΩ"},
		{"one ohm", 1, r, "1 Ω"},
		{"milliohm", 0.0221, r, "22.1 mΩ"},
		{"femtofarad", 4.7e-15, c, "4.7 fF"},
		{"teraohm", 1e12, r, "1 TΩ"},
		{"below the prefixes", 1.5e-18, c, "1.5e-18 F"},
		{"above the prefixes", 2.5e15, r, "2.5e+15 Ω"},
		{"unknown kind", 4.7e3, "inductor", "4.7 k"},
		{"unknown kind without prefix", 4.7, "", "4.7"},
		{"zero", 0, r, "? Ω"},
		{"negative", -1e3, r, "? Ω"},
		{"NaN", math.NaN(), c, "? F"},
		{"infinite", math.Inf(1), c, "? F"},
		{"invalid unknown kind", 0, "", "?"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.want, FormatValue(tc.v, tc.kind))
		})
	}
}
