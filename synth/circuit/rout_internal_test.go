package circuit

import (
	"math/cmplx"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestOutputResistanceEliminated compares the nodal system that compile
// builds with the output resistance eliminated (the amplifier's internal
// voltage written as V(Out) + Ro·I) with the same circuit written out node
// for node: WithParasitics's internal node and resistor, compiled with a
// model that has no output resistance of its own. The two must give the
// same V(Out) at every frequency, single-ended and fully differential.
func TestOutputResistanceEliminated(t *testing.T) {
	t.Parallel()
	sk := Stage{
		Parts: []Part{
			{Ref: "R1", Kind: Resistor, A: In, B: "a", Value: 10e3},
			{Ref: "R2", Kind: Resistor, A: "a", B: "p", Value: 22e3},
			{Ref: "C1", Kind: Capacitor, A: "a", B: "out", Value: 10e-9},
			{Ref: "C2", Kind: Capacitor, A: "p", B: Ground, Value: 2.2e-9},
		},
		OpAmps: []OpAmp{{Ref: "U1", Plus: "p", Minus: "out", Out: "out"}},
		Out:    "out",
	}
	fd, err := Stage{
		Parts: []Part{
			{Ref: "R1", Kind: Resistor, A: In, B: "a", Value: 10e3},
			{Ref: "R2", Kind: Resistor, A: "a", B: "out", Value: 10e3},
			{Ref: "R3", Kind: Resistor, A: "a", B: "m", Value: 4.7e3},
			{Ref: "C1", Kind: Capacitor, A: "a", B: Ground, Value: 22e-9},
			{Ref: "C2", Kind: Capacitor, A: "m", B: "out", Value: 1e-9},
		},
		OpAmps: []OpAmp{{Ref: "U1", Plus: Ground, Minus: "m", Out: "out"}},
		Out:    "out",
	}.ToFullyDifferential(true)
	require.NoError(t, err)
	for _, tc := range []struct {
		name  string
		stage Stage
		model Model
	}{
		{"sallen-key", sk, Model{GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 3e-12, OutputResistanceOhm: 50}},
		{"sallen-key/large-ro", sk, Model{GBWHz: 10e6, DCGainDB: 120, OutputResistanceOhm: 2e3}},
		{"sallen-key/ideal", sk, Model{Ideal: true, OutputResistanceOhm: 100}},
		{"fully-differential", fd, Model{GBWHz: 5e6, DCGainDB: 110, InputCapacitanceFarad: 2e-12, OutputResistanceOhm: 75}},
		{"fully-differential/ideal", fd, Model{Ideal: true, OutputResistanceOhm: 75}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			tab, err := tc.stage.check()
			require.NoError(t, err)
			// The explicit form: internal nodes and resistors as parts.
			aug := tc.stage.WithParasitics(tc.model)
			tab2 := &nodeTable{names: slices.Clone(tab.names), terminals: slices.Clone(tab.terminals), parent: slices.Clone(tab.parent)}
			for _, u := range aug.OpAmps {
				tab2.add(u.Out)
				if u.FullyDifferential() {
					tab2.add(u.OutN)
				}
			}
			plain := tc.model
			plain.InputCapacitanceFarad, plain.OutputResistanceOhm = 0, 0
			scale, _ := stageScale(aug, plain)
			explicit := compile(aug, plain, tab2, scale)

			st, tab3 := tc.stage.withParasitics(tc.model, tab)
			sc3, _ := stageScale(st, tc.model)
			eliminated := compile(st, tc.model, tab3, sc3)
			require.Equal(t, explicit.n-len(tc.stage.OpAmps)*map[bool]int{false: 1, true: 2}[tc.stage.OpAmps[0].FullyDifferential()], eliminated.n)
			for _, f := range []float64{1, 1e3, 7e3, 30e3, 1e5, 1e6, 3e7} {
				s := complex(0, 2*3.141592653589793*f)
				want, err := explicit.solve(s / complex(scale, 0))
				require.NoError(t, err)
				got, err := eliminated.solve(s / complex(sc3, 0))
				require.NoError(t, err)
				require.InDelta(t, 0, cmplx.Abs(got-want)/cmplx.Abs(want), 1e-10, "f %g Hz: got %v want %v", f, got, want)
			}
		})
	}
}
