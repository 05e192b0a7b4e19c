package proto_test

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"sync"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
	"github.com/polewright/polewright/synth/zpk"
)

// The reference vectors in testdata/scipy/proto.json are written by
// testdata/scipy/gen_proto.py with Debian's python3-scipy (the version is
// recorded in the file). Every expected number in this file comes from
// there; each record names the SciPy function that produced it.

type scipyZPK struct {
	Function string       `json:"function"`
	Order    int          `json:"order"`
	Rp       float64      `json:"rp"`
	Rs       float64      `json:"rs"`
	Norm     string       `json:"norm"`
	Zeros    [][2]float64 `json:"zeros"`
	Poles    [][2]float64 `json:"poles"`
	Gain     float64      `json:"gain"`
}

type scipyOrder struct {
	Function        string    `json:"function"`
	Btype           string    `json:"btype"`
	Wp              []float64 `json:"wp"`
	Ws              []float64 `json:"ws"`
	Gpass           float64   `json:"gpass"`
	Gstop           float64   `json:"gstop"`
	Order           int       `json:"order"`
	FractionalOrder float64   `json:"fractional_order"`
}

type scipyBesselOrder struct {
	Function string    `json:"function"`
	Gpass    float64   `json:"gpass"`
	Gstop    float64   `json:"gstop"`
	Ratio    float64   `json:"ratio"`
	Order    int       `json:"order"`
	LossDB   []float64 `json:"loss_db"`
}

type scipyData struct {
	ScipyVersion string             `json:"scipy_version"`
	Prototypes   []scipyZPK         `json:"prototypes"`
	Orders       []scipyOrder       `json:"orders"`
	BesselOrders []scipyBesselOrder `json:"bessel_orders"`
	BesselCurves []scipyBesselOrder `json:"bessel_curves"`
}

var loadScipy = sync.OnceValues(func() (*scipyData, error) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scipy", "proto.json"))
	if err != nil {
		return nil, err
	}
	var d scipyData
	if err := json.Unmarshal(b, &d); err != nil {
		return nil, err
	}
	return &d, nil
})

func scipyRef(t *testing.T) *scipyData {
	t.Helper()
	d, err := loadScipy()
	require.NoError(t, err, "run testdata/scipy/gen_proto.py")
	require.NotEmpty(t, d.Prototypes)
	return d
}

func toComplex(v [][2]float64) []complex128 {
	out := make([]complex128, len(v))
	for i, p := range v {
		out[i] = complex(p[0], p[1])
	}
	return out
}

// requireSameRoots matches every wanted root to the nearest unused root of
// got (the orderings differ) and requires a relative distance ≤ tol.
func requireSameRoots(t *testing.T, what string, got, want []complex128, tol float64) {
	t.Helper()
	require.Len(t, got, len(want), what)
	used := make([]bool, len(got))
	for _, w := range want {
		best, bestD := -1, math.Inf(1)
		for i, g := range got {
			if d := cmplx.Abs(g - w); !used[i] && d < bestD {
				best, bestD = i, d
			}
		}
		used[best] = true
		require.LessOrEqual(t, bestD, tol*cmplx.Abs(w), "%s: %v vs scipy %v", what, got[best], w)
	}
}

func requireSameZPK(t *testing.T, got zpk.ZPK, want scipyZPK, tol float64) {
	t.Helper()
	requireSameRoots(t, "poles", got.Poles, toComplex(want.Poles), tol)
	requireSameRoots(t, "zeros", got.Zeros, toComplex(want.Zeros), tol)
	require.InEpsilon(t, want.Gain, got.Gain, tol, "gain")
}

// eps returns the ripple factor ε = √(10^(dB/10)−1).
func eps(dB float64) float64 { return math.Sqrt(math.Pow(10, dB/10) - 1) }

// delayAtDC returns the group delay at ω = 0 of an all-pole prototype:
// τ(0) = Σ −Re(1/p).
func delayAtDC(h zpk.ZPK) float64 {
	var tau float64
	for _, p := range h.Poles {
		tau -= real(1 / p)
	}
	return tau
}

// poleMean returns (∏|p|)^(1/n).
func poleMean(h zpk.ZPK) float64 {
	var lg float64
	for _, p := range h.Poles {
		lg += math.Log(cmplx.Abs(p))
	}
	return math.Exp(lg / float64(len(h.Poles)))
}

// scipyTol is the agreement required with scipy's prototypes (relative).
const scipyTol = 1e-9

func TestLowpassMatchesScipy(t *testing.T) {
	t.Parallel()
	d := scipyRef(t)
	// threeDB is the loss of scipy's 'mag' Bessel and of buttap at 1 rad/s.
	threeDB := 10 * math.Log10(2)
	type tc struct {
		name string
		ref  scipyZPK
		// ours builds our prototype and converts it to scipy's
		// normalisation with the closed form stated in its case below.
		ours func() (zpk.ZPK, error)
	}
	var cases []tc
	for _, r := range d.Prototypes {
		n := r.Order
		switch r.Function {
		case "buttap":
			// buttap has −3 dB at 1 rad/s, i.e. |H|² = 1/(1+ω^(2n)); ours
			// is 1/(1+ε²ω^(2n)), so ours(s/ε^(1/n)) = buttap: Scale(ε^(1/n)).
			for _, ap := range []float64{0.5, 1, threeDB} {
				cases = append(cases, tc{fmt.Sprintf("buttap/n=%d/ap=%g", n, ap), r, func() (zpk.ZPK, error) {
					h, err := proto.Lowpass(proto.Butterworth, n, ap, 0)
					return h.Scale(math.Pow(eps(ap), 1/float64(n))), err
				}})
			}
		case "cheb1ap":
			// cheb1ap uses the same normalisation (loss rp at 1 rad/s).
			cases = append(cases, tc{fmt.Sprintf("cheb1ap/n=%d/rp=%g", n, r.Rp), r, func() (zpk.ZPK, error) {
				return proto.Lowpass(proto.Chebyshev1, n, r.Rp, 0)
			}})
		case "cheb2ap":
			// cheb2ap puts the stopband edge at 1 rad/s; ours has it at
			// StopbandEdge, so ours(s·ωs) = cheb2ap: Scale(1/ωs). Any
			// rippleDB gives the same shape.
			for _, ap := range []float64{0.1, 1, 3} {
				cases = append(cases, tc{fmt.Sprintf("cheb2ap/n=%d/rs=%g/ap=%g", n, r.Rs, ap), r, func() (zpk.ZPK, error) {
					h, err := proto.Lowpass(proto.Chebyshev2, n, ap, r.Rs)
					if err != nil {
						return h, err
					}
					ws, err := proto.StopbandEdge(proto.Chebyshev2, n, ap, r.Rs)
					return h.Scale(1 / ws), err
				}})
			}
		case "besselap":
			switch r.Norm {
			case "mag":
				// 'mag' is −3 dB at 1 rad/s: ours with rippleDB = 10·log10 2.
				cases = append(cases, tc{fmt.Sprintf("besselap/n=%d/mag", n), r, func() (zpk.ZPK, error) {
					return proto.Lowpass(proto.Bessel, n, threeDB, 0)
				}})
			case "phase":
				// 'phase' has ∏|p| = 1 (gain 1): Scale(1/(∏|p|)^(1/n)).
				cases = append(cases, tc{fmt.Sprintf("besselap/n=%d/phase", n), r, func() (zpk.ZPK, error) {
					h, err := proto.Lowpass(proto.Bessel, n, 1, 0)
					return h.Scale(1 / poleMean(h)), err
				}})
			case "delay":
				// 'delay' has unit group delay at DC: Scale(τ(0)).
				cases = append(cases, tc{fmt.Sprintf("besselap/n=%d/delay", n), r, func() (zpk.ZPK, error) {
					h, err := proto.Lowpass(proto.Bessel, n, 0.5, 0)
					return h.Scale(delayAtDC(h)), err
				}})
			}
		case "ellipap":
			// ellipap uses the same normalisation (loss rp at 1 rad/s,
			// stopband minima rs).
			cases = append(cases, tc{fmt.Sprintf("ellipap/n=%d/rp=%g/rs=%g", n, r.Rp, r.Rs), r, func() (zpk.ZPK, error) {
				return proto.Lowpass(proto.Elliptic, n, r.Rp, r.Rs)
			}})
		default:
			t.Fatalf("unknown scipy function %q", r.Function)
		}
	}
	require.Len(t, cases, 20*3+4*20+3*20*3+3*20+4*3*20)
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			h, err := c.ours()
			require.NoError(t, err)
			requireSameZPK(t, h, c.ref, scipyTol)
		})
	}
}

func approxOf(t *testing.T, function string) proto.Approximation {
	t.Helper()
	switch function {
	case "buttord":
		return proto.Butterworth
	case "cheb1ord":
		return proto.Chebyshev1
	case "cheb2ord":
		return proto.Chebyshev2
	case "ellipord":
		return proto.Elliptic
	}
	t.Fatalf("unknown scipy function %q", function)
	return ""
}

func TestMinOrderMatchesScipy(t *testing.T) {
	t.Parallel()
	d := scipyRef(t)
	count := 0
	for _, r := range d.Orders {
		if r.Btype != "lowpass" {
			continue // used by package synth
		}
		count++
		name := fmt.Sprintf("%s/wp=%.6g/ws=%.6g/gpass=%.4g/gstop=%.4g", r.Function, r.Wp[0], r.Ws[0], r.Gpass, r.Gstop)
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			a := approxOf(t, r.Function)
			// scipy's lowpass nat is stopb/passb.
			ratio := r.Ws[0] / r.Wp[0]
			n, err := proto.MinOrder(a, r.Gpass, r.Gstop, ratio)
			if r.Order <= proto.MaxOrder {
				require.NoError(t, err)
				require.Equal(t, r.Order, n, "scipy %s order (bound %.9g)", r.Function, r.FractionalOrder)
				return
			}
			var oe *proto.OrderError
			require.True(t, errors.As(err, &oe), "want *OrderError, got %v", err)
			require.Equal(t, r.Order, oe.Needed, "scipy %s order (bound %.9g)", r.Function, r.FractionalOrder)
			require.Equal(t, proto.MaxOrder, oe.Max)
			require.False(t, oe.Unreachable)
		})
	}
	require.Greater(t, count, 100)
}

func TestBesselMinOrderMatchesScipy(t *testing.T) {
	t.Parallel()
	d := scipyRef(t)
	require.NotEmpty(t, d.BesselOrders)
	for _, r := range d.BesselOrders {
		name := fmt.Sprintf("gpass=%g/gstop=%g/ratio=%g", r.Gpass, r.Gstop, r.Ratio)
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, "besselap+brentq", r.Function)
			n, err := proto.MinOrder(proto.Bessel, r.Gpass, r.Gstop, r.Ratio)
			require.NoError(t, err)
			require.Equal(t, r.Order, n, "order from scipy besselap+brentq")
			// The losses at ratio that led there, order by order (scipy's
			// brentq stops at xtol 1e-14, so 1e-9 dB is ample).
			for i, want := range r.LossDB {
				h, err := proto.Lowpass(proto.Bessel, i+1, r.Gpass, 0)
				require.NoError(t, err)
				got := -20 * math.Log10(h.MagnitudeAt(r.Ratio))
				require.InDelta(t, want, got, 1e-9, "order %d loss at ratio", i+1)
			}
		})
	}
}

// TestBesselUnreachable uses the scipy-derived loss curves (loss at ratio
// for orders 1..30, "besselap+brentq"): just below a curve's maximum the
// lowest order is the first to reach it; just above, no order does, and
// the error says so and quotes the maximum.
func TestBesselUnreachable(t *testing.T) {
	t.Parallel()
	d := scipyRef(t)
	require.NotEmpty(t, d.BesselCurves)
	for _, c := range d.BesselCurves {
		peak, at := math.Inf(-1), 0
		for i, l := range c.LossDB {
			if l > peak {
				peak, at = l, i+1
			}
		}
		if at == len(c.LossDB) {
			continue // still rising at order 30
		}
		t.Run(fmt.Sprintf("gpass=%g/ratio=%g", c.Gpass, c.Ratio), func(t *testing.T) {
			t.Parallel()
			require.Equal(t, "besselap+brentq", c.Function)
			below := peak - 1e-7
			want := 0
			for i, l := range c.LossDB {
				if l >= below {
					want = i + 1
					break
				}
			}
			n, err := proto.MinOrder(proto.Bessel, c.Gpass, below, c.Ratio)
			if want <= proto.MaxOrder {
				require.NoError(t, err)
				require.Equal(t, want, n)
			} else {
				var oe *proto.OrderError
				require.True(t, errors.As(err, &oe), "want *OrderError, got %v", err)
				require.Equal(t, want, oe.Needed)
			}

			_, err = proto.MinOrder(proto.Bessel, c.Gpass, peak+1e-7, c.Ratio)
			var oe *proto.OrderError
			require.True(t, errors.As(err, &oe), "want *OrderError, got %v", err)
			require.True(t, oe.Unreachable)
			require.Zero(t, oe.Needed)
			require.Equal(t, proto.MaxOrder, oe.Max)
			require.Equal(t, fmt.Sprintf("cannot be met by any order: at this frequency no order gives more than %.4g dB (the limit is 20)", peak), oe.Error())
		})
	}
}
