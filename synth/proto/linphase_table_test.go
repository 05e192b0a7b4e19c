package proto_test

import (
	"fmt"
	"math"
	"sort"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
)

// linPhase05Printed holds the linear-phase poles with an equiripple phase
// error of 0.5°, normalised to 3 dB at 1 rad/s, orders 2–8, four printed
// decimals (one member of each conjugate pair, with a positive imaginary
// part; real poles last). COPIED FROM A PAGE, NOT FROM MEMORY: RF Cafe,
// "Gaussian Lowpass Filter Poles (to 6 dB & to 12 dB)",
// http://www.rfcafe.com/references/electrical/gaussian-poles.htm, whose table
// credits an Analog Devices application note. The page prints these rows
// under the heading "Gaussian to 12 dB". They are the 0.5° equiripple
// linear-phase poles all the same, and the heading looks exchanged:
// [TestLinearPhaseHalfDegreeTableIsEquiripple] shows, from the printed
// values alone and with no code of this project, that each row's phase
// departs from a straight line through the origin by ±0.5° alternately at
// n frequencies and loses 3.01 dB at 1 rad/s. A transitional Gaussian does
// neither.
//
// One printed digit pair is transposed: order 8 prints 0.4148 for the real
// part of its fourth pair. With 0.4148 the row's own phase error ranges
// over 0.36°–0.64° instead of 0.5°, and its loss at 1 rad/s is 3.008 dB;
// with 0.4184 both come right (the test checks both statements), so
// [linPhase05Corrected] uses 0.4184.
var linPhase05Printed = map[int][]complex128{
	2: {-0.8590 + 0.6981i},
	3: {-0.6969 + 1.1318i, -0.8257},
	4: {-0.7448 + 0.5133i, -0.6037 + 1.4983i},
	5: {-0.6775 + 0.9401i, -0.5412 + 1.8256i, -0.7056},
	6: {-0.6519 + 0.4374i, -0.6167 + 1.2963i, -0.4893 + 2.0982i},
	7: {-0.6190 + 0.8338i, -0.5816 + 1.6455i, -0.4598 + 2.3994i, -0.6283},
	8: {-0.5791 + 0.3857i, -0.5665 + 1.1505i, -0.5303 + 1.8914i, -0.4148 + 2.5780i},
}

// linPhase05Corrected is [linPhase05Printed] with order 8's transposed
// digits put back (0.4148 → 0.4184).
func linPhase05Corrected() map[int][]complex128 {
	out := make(map[int][]complex128, len(linPhase05Printed))
	for n, row := range linPhase05Printed {
		out[n] = append([]complex128(nil), row...)
	}
	out[8][3] = -0.4184 + 2.5780i
	return out
}

// tableLossDB is the loss at ω of the all-pole lowpass with poles p and
// unit gain at DC, from the pole values alone.
func tableLossDB(p []complex128, w float64) float64 {
	lin := 1.0
	for _, q := range p {
		lin *= cmplxAbs(complex(0, w)-q) / cmplxAbs(q)
	}
	return 20 * math.Log10(lin)
}

func cmplxAbs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }

// tablePhaseRad and tableDelayS are the phase (continuous, all poles in the
// left half-plane) and group delay of the all-pole lowpass with poles p.
func tablePhaseRad(p []complex128, w float64) float64 {
	ph := 0.0
	for _, q := range p {
		ph -= math.Atan2(w-imag(q), -real(q))
	}
	return ph
}

func tableDelayS(p []complex128, w float64) float64 {
	d := 0.0
	for _, q := range p {
		x, y := -real(q), w-imag(q)
		d += x / (x*x + y*y)
	}
	return d
}

// equiripplePhaseErrorDeg looks, from the poles alone, for the straight
// phase line −τ·ω through the origin from which the phase departs by equal
// and alternating amounts: for each τ the error e(ω) = φ(ω) + τ·ω has its
// extrema where the group delay crosses τ; the first n of them must
// alternate in sign, and τ is chosen (a scan, then golden-section
// refinement) to make their magnitudes as equal as possible. It returns the
// n extreme errors in degrees, in order of frequency.
func equiripplePhaseErrorDeg(p []complex128, n int) []float64 {
	const wMax, points = 4.0, 8001
	ws := make([]float64, points)
	tg := make([]float64, points)
	for i := range ws {
		ws[i] = wMax * float64(i+1) / points
		tg[i] = tableDelayS(p, ws[i])
	}
	// extrema returns the errors at the first n crossings of τ, or nil when
	// there are fewer or they do not alternate.
	extrema := func(tau float64) []float64 {
		var e []float64
		for i := 1; i < points && len(e) < n; i++ {
			a, b := tg[i-1]-tau, tg[i]-tau
			if (a < 0) == (b < 0) {
				continue
			}
			lo, hi := ws[i-1], ws[i] // bisection on the delay itself
			for k := 0; k < 50; k++ {
				mid := 0.5 * (lo + hi)
				if (tableDelayS(p, mid)-tau < 0) == (a < 0) {
					lo = mid
				} else {
					hi = mid
				}
			}
			w := 0.5 * (lo + hi)
			e = append(e, (tablePhaseRad(p, w)+tau*w)*180/math.Pi)
		}
		if len(e) < n {
			return nil
		}
		for i := 1; i < n; i++ {
			if (e[i] < 0) == (e[i-1] < 0) {
				return nil
			}
		}
		return e
	}
	spread := func(tau float64) float64 {
		e := extrema(tau)
		if e == nil {
			return math.Inf(1)
		}
		lo, hi := math.Inf(1), 0.0
		for _, v := range e {
			lo, hi = math.Min(lo, math.Abs(v)), math.Max(hi, math.Abs(v))
		}
		return hi - lo
	}
	t0 := tableDelayS(p, 0)
	const steps = 2000
	best, bestTau := math.Inf(1), t0
	step := 0.5 * t0 / steps
	for k := 0; k <= steps; k++ {
		tau := 0.7*t0 + float64(k)*step
		if s := spread(tau); s < best {
			best, bestTau = s, tau
		}
	}
	lo, hi := bestTau-step, bestTau+step
	g := (math.Sqrt(5) - 1) / 2
	for k := 0; k < 60; k++ {
		a, b := hi-g*(hi-lo), lo+g*(hi-lo)
		if spread(a) < spread(b) {
			hi = b
		} else {
			lo = a
		}
	}
	if e := extrema(0.5 * (lo + hi)); e != nil {
		return e
	}
	return extrema(bestTau)
}

// TestLinearPhaseHalfDegreeTableIsEquiripple checks the printed table by
// itself: every row, as corrected, has an alternating phase error of
// 0.5° ± 0.03° (four printed decimals move the phase by up to about 0.02°)
// at n frequencies and a loss of 3.0103 dB ± 0.005 dB at 1 rad/s. The row
// of order 8 as printed fails both, which is why it is corrected.
func TestLinearPhaseHalfDegreeTableIsEquiripple(t *testing.T) {
	t.Parallel()
	rows := linPhase05Corrected()
	orders := make([]int, 0, len(rows))
	for n := range rows {
		orders = append(orders, n)
	}
	sort.Ints(orders)
	for _, n := range orders {
		p := withConjugates(rows[n])
		require.Len(t, p, n)
		e := equiripplePhaseErrorDeg(p, n)
		require.NotNil(t, e, "order %d: no alternating phase error", n)
		for i, v := range e {
			require.InDelta(t, 0.5, math.Abs(v), 0.03, "order %d, extremum %d: %v", n, i, e)
		}
		require.InDelta(t, 3.0103, tableLossDB(p, 1), 0.005, "order %d", n)
	}
	printed := withConjugates(linPhase05Printed[8])
	e := equiripplePhaseErrorDeg(printed, 8)
	worst := 0.0
	for _, v := range e {
		worst = math.Max(worst, math.Abs(math.Abs(v)-0.5))
	}
	require.Greater(t, worst, 0.1, "order 8 as printed should not be equiripple: %v", e)
	require.Greater(t, math.Abs(tableLossDB(printed, 1)-3.0103), 0.002)
}

// TestLinearPhaseHalfDegreeAgainstTable compares the computed prototype
// (phase_error_deg 0.5, 3.0103 dB at 1 rad/s) with the corrected table:
// half a printed unit is 5e-5, and 1e-4 is allowed as for the other
// tables. One printed value is further off: order 7's second pair prints
// 1.6455 where the computed pole is 1.6453; the table's own phase error is
// as equal with either (0.49°–0.515° against 0.489°–0.511°), so 3e-4 is
// allowed for that pair alone.
func TestLinearPhaseHalfDegreeAgainstTable(t *testing.T) {
	t.Parallel()
	for n, row := range linPhase05Corrected() {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			t.Parallel()
			h, err := proto.Lowpass(proto.LinearPhase, n, 3.0102999566398121, 0, proto.PhaseErrorDeg(0.5))
			require.NoError(t, err)
			require.Len(t, h.Poles, n)
			for _, w := range withConjugates(row) {
				got := h.Poles[0]
				for _, q := range h.Poles {
					if cmplxAbs(q-w) < cmplxAbs(got-w) {
						got = q
					}
				}
				tol := 1e-4
				if n == 7 && math.Abs(math.Abs(imag(w))-1.6455) < 1e-9 {
					tol = 3e-4
				}
				require.InDelta(t, real(w), real(got), tol, "table pole %v, computed %v", w, got)
				require.InDelta(t, imag(w), imag(got), tol, "table pole %v, computed %v", w, got)
			}
		})
	}
}
