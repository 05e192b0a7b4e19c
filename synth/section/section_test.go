package section_test

import (
	"context"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/zpk"
)

// butterworthPoles returns the n poles of a Butterworth lowpass with
// −3 dB at w rad/s: w·exp(jπ(2k+n+1)/(2n)), k = 0..n−1 (the textbook closed
// form, e.g. Van Valkenburg, "Analog Filter Design", ch. 4).
func butterworthPoles(n int, w float64) []complex128 {
	out := make([]complex128, n)
	for k := range n {
		out[k] = complex(w, 0) * cmplx.Exp(complex(0, math.Pi*float64(2*k+n+1)/float64(2*n)))
	}
	return out
}

func logGrid(lo, hi float64, n int) []float64 {
	g := make([]float64, n)
	for i := range g {
		g[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	return g
}

func TestFactorKinds(t *testing.T) {
	t.Parallel()
	w := 2 * math.Pi * 1000
	bw5 := butterworthPoles(5, w)
	origin := func(n int) []complex128 { return make([]complex128, n) }
	// Notch zero pairs above and below a pole pair of Q = 5 at w.
	pq := complex(-w/10, w*math.Sqrt(1-1.0/100))
	tests := []struct {
		name  string
		h     zpk.ZPK
		kinds map[section.Kind]int
	}{
		// A 5th-order Butterworth lowpass: two pairs and a real pole.
		{"lowpass", zpk.ZPK{Poles: bw5, Gain: math.Pow(w, 5)}, map[section.Kind]int{section.Lowpass: 3}},
		// The same poles with five zeros at s = 0: a highpass.
		{"highpass", zpk.ZPK{Poles: bw5, Zeros: origin(5), Gain: 1}, map[section.Kind]int{section.Highpass: 3}},
		// Two pole pairs with one zero at s = 0 each: bandpass sections.
		{"bandpass", zpk.ZPK{Poles: []complex128{pq, cmplx.Conj(pq), pq * 2, cmplx.Conj(pq * 2)}, Zeros: origin(2), Gain: 1},
			map[section.Kind]int{section.Bandpass: 2}},
		// jω-axis zeros above and below the pole pairs.
		{"notches", zpk.ZPK{Poles: []complex128{pq, cmplx.Conj(pq), pq * 4, cmplx.Conj(pq * 4)},
			Zeros: []complex128{complex(0, 2*w), complex(0, -2*w), complex(0, 3*w), complex(0, -3*w)}, Gain: 1},
			map[section.Kind]int{section.LowpassNotch: 1, section.HighpassNotch: 1}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			secs, err := section.Factor(tc.h)
			require.NoError(t, err)
			got := map[section.Kind]int{}
			for _, s := range secs {
				got[s.Kind()]++
				// Normalised to unit reference gain (package comment).
				require.InEpsilon(t, 1.0, s.ReferenceGain(), 1e-12)
			}
			require.Equal(t, tc.kinds, got)
		})
	}
}

func TestFactorPairsNearestZero(t *testing.T) {
	t.Parallel()
	// Pole pairs at 1 (Q 10) and 3 rad/s (Q 0.7); zero pairs at 1.2 and 5.
	// Descending Q: the Q-10 pair takes 1.2 (nearest), the other takes 5.
	p1 := complex(-0.05, math.Sqrt(1-0.0025))
	q2 := 0.7
	p2 := complex(-3/(2*q2), 3*math.Sqrt(1-1/(4*q2*q2)))
	h := zpk.ZPK{
		Poles: []complex128{p1, cmplx.Conj(p1), p2, cmplx.Conj(p2)},
		Zeros: []complex128{complex(0, 5), complex(0, -5), complex(0, 1.2), complex(0, -1.2)},
		Gain:  1,
	}
	secs, err := section.Factor(h)
	require.NoError(t, err)
	for _, s := range secs {
		wz, ok := s.ZeroOmegaRadPerSec()
		require.True(t, ok)
		if s.Q() > 5 {
			require.InDelta(t, 1.2, wz, 1e-12)
		} else {
			require.InDelta(t, 5.0, wz, 1e-12)
		}
	}
}

func TestFactorErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		h    zpk.ZPK
	}{
		{"no poles", zpk.ZPK{Gain: 1}},
		{"right half plane", zpk.ZPK{Poles: []complex128{1}, Gain: 1}},
		{"unpaired complex", zpk.ZPK{Poles: []complex128{complex(-1, 1)}, Gain: 1}},
		{"zero off axis", zpk.ZPK{Poles: []complex128{-1, -2}, Zeros: []complex128{-3}, Gain: 1}},
		{"too many axis zeros", zpk.ZPK{Poles: []complex128{-1}, Zeros: []complex128{complex(0, 1), complex(0, -1)}, Gain: 1}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := section.Factor(tc.h)
			require.ErrorIs(t, err, section.ErrFactor)
		})
	}
}

// permutations calls f with every permutation of 0..n-1.
func permutations(n int, f func([]int)) {
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	var rec func(k int)
	rec = func(k int) {
		if k == n {
			f(p)
			return
		}
		for i := k; i < n; i++ {
			p[k], p[i] = p[i], p[k]
			rec(k + 1)
			p[k], p[i] = p[i], p[k]
		}
	}
	rec(0)
}

// TestOrderIsExact checks the dynamic programme against brute force over
// every permutation (an independent computation) on random chains.
func TestOrderIsExact(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	grid := logGrid(1e-2, 1e2, 400)
	for trial := range 40 {
		n := 2 + trial%5 // 2..6 sections: up to 720 permutations
		var poles, zeros []complex128
		for range n {
			w := math.Exp(rng.Float64()*4 - 2)
			q := 0.5 + rng.Float64()*8
			p := complex(-w/(2*q), w*math.Sqrt(1-1/(4*q*q)))
			poles = append(poles, p, cmplx.Conj(p))
			if rng.IntN(3) == 0 {
				zw := w * (1.5 + rng.Float64()*3)
				zeros = append(zeros, complex(0, zw), complex(0, -zw))
			}
		}
		secs, err := section.Factor(zpk.ZPK{Poles: poles, Zeros: zeros, Gain: 1})
		require.NoError(t, err)
		order, worst, err := section.Order(context.Background(), secs, grid)
		require.NoError(t, err)
		require.Len(t, order, n)
		require.InDelta(t, worst, section.WorstPeakDB(secs, order, grid), 1e-9)
		brute := math.Inf(1)
		permutations(n, func(p []int) {
			brute = math.Min(brute, section.WorstPeakDB(secs, p, grid))
		})
		require.InDelta(t, brute, worst, 1e-9, "trial %d", trial)
	}
}

func TestOrderTiesGoToAscendingQ(t *testing.T) {
	t.Parallel()
	// A Butterworth lowpass: the last node (the whole filter) peaks at 0 dB
	// and no partial product peaks higher in ascending-Q order, so every
	// optimal order ties and ascending Q must win (common practice).
	secs, err := section.Factor(zpk.ZPK{Poles: butterworthPoles(8, 1), Gain: 1})
	require.NoError(t, err)
	order, _, err := section.Order(context.Background(), secs, logGrid(1e-2, 1e2, 300))
	require.NoError(t, err)
	for i := 1; i < len(order); i++ {
		require.Less(t, secs[order[i-1]].Q(), secs[order[i]].Q())
	}
}

func TestOrderCancelled(t *testing.T) {
	t.Parallel()
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	secs, err := section.Factor(zpk.ZPK{Poles: butterworthPoles(22, 1), Gain: 1})
	require.NoError(t, err)
	_, _, err = section.Order(ctx, secs, logGrid(1e-2, 1e2, 50))
	require.ErrorIs(t, err, context.Canceled)
}

func TestDistributeKeepsNodesBelowOutput(t *testing.T) {
	t.Parallel()
	// An 8th-order Butterworth with +20 dB of gain: every node must peak at
	// or below the output, the last at exactly 0 dB, and the product of
	// the sections must keep the factored gain asked for.
	poles := butterworthPoles(8, 2*math.Pi*1000)
	chain := 10 * math.Pow(2*math.Pi*1000, 8) // K = 10·ω^8: DC gain 10, the passband maximum
	secs, err := section.Factor(zpk.ZPK{Poles: poles, Gain: chain})
	require.NoError(t, err)
	order, _, err := section.Order(context.Background(), secs, logGrid(10, 1e5, 300))
	require.NoError(t, err)
	ordered := make([]section.Section, len(order))
	for i, k := range order {
		ordered[i] = secs[k]
	}
	peaks, err := section.Distribute(ordered, chain, 10, logGrid(10, 1e5, 300))
	require.NoError(t, err)
	for _, p := range peaks {
		require.LessOrEqual(t, p, 1e-9)
	}
	require.InDelta(t, 0, peaks[len(peaks)-1], 1e-9)
	require.InEpsilon(t, chain, section.Cascade(ordered).Gain, 1e-12)
	// Gain goes as early as it can: the first section carries the +20 dB
	// when its own peak allows (a Q ≈ 0.51 section peaks at 0 dB).
	require.InDelta(t, 20, 20*math.Log10(ordered[0].ReferenceGain()), 1e-9)
}
