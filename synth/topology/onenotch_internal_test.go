package topology

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
)

// onStage builds the one-amplifier notch from part values, as build does.
func onStage(v onParts) circuit.Stage {
	o := &options{rname: "", rtol: 1, ctol: 5}
	d := onDesign{v: v, x: v}
	return d.build(target{kind: section.Notch}, o).stage
}

// Worked examples of the one-amplifier notch (the Delyiannis-Friend
// bandpass with feedforward to both op-amp inputs; Friend, Harris and
// Hilberman 1975, used from memory), normalised to ω0 = 1 rad/s with unit
// capacitors, the part values worked by hand from the design equations of
// oneAmpNotch. The reference is the stage's full nodal analysis
// (circuit.Stage.SolveAt, ideal op-amp), which knows nothing of those
// equations, against the target transfer function written out.
//
//   - Lowpass-notch, the classic normalised form (α = 1, C1 = C2 = C, no
//     R2): Q = 2, ωz = 3. C = 1/(2Q) = 1/4 with R1 = 1 gives
//     G1 = ω0·Q·(C1 + C2) = 1 ✓; R3 = 4Q² = 16; K = 1/(1 + ωz²/(2Q²))
//     = 1/(1 + 9/8) = 8/17 (R4 = 9, R5 = 8); the DC gain is then
//     h0 = K·ωz²/ω0² = 72/17, and R6 (m–ground) = R3·K/(h0 − K)
//     = R3/(ωz² − 1) = 2. α = K + h0·r/Q² = 8/17 + (72/17)(1/2)/4 = 1 ✓.
//     H = (8/17)·(s² + 9)/(s² + s/2 + 1).
//   - Highpass-notch: Q = 1, ωz = 1/2, g = h∞ = 1/2, C1 = C2 = 1:
//     G1 = 2, R3 = 1/G3 = 2 (G3 = ω0·C1·C2/(Q·(C1 + C2)) = 1/2); K = 1/2
//     (R4 = R5 = 1); h0 = g·ωz²/ω0² = 1/8; e = G3·(K − h0) = 3/16
//     = G6·(1 − K), so R6 (in–m) = 8/3; α = K + h0·r/Q² = 1/2 + 1/16
//     = 9/16, G1a = 9/8 (R1 = 8/9), G1b = 7/8 (R2 = 8/7).
//     H = (1/2)·(s² + 1/4)/(s² + s + 1).
//   - Notch with C3 to ground for unity gain: Q = 2, g = 1, C1 = C2 = C3
//     = 1: m = 1 + C3·(1/C1 + 1/C2) = 3, K = g/m = 1/3 (R4 = 2, R5 = 1);
//     G1 = 4, G3 = 1/4 (R3 = 4); e = G3·(K − g) = −1/6 = −G6·K, so R6
//     (m–ground) = 2; α = K·(1 + C3/C2) + g·r/Q² = 2/3 + 1/8 = 19/24,
//     G1a = 19/6 (R1 = 6/19), G1b = 5/6 (R2 = 6/5).
//     H = (s² + 1)/(s² + s/2 + 1).
func TestOneAmpNotchWorkedExamples(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name     string
		v        onParts
		k        float64 // numerator scale
		wz2      float64 // ωz²
		w0, q    float64
		kind     section.Kind
		g        float64 // reference gain
		wantAlfa float64
	}{
		{"lowpass-notch", onParts{r1: 1, r3: 16, r4: 9, r5: 8, r6: 2, r6g: true, c1: 0.25, c2: 0.25}, 8.0 / 17, 9, 1, 2, section.LowpassNotch, 72.0 / 17, 1},
		{"highpass-notch", onParts{r1: 8.0 / 9, r2: 8.0 / 7, r3: 2, r4: 1, r5: 1, r6: 8.0 / 3, c1: 1, c2: 1}, 0.5, 0.25, 1, 1, section.HighpassNotch, 0.5, 9.0 / 16},
		{"notch", onParts{r1: 6.0 / 19, r2: 6.0 / 5, r3: 4, r4: 2, r5: 1, r6: 2, r6g: true, c1: 1, c2: 1, c3: 1}, 1, 1, 1, 2, section.Notch, 1, 19.0 / 24},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			st := onStage(tc.v)
			require.NoError(t, st.Validate())
			for _, w := range []float64{0, 0.1, 0.5, 0.9, 1, 1.7, 3, 3.2, 10} {
				s := complex(0, w)
				want := complex(tc.k, 0) * (s*s + complex(tc.wz2, 0)) / (s*s + s*complex(tc.w0/tc.q, 0) + complex(tc.w0*tc.w0, 0))
				got, err := st.SolveAt(circuit.Model{Ideal: true}, s)
				require.NoError(t, err)
				require.InDelta(t, 0, cmplx.Abs(got-want), 1e-12*(1+cmplx.Abs(want)), "ω = %g: nodal %v, target %v", w, got, want)
			}
			// The closed forms of oneAmpNotch give the same figures.
			w0, q, g, wz := onFigures(tc.v, tc.kind)
			require.InDelta(t, tc.w0, w0, 1e-12)
			require.InDelta(t, tc.q, q, 1e-12)
			require.InDelta(t, tc.g, g, 1e-12)
			require.InDelta(t, math.Sqrt(tc.wz2), wz, 1e-12)
			_, n1, _, _, _, _ := onCoef(tc.v)
			require.InDelta(t, 0, n1, 1e-12)
			alpha := 1.0
			if tc.v.r2 > 0 {
				alpha = (1 / tc.v.r1) / (1/tc.v.r1 + 1/tc.v.r2)
			}
			require.InDelta(t, tc.wantAlfa, alpha, 1e-12)
		})
	}
}

// TestNotchResidualByMonteCarlo: notchResidual, the first-order rms of
// the gain at the design's zero frequency, against a Monte Carlo of the
// stage's nodal analysis (circuit.Stage.SolveAt, which knows nothing of
// onCoef): 3000 boards with every part uniform within its tolerance (1 %
// resistors, 5 % capacitors), |H(jωz)|/g, rms over the boards, agrees
// within 15 % (the sampling error of an rms over 3000 draws is about
// 2 %; the rest is second order). Designs: series-value designs of each
// kind.
func TestNotchResidualByMonteCarlo(t *testing.T) {
	t.Parallel()
	o, err := newOptions(DefaultOptions())
	require.NoError(t, err)
	rng := rand.New(rand.NewPCG(3, 4))
	for _, sec := range []section.Section{
		notchSec(1000, 3, 2000, 1.2), notchSec(17.2e3, 0.86, 176e3, 1), notchSec(1663, 0.83, 284, 0.89), notchSec(50, 2, 50, 0.5),
	} {
		tg, err := newTarget(sec)
		require.NoError(t, err)
		d, e := oneAmpNotch(tg, o)
		require.Nil(t, e)
		want := notchResidual(partsOf(t, d.stage), tg.wz, d.g, 1, 5)
		var sum float64
		const trials = 3000
		for range trials {
			st := d.stage
			st.Parts = slices.Clone(st.Parts)
			for j := range st.Parts {
				tol := 0.01
				if st.Parts[j].Kind == circuit.Capacitor {
					tol = 0.05
				}
				st.Parts[j].Value *= 1 + tol*(2*rng.Float64()-1)
			}
			h, err := st.SolveAt(circuit.Model{Ideal: true}, complex(0, tg.wz))
			require.NoError(t, err)
			sum += sq(cmplx.Abs(h) / d.g)
		}
		got := math.Sqrt(sum / trials)
		t.Logf("%s f0 %.4g Hz Q %.3g fz %.4g Hz: residual predicted %.1f dB, Monte Carlo %.1f dB",
			sec.Kind(), tg.w0/(2*math.Pi), tg.q, tg.wz/(2*math.Pi), 20*math.Log10(want), 20*math.Log10(got))
		require.InEpsilon(t, want, got, 0.15)
	}
}

// partsOf reads the one-amplifier notch's part values back from its stage.
func partsOf(t *testing.T, st circuit.Stage) onParts {
	t.Helper()
	var v onParts
	for _, p := range st.Parts {
		switch {
		case p.Ref == "C1":
			v.c1 = p.Value
		case p.Ref == "C2":
			v.c2 = p.Value
		case p.Ref == "C3":
			v.c3, v.c3in = p.Value, p.A == circuit.In
		case p.A == circuit.In && p.B == "a":
			v.r1 = p.Value
		case p.A == "a":
			v.r2 = p.Value
		case p.A == "m" && p.B == "out":
			v.r3 = p.Value
		case p.B == "p":
			v.r4 = p.Value
		case p.A == "p":
			v.r5 = p.Value
		case p.B == "m":
			v.r6 = p.Value
		case p.A == "m":
			v.r6, v.r6g = p.Value, true
		}
	}
	require.Positive(t, v.r1)
	require.Positive(t, v.r3)
	return v
}

// notchSec is a section with poles at f0, Q and zeros at ±j·2π·fz, with
// reference gain g (|H(0)|, or |H(∞)| for a highpass-notch).
func notchSec(f0, q, fz, g float64) section.Section {
	w0, wz := 2*math.Pi*f0, 2*math.Pi*fz
	re := -w0 / (2 * q)
	im := w0 * math.Sqrt(1-1/(4*q*q))
	s := section.Section{Poles: []complex128{complex(re, im), complex(re, -im)}, Zeros: []complex128{complex(0, wz), complex(0, -wz)}, Gain: g}
	if s.Kind() != section.HighpassNotch {
		s.Gain = g * w0 * w0 / (wz * wz)
	}
	return s
}

// TestNotchResidualAnalytic: notchResidual's chain-rule derivatives of
// onCoef against notchResidualFD (relative steps of 1e-6 in each part),
// on random parts in every arrangement (R2, R4/R5, R6 and C3 present or
// not, R6 to ground or to the input, C3 to the input or to ground),
// within 1e-4 relative.
func TestNotchResidualAnalytic(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(7, 8))
	logU := func(lo, hi float64) float64 { return lo * math.Pow(hi/lo, rng.Float64()) }
	compared := 0
	for i := range 2000 {
		v := onParts{
			r1: logU(1e3, 1e5), r3: logU(1e3, 1e5),
			c1: logU(1e-9, 1e-7), c2: logU(1e-9, 1e-7),
			r6g: rng.IntN(2) == 0, c3in: rng.IntN(2) == 0,
		}
		if rng.IntN(2) == 0 {
			v.r2 = logU(1e3, 1e5)
		}
		if rng.IntN(2) == 0 {
			v.r4, v.r5 = logU(1e3, 1e5), logU(1e3, 1e5)
		}
		if rng.IntN(2) == 0 {
			v.r6 = logU(1e3, 1e6)
		}
		if rng.IntN(2) == 0 {
			v.c3 = logU(1e-10, 1e-8)
		}
		n2, _, n0, _, _, d0 := onCoef(v)
		wz := math.Sqrt(math.Abs(n0 / n2))
		if !(wz > 0) || math.IsInf(wz, 0) {
			continue
		}
		g := math.Abs(n0 / d0)
		if !(g > 0) {
			g = 1
		}
		got := notchResidual(v, wz, g, 1, 5)
		want := notchResidualFD(v, wz, g, 1, 5)
		require.InEpsilon(t, want, got, 1e-4, "case %d: %+v", i, v)
		compared++
	}
	require.Greater(t, compared, 1900)
}
