package circuit

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestMatchedHalfAgainstFullSystem: for matched differential stages
// (differential input, conversion, crossed outputs; ideal, single-pole
// and with parasitics) the half-circuit's transfer that nodeTransfer
// takes equals the whole nodal system's with its common-mode poles
// cancelled (the bisection theorem, checked), coefficient degree and
// values at frequencies across five decades; a mismatched stage has no
// matched half.
func TestMatchedHalfAgainstFullSystem(t *testing.T) {
	t.Parallel()
	se := Stage{
		Topology: "multiple-feedback",
		Parts: []Part{
			{Ref: "R1", Kind: Resistor, A: In, B: "n1", Value: 10e3}, {Ref: "R2", Kind: Resistor, A: "n1", B: "out", Value: 20e3},
			{Ref: "R3", Kind: Resistor, A: "n1", B: "n2", Value: 4.7e3}, {Ref: "C1", Kind: Capacitor, A: "n1", B: Ground, Value: 47e-9},
			{Ref: "C2", Kind: Capacitor, A: "n2", B: "out", Value: 2.2e-9},
		},
		OpAmps: []OpAmp{{Ref: "U1", Plus: Ground, Minus: "n2", Out: "out"}},
		Out:    "out",
	}
	fd, err := se.ToFullyDifferential(true)
	require.NoError(t, err)
	for _, st := range []Stage{fd, fd.SingleEndedInput(), fd.CrossOutputs()} {
		_, sign, ok := st.matchedHalf()
		require.True(t, ok)
		require.Equal(t, map[bool]float64{true: -1, false: 1}[st.Out != fd.Out], sign)
		for _, m := range []Model{{Ideal: true}, {GBWHz: 1e5, DCGainDB: 80}, {GBWHz: 1e6, DCGainDB: 100, InputCapacitanceFarad: 5e-12, OutputResistanceOhm: 50}} {
			tab, err := st.check()
			require.NoError(t, err)
			half, err := st.nodeTransfer(m, tab, 0, DiffOut)
			require.NoError(t, err)
			full, err := st.nodeTransferFull(m, tab, 0, DiffOut)
			require.NoError(t, err)
			require.Len(t, full.Den, len(half.Den), "the common-mode poles cancel")
			for e := -2.0; e <= 3; e += 0.25 {
				s := complex(0, 2*math.Pi*math.Pow(10, e)*1e3)
				require.Less(t, cmplx.Abs(half.At(s)-full.At(s))/cmplx.Abs(full.At(s)), 1e-9)
			}
		}
	}
	mis := fd
	mis.Parts = append([]Part(nil), fd.Parts...)
	mis.Parts[len(mis.Parts)-1].Value *= 1.001
	_, _, ok := mis.matchedHalf()
	require.False(t, ok)
}
