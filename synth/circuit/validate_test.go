package circuit_test

import (
	"bytes"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

func TestValidate(t *testing.T) {
	t.Parallel()
	sk := func(edit func(*circuit.Stage)) circuit.Chain {
		st := sallenKeyLP(skR1, skR2, skC1, skC2)
		st.Parts = append([]circuit.Part(nil), st.Parts...)
		st.OpAmps = append([]circuit.OpAmp(nil), st.OpAmps...)
		edit(&st)
		return circuit.Chain{Stages: []circuit.Stage{rcBuffer(rcR, rcC), st}, Model: singlePole}
	}
	tests := []struct {
		name  string
		chain circuit.Chain
		want  string // substring of the error; "" for a valid chain
	}{
		{"valid", sk(func(*circuit.Stage) {}), ""},
		{"follower-without-ground", circuit.Chain{Model: ideal, Stages: []circuit.Stage{{
			Parts:  []circuit.Part{res("R1", "in", "out", 1e3)}, // a resistor loading the output
			OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "in", Minus: "out", Out: "out"}},
			Out:    "out",
		}}}, ""},
		{"no-stages", circuit.Chain{Model: ideal}, "no stages"},
		{"model-gbw", circuit.Chain{Stages: []circuit.Stage{rcBuffer(rcR, rcC)}, Model: circuit.Model{GBWHz: 0, DCGainDB: 100}}, "GBWHz"},
		{"model-gbw-inf", circuit.Chain{Stages: []circuit.Stage{rcBuffer(rcR, rcC)}, Model: circuit.Model{GBWHz: math.Inf(1), DCGainDB: 100}}, "GBWHz"},
		{"model-gain", circuit.Chain{Stages: []circuit.Stage{rcBuffer(rcR, rcC)}, Model: circuit.Model{GBWHz: 1e6, DCGainDB: math.NaN()}}, "DCGainDB"},
		{"model-gain-overflow", circuit.Chain{Stages: []circuit.Stage{rcBuffer(rcR, rcC)}, Model: circuit.Model{GBWHz: 1e6, DCGainDB: 1e4}}, "DCGainDB"},
		{"value-zero", sk(func(s *circuit.Stage) { s.Parts[0].Value = 0 }), "stage 2 (sallen-key): circuit: invalid: part 1 (\"R1\"): Value 0"},
		{"value-negative", sk(func(s *circuit.Stage) { s.Parts[2].Value = -1e-9 }), "Value -1e-09"},
		{"value-nan", sk(func(s *circuit.Stage) { s.Parts[1].Value = math.NaN() }), "Value NaN"},
		{"value-inf", sk(func(s *circuit.Stage) { s.Parts[1].Value = math.Inf(1) }), "Value +Inf"},
		{"tolerance", sk(func(s *circuit.Stage) { s.Parts[1].TolerancePct = -1 }), "TolerancePct"},
		{"kind", sk(func(s *circuit.Stage) { s.Parts[1].Kind = "inductor" }), "Kind \"inductor\""},
		{"ref-letter", sk(func(s *circuit.Stage) { s.Parts[2].Ref = "R9" }), "Ref \"R9\" is not C"},
		{"ref-form", sk(func(s *circuit.Stage) { s.Parts[0].Ref = "R1a" }), "Ref \"R1a\""},
		{"duplicate-ref", sk(func(s *circuit.Stage) { s.Parts[1].Ref = "R1" }), "duplicate Ref \"R1\""},
		{"opamp-ref", sk(func(s *circuit.Stage) { s.OpAmps[0].Ref = "X1" }), "Ref \"X1\" is not U"},
		{"node-name", sk(func(s *circuit.Stage) { s.Parts[1].B = "n 2" }), "\"n 2\" is not a node name"},
		{"node-empty", sk(func(s *circuit.Stage) { s.Parts[1].B = "" }), "B \"\" is not a node name"},
		{"node-case", sk(func(s *circuit.Stage) { s.Parts[3].A = "N2" }), "differ only in case"},
		{"same-nodes", sk(func(s *circuit.Stage) { s.Parts[1].B = "n1" }), "A and B are the same node"},
		{"dangling", sk(func(s *circuit.Stage) { s.Parts[3].A = "n9" }), "only one connection"},
		{"floating-island", sk(func(s *circuit.Stage) {
			// The + input sits on an island n3–n4 that touches nothing else.
			s.OpAmps[0].Plus = "n3"
			s.Parts = append(s.Parts, capa("C3", "n3", "n4", 1e-9), res("R3", "n4", "n3", 1e3))
		}), "node \"n3\" has no path to ground"},
		{"no-opamp", sk(func(s *circuit.Stage) { s.OpAmps = nil }), "no op-amps"},
		{"out-unset", sk(func(s *circuit.Stage) { s.Out = "" }), "Out is not set"},
		{"out-not-opamp", sk(func(s *circuit.Stage) { s.Out = "n1" }), "not an op-amp output"},
		{"opamp-out-ground", sk(func(s *circuit.Stage) { s.OpAmps[0].Out = "0" }), "stage input or ground"},
		{"opamp-inputs-equal", sk(func(s *circuit.Stage) { s.OpAmps[0].Minus = "n2" }), "Plus and Minus are the same node"},
		{"two-opamps-one-output", sk(func(s *circuit.Stage) {
			s.OpAmps = append(s.OpAmps, circuit.OpAmp{Ref: "U2", Plus: "n1", Minus: "out", Out: "out"})
		}), "also the output of \"U1\""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			err := tc.chain.Validate()
			if tc.want == "" {
				require.NoError(t, err)
				return
			}
			require.ErrorIs(t, err, circuit.ErrInvalid)
			require.ErrorContains(t, err, tc.want)
			// Every entry point validates and returns the error, never panics.
			_, err = tc.chain.Response(nil, []float64{1e3})
			require.ErrorIs(t, err, circuit.ErrInvalid)
			_, err = tc.chain.MagnitudeDB(nil, []float64{1e3})
			require.ErrorIs(t, err, circuit.ErrInvalid)
			var buf bytes.Buffer
			require.ErrorIs(t, tc.chain.WriteSPICE(&buf, circuit.SpiceOptions{}), circuit.ErrInvalid)
			require.ErrorIs(t, tc.chain.WriteBOM(&buf), circuit.ErrInvalid)
			require.Zero(t, buf.Len(), "nothing is written for an invalid chain")
		})
	}
}

func TestSingular(t *testing.T) {
	t.Parallel()
	// An ideal op-amp whose inputs are both driven from the input through
	// equal dividers and whose output feeds nothing back: V(+) = V(−) holds
	// for every output voltage, so the nullor leaves the output undetermined.
	st := circuit.Stage{
		Topology: "open-loop",
		Parts: []circuit.Part{
			res("R1", "in", "a", 1e3), res("R2", "a", "0", 1e3),
			res("R3", "in", "b", 1e3), res("R4", "b", "0", 1e3),
			res("R5", "out", "0", 1e3),
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "a", Minus: "b", Out: "out"}},
		Out:    "out",
	}
	_, err := st.TransferFunction(ideal)
	require.ErrorIs(t, err, circuit.ErrSingular)
	_, err = st.SolveAt(ideal, complex(0, 1e3))
	require.ErrorIs(t, err, circuit.ErrSingular)
}
