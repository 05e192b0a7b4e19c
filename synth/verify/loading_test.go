package verify_test

import (
	"math"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	ct "github.com/polewright/polewright/synth/circuit/circuittest"
	"github.com/polewright/polewright/synth/verify"
)

// TestMonteCarloCarriesLoading: with parts all but exact, every trial's
// response on the grid, and the judge's evaluation between grid points,
// equal the chain's as-built response with its inter-stage loading
// (circuit.Chain.MagnitudeDB) within 1e-6 dB, on chains whose stages take
// the fused path (degree ≤ 3) and, with input capacitance, the wider one.
// The loading there exceeds 0.05 dB somewhere, so a trial without it
// fails the check.
func TestMonteCarloCarriesLoading(t *testing.T) {
	t.Parallel()
	stages := []circuit.Stage{
		ct.Inverting(1e3, 2.2e3), ct.SallenKeyLP(1e3, 1.2e3, 22e-9, 10e-9), ct.MFBLP(1e3, 2.2e3, 1e3, 47e-9, 4.7e-9),
	}
	freq := []float64{100, 1e3, 5e3, 1e4, 3e4, 1e5, 2e5}
	between := []float64{2e3, 7e4, 1.5e5}
	for _, m := range []circuit.Model{
		{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 200},
		{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 200, InputCapacitanceFarad: 5e-12},
	} {
		ch := circuit.Chain{Stages: stages, Model: m}
		want, err := ch.MagnitudeDB(nil, append(append([]float64(nil), freq...), between...))
		require.NoError(t, err)
		tfs, err := ch.TransferFunctions()
		require.NoError(t, err)
		plain := tfs.MagnitudeDB(nil, freq)
		most := 0.0
		for i := range freq {
			most = math.Max(most, math.Abs(want[i]-plain[i]))
		}
		require.Greater(t, most, 0.05)
		var mu sync.Mutex
		trials := 0
		_, err = verify.MonteCarlo(background(), ch, verify.Tolerance{ResistorPct: 1e-9, CapacitorPct: 1e-9},
			verify.MonteCarloOptions{Trials: 20, Seed: 1, FreqHz: freq, Workers: 2},
			func(db []float64, eval func(float64) float64) bool {
				mu.Lock()
				defer mu.Unlock()
				trials++
				for i := range freq {
					require.InDelta(t, want[i], db[i], 1e-6, "at %g Hz", freq[i])
				}
				for k, f := range between {
					require.InDelta(t, want[len(freq)+k], eval(f), 1e-6, "at %g Hz", f)
				}
				return true
			})
		require.NoError(t, err)
		require.Equal(t, 20, trials)
	}
}
