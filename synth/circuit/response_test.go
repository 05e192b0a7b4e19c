package circuit_test

import (
	"math"
	"math/cmplx"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
)

// mixedChain is a three-stage chain of different topologies.
func mixedChain(m circuit.Model) circuit.Chain {
	return circuit.Chain{Model: m, Stages: []circuit.Stage{
		sallenKeyLP(skR1, skR2, skC1, skC2),
		mfbLP(mfR1, mfR2, mfR3, mfC1, mfC2),
		rcBuffer(rcR, rcC),
	}}
}

func logGrid(lo, hi float64, n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return f
}

// TestChainResponse checks the chain's response against the product of
// its stages' direct nodal solutions (reference: Stage.SolveAt; the
// product rule holds because every stage output is an ideal source).
func TestChainResponse(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name  string
		model circuit.Model
	}{{"ideal", ideal}, {"single-pole", singlePole}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ch := mixedChain(tc.model)
			freq := append([]float64{0}, logGrid(1, 1e7, 141)...)
			h, err := ch.Response(nil, freq)
			require.NoError(t, err)
			db, err := ch.MagnitudeDB(nil, freq)
			require.NoError(t, err)
			for i, f := range freq {
				want := complex(1, 0)
				for _, st := range ch.Stages {
					v, err := st.SolveAt(ch.Model, complex(0, 2*math.Pi*f))
					require.NoError(t, err)
					want *= v
				}
				require.LessOrEqual(t, relErr(h[i], want), 1e-12, "f = %v Hz", f)
				require.InDelta(t, 20*math.Log10(cmplx.Abs(want)), db[i], 1e-10, "f = %v Hz", f)
			}
		})
	}
}

func TestResponseDestination(t *testing.T) {
	t.Parallel()
	ch := mixedChain(singlePole)
	tfs, err := ch.TransferFunctions()
	require.NoError(t, err)
	require.Len(t, tfs, 3)
	freq := logGrid(10, 1e5, 300)
	want := tfs.Response(nil, freq)

	dst := make([]complex128, len(freq)+5)
	got := tfs.Response(dst, freq)
	require.Equal(t, want, got)
	require.Same(t, &dst[0], &got[0], "a long enough dst is reused")

	// MagnitudeDB may overwrite its frequencies (dst = freqHz).
	db := tfs.MagnitudeDB(nil, freq)
	inPlace := tfs.MagnitudeDB(slices.Clone(freq), slices.Clone(freq))
	require.Equal(t, db, inPlace)
	fc := slices.Clone(freq)
	require.Equal(t, db, tfs.MagnitudeDB(fc, fc))

	// The cascade's single-point form agrees.
	for i, f := range freq {
		require.LessOrEqual(t, relErr(tfs.AtHz(f), want[i]), 1e-14) // rounding only
	}
}

// TestResponseNoAlloc is not parallel: testing.AllocsPerRun refuses to
// run in a parallel test.
func TestResponseNoAlloc(t *testing.T) {
	tfs, err := mixedChain(singlePole).TransferFunctions()
	require.NoError(t, err)
	freq := logGrid(10, 1e5, 1000)
	dst := make([]complex128, len(freq))
	require.Zero(t, testing.AllocsPerRun(10, func() { tfs.Response(dst, freq) }))
	db := make([]float64, len(freq))
	require.Zero(t, testing.AllocsPerRun(10, func() { tfs.MagnitudeDB(db, freq) }))
}

func TestResponseErrors(t *testing.T) {
	t.Parallel()
	ch := mixedChain(ideal)
	for _, tc := range []struct {
		name string
		f    float64
	}{{"negative", -1}, {"nan", math.NaN()}, {"inf", math.Inf(1)}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := ch.Response(nil, []float64{1, tc.f})
			require.ErrorIs(t, err, circuit.ErrInvalid)
			require.ErrorContains(t, err, "freqHz[1]")
			_, err = ch.MagnitudeDB(nil, []float64{tc.f})
			require.ErrorIs(t, err, circuit.ErrInvalid)
		})
	}
}
