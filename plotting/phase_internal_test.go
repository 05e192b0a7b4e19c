package plotting

import (
	"math"
	"math/cmplx"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/step"
)

// Elliptic designs of our own with notches (zeros on the jω axis): a
// 7th-order lowpass (three notch pairs) and a bandstop.
const (
	ellipticNotchSpec = `{"approximation": "elliptic", "passband_hz": 1000, "stopband_hz": 1150,
		"passband_ripple_db": 0.5, "stopband_atten_db": 60}`
	ellipticBandstopSpec = `{"response": "bandstop", "approximation": "elliptic", "passband_hz": [800, 1250],
		"stopband_hz": [950, 1050], "passband_ripple_db": 0.5, "stopband_atten_db": 40}`
)

// movedNotches returns the stages of d with every notch's zero pair moved
// off the jω axis by rel of its frequency, into the right half plane in
// odd-numbered sections and the left in even ones: (x − z)(x − z̄) with
// z = wz·(±rel + j·√(1 − rel²)), where the ideal has x² + wz². rel is
// beyond axisSnap, so cascadeZPK keeps the zeros where they are, as it
// would a circuit's whose notch is detuned.
func movedNotches(d *synth.Design, rel float64) circuit.Cascade {
	var out circuit.Cascade
	for i, sec := range d.Cascade() {
		st := step.FromSection(sec)
		num := append([]float64(nil), st.Num...)
		if len(num) == 3 && num[1] == 0 && num[0]*num[2] > 0 {
			wz := math.Sqrt(num[0] / num[2])
			sign := 1.0
			if i%2 == 1 {
				sign = -1
			}
			num[1] = -2 * sign * rel * wz * num[2]
		}
		out = append(out, circuit.Rational{Num: num, Den: st.Den, ScaleRadPerSec: st.ScaleRadPerSec, SectionOrder: sec.Order()})
	}
	return out
}

// movedPhaseDeg is the closed form of the as-built phase less the ideal
// one for movedNotches: the sum over the moved zeros z_b of
// arg(jω − z_b) − arg(jω − z_i), z_i the ideal zero on the axis, taken in
// (−180°, 180°].
func movedPhaseDeg(d *synth.Design, built circuit.Cascade, fHz float64) float64 {
	w := 2 * math.Pi * fHz
	sum := 0.0
	for _, r := range built {
		if len(r.Num) != 3 || r.Num[1] == 0 {
			continue
		}
		// Roots of Num[2]x² + Num[1]x + Num[0], in rad/s.
		wz := math.Sqrt(r.Num[0]/r.Num[2]) * r.ScaleRadPerSec
		re := -r.Num[1] / (2 * r.Num[2]) * r.ScaleRadPerSec
		im := math.Sqrt(wz*wz - re*re)
		for _, s := range []float64{1, -1} {
			moved := cmplx.Phase(complex(-re, w-s*im))
			onAxis := cmplx.Phase(complex(0, w-s*wz))
			sum += moved - onAxis
		}
	}
	return math.Remainder(sum*180/math.Pi, 360)
}

// TestPhaseAtNotches checks that the ideal and as-built phases are drawn
// on one branch across notches: with every notch's zeros moved 0.3 % off
// the axis, to the right in half the sections (whose phase then turns by
// −180° across the notch where the ideal one steps by +180°), the two
// curves stay within 180° of each other everywhere, the as-built one is
// the circuit's phase modulo 360°, and where the ideal magnitude lies
// more than 20 dB above the stopband floor (gain − Amin) their difference
// is the closed form of movedPhaseDeg, a few degrees (at most 3.8° here).
// Within a hair of a notch the true difference swings through up to ±180°
// (the moved zero's angle against the ideal one's step), so the bound
// everywhere is 190°, well short of the whole turns the curves parted by
// when each was unwrapped on its own.
func TestPhaseAtNotches(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name, spec string
	}{{"elliptic-lowpass-7", ellipticNotchSpec}, {"elliptic-bandstop", ellipticBandstopSpec}} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := idealDesign(t, tc.spec)
			require.NotEmpty(t, notchesHz(d), "the design has notches")
			built := movedNotches(d, 0.003)
			sw := newSweep(d, built)
			h := built.Response(nil, sw.f)
			gainDB := 20 * math.Log10(d.Gain)
			largest, above := 0.0, 0
			for i, f := range sw.f {
				diff := sw.builtPh[i] - sw.idealPh[i]
				require.Less(t, math.Abs(diff), 190.0, "at %.6g Hz: no whole turn between the curves", f)
				if cmplx.Abs(h[i]) > 1e-12 {
					require.InDelta(t, 0, math.Remainder(sw.builtPh[i]-cmplx.Phase(h[i])*180/math.Pi, 360), 1e-6,
						"at %.6g Hz: the circuit's phase modulo 360°", f)
				}
				if sw.idealDB[i] >= gainDB-d.Spec.StopbandAttenDB+20 {
					above++
					require.InDelta(t, movedPhaseDeg(d, built, f), diff, 1e-6, "at %.6g Hz", f)
					largest = math.Max(largest, math.Abs(diff))
				}
			}
			require.Greater(t, above, 100)
			require.Less(t, largest, 5.0, "a few degrees above the stopband")
			// Beyond the last notch the phases agree to a few degrees: no
			// drift of 360° per notch.
			last := len(sw.f) - 1
			require.InDelta(t, 0, sw.builtPh[last]-sw.idealPh[last], 5)
		})
	}
}

// TestAlignPhase checks alignPhase on hand-made phases: a whole-turn
// offset is removed at the anchor, a growing difference is kept, and a
// turn of −180° across a notch where the ideal steps by +180° is put on
// the ideal's branch.
func TestAlignPhase(t *testing.T) {
	t.Parallel()
	f := []float64{10, 20, 50, 99, 100, 101, 200, 500, 1000}
	cases := []struct {
		name               string
		built, ideal, want []float64
		notches            []float64
	}{
		{"offset-by-turns", []float64{-720, -730, -740, -750, -760, -770, -780, -790, -800},
			[]float64{0, -10, -20, -30, -40, -50, -60, -70, -80},
			[]float64{0, -10, -20, -30, -40, -50, -60, -70, -80}, nil},
		{"growing-lag", []float64{0, -100, -250, -400, -410, -420, -590, -740, -880},
			[]float64{0, 0, 0, 0, 0, 0, 0, 0, 0},
			[]float64{0, -100, -250, -400, -410, -420, -590, -740, -880}, nil},
		// The ideal steps +180° at 100 Hz; the built turns −180° through
		// 99–101 Hz and ends 360° below it.
		{"notch", []float64{-10, -20, -30, -90, -180, -270, -380, -390, -400},
			[]float64{-10, -20, -30, -40, 130, 120, -20, -30, -40},
			[]float64{-10, -20, -30, -90, 180, 90, -20, -30, -40}, []float64{100}},
		{"non-finite", []float64{math.NaN(), 5, math.Inf(1), 365},
			[]float64{0, 0, 0, 0},
			[]float64{math.NaN(), 5, math.Inf(1), 5}, nil},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got := alignPhase(tc.built, tc.ideal, f, tc.notches)
			require.Len(t, got, len(tc.want))
			for i := range got {
				if math.IsNaN(tc.want[i]) {
					require.True(t, math.IsNaN(got[i]))
					continue
				}
				require.Equal(t, tc.want[i], got[i], "point %d", i)
			}
		})
	}
}

// TestPhaseAtNotchesBuilt checks the same on a circuit synth builds (the
// elliptic lowpass above on E96/E12 parts and the default 10 MHz op-amp):
// within a few degrees where the ideal magnitude is more than 20 dB above
// the stopband floor (0.83° when written), and never a whole turn apart.
func TestPhaseAtNotchesBuilt(t *testing.T) {
	t.Parallel()
	d := builtDesign(t, ellipticNotchSpec)
	sw := designSweep(d)
	require.NotNil(t, sw.builtPh)
	gainDB := 20 * math.Log10(d.Gain)
	above := 0
	for i, f := range sw.f {
		diff := sw.builtPh[i] - sw.idealPh[i]
		require.Less(t, math.Abs(diff), 190.0, "at %.6g Hz", f)
		if sw.idealDB[i] >= gainDB-d.Spec.StopbandAttenDB+20 {
			above++
			require.Less(t, math.Abs(diff), 5.0, "at %.6g Hz", f)
		}
	}
	require.Greater(t, above, 100)
}

// TestPhaseAcrossBuiltNotches checks a circuit whose notch zeros synth's
// op-amp model moves off the axis by more than axisSnap (a 10th-order
// elliptic lowpass at 20 kHz on the default 10 MHz op-amp): the phase of
// its poles and zeros, unwrapped on its own, parts from the ideal one by
// −360° at notches (about 1,800° in all, the drift the page showed), while
// the drawn as-built phase leaves each notch's stretch within 45° of the
// difference it entered with.
func TestPhaseAcrossBuiltNotches(t *testing.T) {
	t.Parallel()
	d := builtDesign(t, `{"approximation": "elliptic", "passband_hz": 20000, "stopband_hz": 24000,
		"passband_ripple_db": 0.1, "stopband_atten_db": 80}`)
	tfs := usable(asBuilt(d))
	sw := newSweep(d, tfs)
	h, ok := cascadeZPK(tfs)
	require.True(t, ok)
	raw := response.PhaseDeg(nil, h, sw.f)
	notches := notchesHz(d)
	require.GreaterOrEqual(t, len(notches), 4)
	inStretch := func(f float64) bool {
		for _, n := range notches {
			if math.Abs(f/n-1) < notchRel {
				return true
			}
		}
		return false
	}
	rawTurns, checked := 0.0, 0
	for _, n := range notches {
		before, after := -1, -1
		for i, f := range sw.f {
			if f < n*(1-notchRel) && !inStretch(f) {
				before = i
			}
			if f > n*(1+notchRel) && !inStretch(f) && after < 0 {
				after = i
			}
		}
		if before < 0 || after < 0 {
			continue
		}
		diff := func(ph []float64, i int) float64 { return ph[i] - sw.idealPh[i] }
		checked++
		require.InDelta(t, diff(sw.builtPh, before), diff(sw.builtPh, after), 45, "across the notch at %.6g Hz", n)
		rawTurns += math.Round((diff(raw, after) - diff(raw, before)) / 360)
	}
	require.GreaterOrEqual(t, checked, 3)
	require.LessOrEqual(t, rawTurns, -3.0, "unwrapped on its own, the circuit's phase loses whole turns at the notches")
}
