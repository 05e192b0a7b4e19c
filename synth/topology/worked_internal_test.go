package topology

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// Worked examples: each design function of this package against the design
// procedure of a published text, evaluated in the test in the text's own
// notation, and against the numbers to the digits the example prints.
// All sources were used from memory (no copy at hand); where the printed
// numbers are not remembered reliably, the numbers below are the text's
// formula evaluated by hand and are marked so.

// digits3 asserts that got rounds to want at three significant figures.
func digits3(t *testing.T, want, got float64, what string) {
	t.Helper()
	e := math.Floor(math.Log10(math.Abs(want))) - 2
	require.InDelta(t, want, got, 0.5*math.Pow(10, e)*(1+1e-9), what)
}

// TI "Op Amps for Everyone" (SLOD006), ch. 16, unity-gain Sallen-Key
// lowpass, 2nd-order 3-dB Chebyshev (from memory): fc = 3 kHz,
// a1 = 1.0650, b1 = 1.9305, C1 = 22 nF to ground, C2 ≥ C1·4b1/a1² (printed
// as 150 nF), R1,2 = [a1·C2 ∓ √(a1²C2² − 4b1·C1·C2)]/(4π·fc·C1·C2). TI's
// C1 (ground) is this package's C2 and TI's C2 (feedback) its C1.
func TestWorkedTIUnitySallenKeyLowpass(t *testing.T) {
	t.Parallel()
	a1, b1, fc := 1.0650, 1.9305, 3000.0
	tiC1, tiC2 := 22e-9, 150e-9
	digits3(t, 150e-9, tiC1*4*b1/a1/a1, "C2 bound (printed 150 nF)")
	d := math.Sqrt(a1*a1*tiC2*tiC2 - 4*b1*tiC1*tiC2)
	tiR1 := (a1*tiC2 - d) / (4 * math.Pi * fc * tiC1 * tiC2)
	tiR2 := (a1*tiC2 + d) / (4 * math.Pi * fc * tiC1 * tiC2)
	// The text's formula evaluated by hand: 1.23 kΩ and 1.33 kΩ.
	digits3(t, 1.23e3, tiR1, "R1 by hand")
	digits3(t, 1.33e3, tiR2, "R2 by hand")

	w0 := 2 * math.Pi * fc / math.Sqrt(b1) // s² + (a1/b1)·ωc·s + ωc²/b1
	q := math.Sqrt(b1) / a1
	roots, n := skLowpassR1(w0, q, 1, tiC2, tiC1)
	require.Equal(t, 2, n)
	got := []float64{roots[0], roots[1]}
	require.InDelta(t, tiR1, min(got[0], got[1]), 1e-9*tiR1)
	require.InDelta(t, tiR2, max(got[0], got[1]), 1e-9*tiR2)
	for _, r1 := range got {
		r2 := 1 / (w0 * w0 * tiC1 * tiC2 * r1)
		w, qq := skLowpassPoles(r1, r2, tiC2, tiC1, 1)
		require.InDelta(t, w0, w, 1e-9*w0)
		require.InDelta(t, q, qq, 1e-9*q)
	}
}

// Analog Devices, "Analog Filters" (Op Amp Applications Handbook ch. 8,
// MT-220 series), Sallen-Key lowpass with gain H (from memory):
// k = 2π·F0·C1, α = 1/Q, m = α²/4 + H − 1, C2 = m·C1, R1 = 2/(α·k),
// R2 = α/(2·m·k). Worked by hand for F0 = 1 kHz, Q = 0.7071, H = 2,
// C1 = 10 nF: m = 1.5, C2 = 15 nF, R1 = 22.5 kΩ, R2 = 7.50 kΩ. The
// procedure is the double root of this package's quadratic.
func TestWorkedADISallenKeyGeneralK(t *testing.T) {
	t.Parallel()
	f0, q, h, c1 := 1000.0, 0.7071, 2.0, 10e-9
	k := 2 * math.Pi * f0 * c1
	alpha := 1 / q
	m := alpha*alpha/4 + h - 1
	c2 := m * c1
	r1, r2 := 2/(alpha*k), alpha/(2*m*k)
	digits3(t, 1.5, m, "m")
	digits3(t, 22.5e3, r1, "R1")
	digits3(t, 7.50e3, r2, "R2")
	w0 := 2 * math.Pi * f0
	roots, n := skLowpassR1(w0, q, h, c1, c2)
	require.GreaterOrEqual(t, n, 1)
	require.InDelta(t, r1, roots[0], 1e-6*r1)
	w, qq := skLowpassPoles(r1, r2, c1, c2, h)
	require.InDelta(t, w0, w, 1e-9*w0)
	require.InDelta(t, q, qq, 1e-9*q)
}

// TI "Op Amps for Everyone" ch. 16, unity-gain Sallen-Key highpass with
// C1 = C2 = C (from memory): R1 = 1/(π·fc·C·a1), R2 = a1/(4π·fc·C·b1).
// Worked by hand for a 1 kHz Butterworth (a1 = 1.4142, b1 = 1),
// C = 100 nF: R1 = 2.25 kΩ, R2 = 1.13 kΩ. TI's R1 (to ground) is this
// package's R2; TI's R2 (feedback) its R1.
func TestWorkedTIUnitySallenKeyHighpass(t *testing.T) {
	t.Parallel()
	a1, b1, fc, c := 1.4142, 1.0, 1000.0, 100e-9
	tiR1 := 1 / (math.Pi * fc * c * a1)
	tiR2 := a1 / (4 * math.Pi * fc * c * b1)
	digits3(t, 2.25e3, tiR1, "R1")
	digits3(t, 1.13e3, tiR2, "R2")
	w0 := 2 * math.Pi * fc * math.Sqrt(b1)
	q := math.Sqrt(b1) / a1
	roots, n := skHighpassR2(w0, q, 1, c, c)
	require.Equal(t, 1, n)
	require.InDelta(t, tiR1, roots[0], 1e-9*tiR1)
	r1 := 1 / (w0 * w0 * c * c * roots[0])
	require.InDelta(t, tiR2, r1, 1e-9*tiR2)

	// The same through Realize: capacitors pinned to 100 nF, exact
	// resistors.
	opt := DefaultOptions()
	opt.Exact, opt.MinFarad, opt.MaxFarad, opt.MinOhm = true, 100e-9, 100e-9, 100
	tg := target{order: 2, kind: section.Highpass, w0: w0, q: q, g: 1}
	o, err := newOptions(opt)
	require.NoError(t, err)
	d, e := sallenKey(tg, o)
	require.Nil(t, e)
	require.InDelta(t, tiR1, partValue(t, d, "p", "0"), 1e-9*tiR1)
	require.InDelta(t, tiR2, partValue(t, d, "a", "out"), 1e-9*tiR2)
}

// TI "Active Low-Pass Filter Design" (SLOA049) and "Op Amps for Everyone"
// ch. 16, multiple-feedback lowpass (from memory): R2 = [a1·C2 −
// √(a1²C2² − 4b1·C1·C2·(1 − A0))]/(4π·fc·C1·C2), R1 = −R2/A0,
// R3 = b1/(4π²·fc²·C1·C2·R2), C2 ≥ 4b1·(1 − A0)·C1/a1². Worked by hand for a
// 1 kHz Butterworth with A0 = −1, C1 = 10 nF: C2 ≥ 40.0 nF, so 47 nF;
// R1 = R2 = 6.91 kΩ, R3 = 7.80 kΩ.
func TestWorkedTIMultipleFeedbackLowpass(t *testing.T) {
	t.Parallel()
	a1, b1, fc, a0, c1, c2 := 1.4142, 1.0, 1000.0, -1.0, 10e-9, 47e-9
	digits3(t, 40.0e-9, 4*b1*(1-a0)*c1/a1/a1, "C2 bound")
	tiR2 := (a1*c2 - math.Sqrt(a1*a1*c2*c2-4*b1*c1*c2*(1-a0))) / (4 * math.Pi * fc * c1 * c2)
	tiR1 := -tiR2 / a0
	tiR3 := b1 / (4 * math.Pi * math.Pi * fc * fc * c1 * c2 * tiR2)
	digits3(t, 6.91e3, tiR2, "R2")
	digits3(t, 6.91e3, tiR1, "R1")
	digits3(t, 7.80e3, tiR3, "R3")
	w0 := 2 * math.Pi * fc / math.Sqrt(b1)
	q := math.Sqrt(b1) / a1
	roots, n := mfbLowpassR2(w0, q, -a0, c1, c2)
	require.Equal(t, 2, n)
	require.InDelta(t, tiR2, roots[0], 1e-9*tiR2)
	w, qq, g := mfbLowpassPoles(tiR1, tiR2, tiR3, c1, c2)
	require.InDelta(t, w0, w, 1e-9*w0)
	require.InDelta(t, q, qq, 1e-9*q)
	require.InDelta(t, 1, g, 1e-12)
}

// TI "Op Amps for Everyone" ch. 16, multiple-feedback bandpass with
// C1 = C2 = C (from memory, printed example): fm = 1 kHz, Q = 10,
// Am = −2, C = 100 nF give R2 = Q/(π·fm·C) = 31.8 kΩ (feedback),
// R1 = R2/(−2·Am) = 7.96 kΩ (input), R3 = −Am·R1/(2Q² + Am) = 80.4 Ω (to
// ground). This package names the feedback resistor R3 and the ground
// resistor R2.
func TestWorkedTIMultipleFeedbackBandpass(t *testing.T) {
	t.Parallel()
	fm, q, am, c := 1000.0, 10.0, -2.0, 100e-9
	tiR2 := q / (math.Pi * fm * c)
	tiR1 := tiR2 / (-2 * am)
	tiR3 := -am * tiR1 / (2*q*q + am)
	digits3(t, 31.8e3, tiR2, "R2")
	digits3(t, 7.96e3, tiR1, "R1")
	digits3(t, 80.4, tiR3, "R3")
	w0 := 2 * math.Pi * fm
	r1, r2, r3, ok := mfbBandpassR(w0, q, -am, c, c)
	require.True(t, ok)
	require.InDelta(t, tiR1, r1, 1e-9*tiR1)
	require.InDelta(t, tiR3, r2, 1e-9*tiR3)
	require.InDelta(t, tiR2, r3, 1e-9*tiR2)
	w, qq, g := mfbBandpassPoles(r1, r1*r2/(r1+r2), r3, c, c)
	require.InDelta(t, w0, w, 1e-9*w0)
	require.InDelta(t, q, qq, 1e-9*q)
	require.InDelta(t, -am, g, 1e-9)
	// Without the ground resistor the gain at f0 is the form's limit
	// 2Q² = 200 at equal capacitors; above it there is no design.
	r1lim, r2lim, _, ok := mfbBandpassR(w0, q, 2*q*q, c, c)
	require.True(t, ok)
	require.True(t, math.IsInf(r2lim, 1))
	_, _, g = mfbBandpassPoles(r1lim, r1lim, r3, c, c)
	require.InDelta(t, 2*q*q, g, 1e-9*g)
	_, _, _, ok = mfbBandpassR(w0, q, 2*q*q*1.01, c, c)
	require.False(t, ok)

	// The same through Realize: capacitors pinned to 100 nF, exact
	// resistors, a resistor window that admits 80 Ω.
	opt := DefaultOptions()
	opt.Exact, opt.MinFarad, opt.MaxFarad, opt.MinOhm = true, c, c, 10
	o, err := newOptions(opt)
	require.NoError(t, err)
	d, e := multipleFeedback(target{order: 2, kind: section.Bandpass, w0: w0, q: q, g: -am}, o)
	require.Nil(t, e)
	require.InDelta(t, tiR1, partValue(t, d, "in", "a"), 1e-9*tiR1)
	require.InDelta(t, tiR3, partValue(t, d, "a", "0"), 1e-9*tiR3)
	require.InDelta(t, tiR2, partValue(t, d, "m", "out"), 1e-9*tiR2)
}

// First-order RC (Williams & Taylor, "Electronic Filter Design Handbook",
// ch. 3, from memory): R = 1/(2π·f·C); 1 kHz with 10 nF is 15.9 kΩ.
func TestWorkedFirstOrder(t *testing.T) {
	t.Parallel()
	opt := DefaultOptions()
	opt.Exact, opt.MinFarad, opt.MaxFarad = true, 10e-9, 10e-9
	o, err := newOptions(opt)
	require.NoError(t, err)
	tg := target{order: 1, kind: section.Lowpass, w0: 2 * math.Pi * 1000, g: 1}
	for _, f := range []func(target, *options) (design, *Error){rcBuffer, invertingRC} {
		d, e := f(tg, o)
		require.Nil(t, e)
		var r float64
		for _, p := range d.stage.Parts {
			if p.Kind == circuit.Resistor {
				r = max(r, p.Value)
			}
		}
		digits3(t, 15.9e3, r, d.stage.Topology)
	}
}

// Kerwin-Huelsman-Newcomb state-variable with equal integrators (the
// paper's and MT-220's usual choice, from memory): R6·C1 = R7·C2 = 1/ω0,
// R3 = R2 (b = 1), and for unity lowpass gain R1 = R3 (a = 1); then
// Q = 1/(β·3), so R4/R5 = 3Q − 1. Worked by hand for f0 = 1 kHz, Q = 20,
// C = 10 nF: integrator resistors 15.9 kΩ, R4/R5 = 59.
func TestWorkedStateVariable(t *testing.T) {
	t.Parallel()
	opt := DefaultOptions()
	opt.Exact, opt.MinFarad, opt.MaxFarad, opt.MaxOhm = true, 10e-9, 10e-9, 1e6
	o, err := newOptions(opt)
	require.NoError(t, err)
	d, e := stateVariable(target{order: 2, kind: section.Lowpass, w0: 2 * math.Pi * 1000, q: 20, g: 1}, o)
	require.Nil(t, e)
	digits3(t, 15.9e3, partValue(t, d, "hp", "i1"), "R6")
	digits3(t, 15.9e3, partValue(t, d, "bp", "i2"), "R7")
	r3 := partValue(t, d, "hp", "m")
	require.InDelta(t, 1, partValue(t, d, "lp", "m")/r3, 1e-12)
	require.InDelta(t, 1, partValue(t, d, "in", "m")/r3, 1e-12)
	require.InDelta(t, 59, partValue(t, d, "bp", "p")/partValue(t, d, "p", "0"), 1e-9)
	require.Equal(t, "lp", d.stage.Out)
}

// partValue returns the value of the part between nodes a and b.
func partValue(t *testing.T, d design, a, b string) float64 {
	t.Helper()
	for _, p := range d.stage.Parts {
		if (p.A == a && p.B == b) || (p.A == b && p.B == a) {
			return p.Value
		}
	}
	t.Fatalf("no part between %s and %s in %+v", a, b, d.stage.Parts)
	return 0
}
