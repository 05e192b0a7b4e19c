package proto_test

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
)

// Expected outcomes here follow from the documented argument ranges.

func TestBadArguments(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	type tc struct {
		name string
		call func() error
	}
	lp := func(a proto.Approximation, n int, ap, as float64) func() error {
		return func() error { _, err := proto.Lowpass(a, n, ap, as); return err }
	}
	se := func(a proto.Approximation, n int, ap, as float64) func() error {
		return func() error { _, err := proto.StopbandEdge(a, n, ap, as); return err }
	}
	mo := func(a proto.Approximation, ap, as, r float64) func() error {
		return func() error { _, err := proto.MinOrder(a, ap, as, r); return err }
	}
	cases := []tc{
		{"lowpass/unknown", lp("thomson", 4, 1, 40)},
		{"lowpass/empty", lp("", 4, 1, 40)},
		{"stopband/unknown", se("Butterworth", 4, 1, 40)},
		{"minorder/unknown", mo("cauer", 1, 40, 2)},
	}
	for _, a := range proto.Approximations() {
		for _, n := range []int{-1, 0, proto.MaxOrder + 1, 1000} {
			cases = append(cases,
				tc{fmt.Sprintf("lowpass/%s/n=%d", a, n), lp(a, n, 1, 40)},
				tc{fmt.Sprintf("stopband/%s/n=%d", a, n), se(a, n, 1, 40)})
		}
		for _, ap := range []float64{0, -1, nan, inf, -inf, proto.MaxLossDB + 1} {
			cases = append(cases,
				tc{fmt.Sprintf("lowpass/%s/ripple=%g", a, ap), lp(a, 4, ap, 2000)},
				tc{fmt.Sprintf("stopband/%s/ripple=%g", a, ap), se(a, 4, ap, 2000)},
				tc{fmt.Sprintf("minorder/%s/ripple=%g", a, ap), mo(a, ap, 2000, 2)})
		}
		for _, as := range []float64{1, 0.5, 0, nan, inf, proto.MaxLossDB + 1} {
			// attenDB must exceed rippleDB (1 dB here) where it is used.
			cases = append(cases,
				tc{fmt.Sprintf("stopband/%s/atten=%g", a, as), se(a, 4, 1, as)},
				tc{fmt.Sprintf("minorder/%s/atten=%g", a, as), mo(a, 1, as, 2)})
			if a == proto.Chebyshev2 || a == proto.Elliptic {
				cases = append(cases, tc{fmt.Sprintf("lowpass/%s/atten=%g", a, as), lp(a, 4, 1, as)})
			}
		}
		for _, r := range []float64{1, 0.5, 0, -2, nan, inf} {
			cases = append(cases, tc{fmt.Sprintf("minorder/%s/ratio=%g", a, r), mo(a, 1, 40, r)})
		}
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			err := c.call()
			require.ErrorIs(t, err, proto.ErrBadArgument)
			var oe *proto.OrderError
			require.False(t, errors.As(err, &oe))
		})
	}
}

// TestAttenIgnored: the all-pole approximations ignore attenDB in Lowpass
// (documented), even when it is not a valid attenuation.
func TestAttenIgnored(t *testing.T) {
	t.Parallel()
	for _, a := range []proto.Approximation{proto.Butterworth, proto.Chebyshev1, proto.Bessel} {
		t.Run(string(a), func(t *testing.T) {
			t.Parallel()
			want, err := proto.Lowpass(a, 5, 1, 40)
			require.NoError(t, err)
			for _, as := range []float64{math.NaN(), -3, 0, 1e9} {
				got, err := proto.Lowpass(a, 5, 1, as)
				require.NoError(t, err)
				require.Equal(t, want, got)
			}
		})
	}
}

func TestOrderErrorText(t *testing.T) {
	t.Parallel()
	type tc struct {
		name                 string
		a                    proto.Approximation
		ripple, atten, ratio float64
		want                 string
	}
	cases := []tc{
		// The closed forms of the MinOrder doc (scipy's buttord and
		// cheb1ord), worked by hand: D = (10^6−1)/(10^0.1−1) = 3.8621e6.
		// Butterworth: ln D/(2·ln 1.3318) = 15.1667/0.57306 = 26.47 → 27.
		{"butterworth", proto.Butterworth, 1, 60, 1.3318, "needs order 27, more than the limit of 20"},
		// Chebyshev: acosh(√D)/acosh(1.02) = 8.2765/0.19967 = 41.45 → 42.
		{"chebyshev1", proto.Chebyshev1, 1, 60, 1.02, "needs order 42, more than the limit of 20"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			_, err := proto.MinOrder(c.a, c.ripple, c.atten, c.ratio)
			var oe *proto.OrderError
			require.True(t, errors.As(err, &oe))
			require.Equal(t, c.want, err.Error())
		})
	}
	// The format the lead asked for.
	require.Equal(t, "needs order 27, more than the limit of 20", (&proto.OrderError{Needed: 27, Max: 20}).Error())
}

// TestExtremeArgumentsDoNotPanic runs every approximation and order over
// valid but extreme arguments: each call returns either an error wrapping
// ErrNotRepresentable or a prototype with finite left-half-plane poles and
// a positive gain whose loss at 1 rad/s is rippleDB.
func TestExtremeArgumentsDoNotPanic(t *testing.T) {
	t.Parallel()
	ripples := []float64{1e-300, 1e-12, 1e-3, 1, 100, 999, proto.MaxLossDB}
	for _, a := range proto.Approximations() {
		for _, ap := range ripples {
			atts := []float64{ap * (1 + 1e-15), ap + 1e-9, ap + 1, proto.MaxLossDB}
			for _, as := range atts {
				if !(as > ap) || as > proto.MaxLossDB {
					continue
				}
				t.Run(fmt.Sprintf("%s/ap=%g/as=%g", a, ap, as), func(t *testing.T) {
					t.Parallel()
					for n := 1; n <= proto.MaxOrder; n++ {
						h, err := proto.Lowpass(a, n, ap, as)
						if err != nil {
							require.ErrorIs(t, err, proto.ErrNotRepresentable, "n=%d", n)
							continue
						}
						for _, p := range h.Poles {
							require.Less(t, real(p), 0.0)
							require.False(t, math.IsInf(imag(p), 0) || math.IsNaN(imag(p)))
						}
						require.Greater(t, h.Gain, 0.0)
						require.False(t, math.IsInf(h.Gain, 0))
						if a != proto.Elliptic {
							require.InDelta(t, ap, lossDB(h, 1), 1e-9*math.Max(1, ap), "n=%d loss at 1", n)
						}
						if _, err := proto.StopbandEdge(a, n, ap, as); err != nil {
							require.ErrorIs(t, err, proto.ErrNotRepresentable)
						}
					}
					for _, r := range []float64{1 + 1e-15, 1.001, 2, 1e6} {
						_, err := proto.MinOrder(a, ap, as, r)
						var oe *proto.OrderError
						if err != nil && !errors.As(err, &oe) {
							require.ErrorIs(t, err, proto.ErrNotRepresentable)
						}
					}
					// Any attenDB ≤ MaxLossDB is met by order 1 this far out
					// (a first-order loss there is about 6000 dB).
					n, err := proto.MinOrder(a, ap, as, 1e300)
					require.NoError(t, err)
					require.Equal(t, 1, n)
				})
			}
		}
	}
}
