package section_test

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/zpk"
)

// TestExtremumSecondOrderClosedForm refines the peak of a second-order
// lowpass section, unit DC gain, from a point 5 % off it, against the
// closed form (direct maximisation of 1/((1−x²)² + (x/Q)²), x = ω/ω0):
// the peak lies at x² = 1 − 1/(2Q²) and is |H|² = Q⁴/(Q² − 1/4).
func TestExtremumSecondOrderClosedForm(t *testing.T) {
	t.Parallel()
	w0 := 2 * math.Pi * 1000
	for _, q := range []float64{0.8, 2, 10, 300, 1e4} {
		t.Run(fmt.Sprint(q), func(t *testing.T) {
			t.Parallel()
			p := complex(-w0/(2*q), w0*math.Sqrt(1-1/(4*q*q)))
			secs, err := section.Factor(zpk.ZPK{Poles: []complex128{p, cmplx.Conj(p)}, Gain: w0 * w0})
			require.NoError(t, err)
			wPeak := w0 * math.Sqrt(1-1/(2*q*q))
			want := q * q * q * q / (q*q - 0.25)
			lo, hi := wPeak*(1-2/q), wPeak*(1+2/q)
			start := wPeak * (1 + 0.05/q)
			got := section.Extremum(secs, lo, hi, start, true)
			require.InEpsilon(t, want, got, 1e-12)
		})
	}
}

// TestExtremumNotchMinimum finds the least |H|² of a lowpass-notch
// section between its pole frequency and twice its zero frequency: the
// jω-axis zero itself, where |H|² is 0 (closed form: the numerator
// ω_z² − ω² vanishes), approached to within 1e-20 of the DC gain.
func TestExtremumNotchMinimum(t *testing.T) {
	t.Parallel()
	w0, wz := 1.0, 3.0
	p := complex(-w0/4, w0*math.Sqrt(1-1.0/16))
	secs, err := section.Factor(zpk.ZPK{Poles: []complex128{p, cmplx.Conj(p)},
		Zeros: []complex128{complex(0, wz), complex(0, -wz)}, Gain: 1})
	require.NoError(t, err)
	got := section.Extremum(secs, 2, 6, 2.5, false)
	require.Less(t, got, 1e-20)
}

// TestOrderPeaksMatchesParts checks that OrderPeaks returns the order of
// Order (or ascending Q where that is no worse) with the peaks NodePeaks
// finds for it, on an 8th-order Butterworth (Van Valkenburg's closed-form
// poles, butterworthPoles).
func TestOrderPeaksMatchesParts(t *testing.T) {
	t.Parallel()
	secs, err := section.Factor(zpk.ZPK{Poles: butterworthPoles(8, 1), Gain: 1})
	require.NoError(t, err)
	grid := logGrid(1e-2, 1e2, 300)
	ordered, peaks, err := section.OrderPeaks(context.Background(), secs, grid)
	require.NoError(t, err)
	order, _, err := section.Order(context.Background(), secs, grid)
	require.NoError(t, err)
	for i, k := range order {
		require.Equal(t, secs[k], ordered[i])
	}
	require.Equal(t, section.NodePeaks(ordered, grid), peaks)
	// The whole Butterworth chain peaks at its DC gain, 1.
	require.InDelta(t, 1, peaks[len(peaks)-1], 1e-12)
}
