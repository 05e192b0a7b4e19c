package plotting

import (
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// TestDesignMemo checks that a value (here as-built stages) is computed
// once per design while the design is among the last memoEntries asked
// about, and again once it has been evicted.
func TestDesignMemo(t *testing.T) {
	t.Parallel()
	m := &designMemo[circuit.Cascade]{}
	calls := map[*synth.Design]int{}
	compute := func(d *synth.Design) circuit.Cascade {
		calls[d]++
		return circuit.Cascade{{Num: []float64{float64(calls[d])}, Den: []float64{1}, ScaleRadPerSec: 1}}
	}
	designs := make([]*synth.Design, memoEntries+1)
	for i := range designs {
		designs[i] = &synth.Design{}
	}
	first := m.get(designs[0], compute)
	require.Same(t, &first[0], &m.get(designs[0], compute)[0], "the same stages for the same design")
	for _, d := range designs[1:] {
		m.get(d, compute)
	}
	require.Equal(t, 1, calls[designs[0]])
	m.get(designs[0], compute) // evicted by the last one: computed again
	require.Equal(t, 2, calls[designs[0]])
	require.Len(t, m.keys, memoEntries)
	require.Len(t, m.values, memoEntries)
}
