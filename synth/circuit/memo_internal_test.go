package circuit

import (
	"reflect"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestMemoKeyCoversFields: memoKey encodes every field of Stage, Part,
// OpAmp and Model by name; a field added to one of them must be added to
// the key (or the memo could return another circuit's transfer function).
func TestMemoKeyCoversFields(t *testing.T) {
	for _, tc := range []struct {
		typ    reflect.Type
		fields []string
	}{
		{reflect.TypeFor[Stage](), []string{"Topology", "Parts", "OpAmps", "Out", "OutN", "DiffIn"}},
		{reflect.TypeFor[Part](), []string{"Ref", "Kind", "A", "B", "Value", "Exact", "Series", "TolerancePct", "Parasitic", "Driver"}},
		{reflect.TypeFor[OpAmp](), []string{"Ref", "Plus", "Minus", "Out", "OutN"}},
		{reflect.TypeFor[Model](), []string{"GBWHz", "DCGainDB", "Ideal", "InputCapacitanceFarad", "OutputResistanceOhm", "OffsetV", "BiasA"}},
	} {
		var got []string
		for f := range tc.typ.Fields() {
			got = append(got, f.Name)
		}
		require.ElementsMatch(t, tc.fields, got, "%s: update memoKey and this list", tc.typ)
	}
}

// TestMemo: a memo's transfer function equals the stage's own, a changed
// part value or model is a different entry, and what it returns is the
// caller's to change.
func TestMemo(t *testing.T) {
	st := Stage{Topology: "sallen-key", Out: "out",
		Parts: []Part{
			{Ref: "R1", Kind: Resistor, A: In, B: "a", Value: 10e3},
			{Ref: "R2", Kind: Resistor, A: "a", B: "b", Value: 10e3},
			{Ref: "C1", Kind: Capacitor, A: "a", B: "out", Value: 20e-9},
			{Ref: "C2", Kind: Capacitor, A: "b", B: Ground, Value: 10e-9},
		},
		OpAmps: []OpAmp{{Ref: "U1", Plus: "b", Minus: "out", Out: "out"}},
	}
	m := Model{GBWHz: 1e6, DCGainDB: 100}
	mm := NewMemo()
	want, err := st.TransferFunction(m)
	require.NoError(t, err)
	for range 2 {
		got, err := mm.TransferFunction(st, m)
		require.NoError(t, err)
		require.Equal(t, want, got)
		got.Num[0] = 42 // the caller's copy
	}
	require.Len(t, mm.m, 1)
	other := st
	other.Parts = append([]Part(nil), st.Parts...)
	other.Parts[1].Value = 11e3
	wantOther, err := other.TransferFunction(m)
	require.NoError(t, err)
	got, err := mm.TransferFunction(other, m)
	require.NoError(t, err)
	require.Equal(t, wantOther, got)
	got, err = mm.TransferFunction(st, Model{Ideal: true})
	require.NoError(t, err)
	wantIdeal, err := st.TransferFunction(Model{Ideal: true})
	require.NoError(t, err)
	require.Equal(t, wantIdeal, got)
	require.Len(t, mm.m, 3)
	ch := Chain{Stages: []Stage{st, other}, Model: m, Memo: mm}
	tfs, err := ch.TransferFunctions()
	require.NoError(t, err)
	require.Equal(t, Cascade{want, wantOther}, tfs)
	var nilMemo *Memo
	got, err = nilMemo.TransferFunction(st, m)
	require.NoError(t, err)
	require.Equal(t, want, got)
}
