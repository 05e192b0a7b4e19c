package circuit_test

import (
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// chainOf returns a chain of n copies of the Sallen-Key lowpass.
func chainOf(n int, m circuit.Model) circuit.Chain {
	ch := circuit.Chain{Model: m}
	for range n {
		ch.Stages = append(ch.Stages, sallenKeyLP(skR1, skR2, skC1, skC2))
	}
	return ch
}

func TestRef(t *testing.T) {
	t.Parallel()
	ch := chainOf(12, ideal)
	tests := []struct {
		name  string
		stage int
		local string
		want  string // the naming rule of the package documentation
	}{
		{"stage1-R3", 1, "R3", "R103"},
		{"stage12-C1", 12, "C1", "C1201"},
		{"stage2-U1", 2, "U1", "U201"},
		{"two-digit-local", 1, "R10", "R110"},
		{"stage11-R1", 11, "R1", "R1101"},
		{"largest-local", 3, "C99", "C399"},
		{"stage-0", 0, "R1", ""},
		{"stage-past-end", 13, "R1", ""},
		{"local-0", 1, "R0", ""},
		{"local-100", 1, "R100", ""},
		{"leading-zero", 1, "R01", ""},
		{"unknown-letter", 1, "L1", ""},
		{"lower-case", 1, "r1", ""},
		{"empty", 1, "", ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.want, ch.Ref(tc.stage, tc.local))
		})
	}
}

func TestSpiceName(t *testing.T) {
	t.Parallel()
	tests := []struct{ name, ref, want string }{
		{"resistor", "R103", "R103"},
		{"capacitor", "C1201", "C1201"},
		{"opamp", "U201", "XU201"}, // subcircuit instances need the X prefix
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.want, circuit.SpiceName(tc.ref))
		})
	}
}

func TestNode(t *testing.T) {
	t.Parallel()
	ch := chainOf(3, ideal) // every stage's output is local "out"
	tests := []struct {
		name  string
		stage int
		local string
		want  string // the naming rule of the package documentation
	}{
		{"first-input", 1, "in", "in"},
		{"ground", 2, "0", "0"},
		{"local", 2, "n1", "s2_n1"},
		{"input-is-previous-output", 2, "in", "s1_out"},
		{"middle-output", 2, "out", "s2_out"},
		{"last-output", 3, "out", "out"},
		{"last-input", 3, "in", "s2_out"},
		{"no-stage", 4, "n1", ""},
		{"empty", 1, "", ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.want, ch.Node(tc.stage, tc.local))
		})
	}
}
