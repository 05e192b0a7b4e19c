package equalize_test

import (
	"context"
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/equalize"
	"github.com/polewright/polewright/synth/proto"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/xform"
	"github.com/polewright/polewright/synth/zpk"
)

func lowpass(t testing.TB, a proto.Approximation, n int, edgeHz float64) zpk.ZPK {
	t.Helper()
	p, err := proto.Lowpass(a, n, 1, 60)
	require.NoError(t, err)
	return xform.LowpassToLowpass(p, 2*math.Pi*edgeHz)
}

// TestSpread: (max − min)/mean with the trapezoidal mean, by hand:
// [1, 2, 3] has mean (0.5 + 2 + 1.5)/2 = 2, spread 2/2 = 1; a constant
// has none.
func TestSpread(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		v    []float64
		want float64
	}{
		{[]float64{1, 2, 3}, 1},
		{[]float64{4, 4, 4, 4}, 0},
		{[]float64{1, 3}, 1},
		{[]float64{2, 1, 1, 2}, 1 / ((1 + 1 + 1 + 1.0) / 3)},
	} {
		require.InDelta(t, tc.want, equalize.Spread(tc.v), 1e-15, "%v", tc.v)
	}
}

// TestAllpassSectionDelays: the sections the equaliser appends have the
// group delays of their closed forms, 2a/(a² + ω²) and
// 2(ω0/Q)(ω0² + ω²)/((ω0² − ω²)² + (ω·ω0/Q)²), computed by
// response.GroupDelayS from their poles and zeros (1e-12 relative), and
// unit magnitude everywhere.
func TestAllpassSectionDelays(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		sec  section.Section
		tau  func(w float64) float64
	}{
		{"first order", section.FirstOrderAllpass(3000), func(w float64) float64 { return 2 * 3000 / (3000*3000 + w*w) }},
		{"q 0.5", section.SecondOrderAllpass(5000, 0.5), closed2(5000, 0.5)},
		{"q 0.9", section.SecondOrderAllpass(5000, 0.9), closed2(5000, 0.9)},
		{"q 4", section.SecondOrderAllpass(700, 4), closed2(700, 4)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			require.True(t, tc.sec.IsAllpass())
			require.Equal(t, section.Allpass, tc.sec.Kind())
			freqs := []float64{0, 10, 300, 800, 1111, 5000}
			got := response.GroupDelayS(nil, tc.sec.ZPK(), freqs)
			for i, f := range freqs {
				w := 2 * math.Pi * f
				require.InEpsilon(t, tc.tau(w), got[i], 1e-12, "%g Hz", f)
				require.InDelta(t, 1, tc.sec.ZPK().MagnitudeAt(w), 1e-12)
			}
			require.InDelta(t, 1, real(tc.sec.ZPK().At(0)), 1e-12, "+1 at DC")
		})
	}
}

func closed2(w0, q float64) func(float64) float64 {
	return func(w float64) float64 {
		b := w0 / q
		d := w0*w0 - w*w
		return 2 * b * (w0*w0 + w*w) / (d*d + w*w*b*b)
	}
}

// TestEqualize: the spread reached is within the target and is what
// SpreadOf finds for the filter with the sections; a filter within the
// target gets none; the search keeps to MaxEvaluations when it fails;
// bad bands and targets are errors; a done context stops it.
func TestEqualize(t *testing.T) {
	t.Parallel()
	ctx := context.Background()
	h := lowpass(t, proto.Butterworth, 5, 1000)
	r, err := equalize.Equalize(ctx, h, 0, 1000, 2)
	require.NoError(t, err)
	require.NotEmpty(t, r.Sections)
	require.LessOrEqual(t, r.SpreadPct, 2.0)
	require.Greater(t, r.FilterSpreadPct, 2.0)
	all := h.Clone()
	for _, s := range r.Sections {
		all.Poles = append(all.Poles, s.Poles...)
		all.Zeros = append(all.Zeros, s.Zeros...)
		all.Gain *= s.Gain
	}
	require.InDelta(t, r.SpreadPct, equalize.SpreadOf(all, 0, 1000), 1e-12)
	require.LessOrEqual(t, r.Evaluations, equalize.MaxEvaluations)

	r, err = equalize.Equalize(ctx, h, 0, 1000, 90)
	require.NoError(t, err)
	require.Empty(t, r.Sections)

	_, err = equalize.Equalize(ctx, lowpass(t, proto.Elliptic, 8, 1000), 0, 1000, 0.01)
	var le *equalize.LimitError
	require.True(t, errors.As(err, &le), "%v", err)
	require.LessOrEqual(t, le.Evaluations, equalize.MaxEvaluations)
	require.Greater(t, le.BestPct, 0.01)
	require.Less(t, le.BestPct, le.FilterPct)
	t.Logf("elliptic 8: %.4g %% → %.4g %% in %d evaluations (bound %d)", le.FilterPct, le.BestPct, le.Evaluations, equalize.MaxEvaluations)

	for _, bad := range [][3]float64{{-1, 1000, 2}, {1000, 1000, 2}, {0, math.Inf(1), 2}, {0, 1000, 0}, {0, 1000, math.NaN()}} {
		_, err := equalize.Equalize(ctx, h, bad[0], bad[1], bad[2])
		require.Error(t, err, "%v", bad)
	}
	done, cancel := context.WithCancel(ctx)
	cancel()
	_, err = equalize.Equalize(done, h, 0, 1000, 0.5)
	require.ErrorIs(t, err, context.Canceled)
}

// BenchmarkEqualize is the search for an order-5 Chebyshev lowpass to 2 %
// and one that fails (order-8 elliptic, all 8 sections).
func BenchmarkEqualize(b *testing.B) {
	for _, bc := range []struct {
		name   string
		a      proto.Approximation
		n      int
		target float64
	}{{"chebyshev1-5-2pct", proto.Chebyshev1, 5, 2}, {"elliptic-8-fails", proto.Elliptic, 8, 0.01}} {
		b.Run(bc.name, func(b *testing.B) {
			h := lowpass(b, bc.a, bc.n, 1000)
			b.ReportAllocs()
			for b.Loop() {
				_, _ = equalize.Equalize(context.Background(), h, 0, 1000, bc.target)
			}
		})
	}
}
