package step_test

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/step"
)

// scipyCase is one record of ../../testdata/scipy/step.json (see gen_step.py):
// scipy.signal.step of an analog (z, p, k) filter at the times t; Method
// "sos-ss" for a highpass, bandpass or bandstop stepped as scipy's
// zpk2sos sections chained in state space (10 significant digits), else
// through its transfer function (13 digits).
type scipyCase struct {
	Name   string       `json:"name"`
	Method string       `json:"method"`
	Zeros  [][2]float64 `json:"zeros"`
	Poles  [][2]float64 `json:"poles"`
	Gain   float64      `json:"gain"`
	T      []float64    `json:"t"`
	Y      []float64    `json:"y"`
}

func complexes(v [][2]float64) []complex128 {
	out := make([]complex128, len(v))
	for i, p := range v {
		out[i] = complex(p[0], p[1])
	}
	return out
}

// sectionsOf splits K·∏(s−z)/∏(s−p) into first- and second-order sections:
// each upper pole with its conjugate, each real pole alone; complex zero
// pairs go to the pole pairs in turn, real zeros to the remaining room; the
// gain goes to the first section.
func sectionsOf(zeros, poles []complex128, k float64) []section.Section {
	var secs []section.Section
	for _, p := range poles {
		switch {
		case imag(p) > 0:
			secs = append(secs, section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Gain: 1})
		case imag(p) == 0:
			secs = append(secs, section.Section{Poles: []complex128{p}, Gain: 1})
		}
	}
	room := func(s section.Section) int { return len(s.Poles) - len(s.Zeros) }
	for _, z := range zeros {
		if imag(z) <= 0 {
			continue
		}
		for i := range secs {
			if room(secs[i]) == 2 {
				secs[i].Zeros = append(secs[i].Zeros, z, cmplx.Conj(z))
				break
			}
		}
	}
	for _, z := range zeros {
		if imag(z) != 0 {
			continue
		}
		for i := range secs {
			if room(secs[i]) > 0 {
				secs[i].Zeros = append(secs[i].Zeros, z)
				break
			}
		}
	}
	secs[0].Gain = k
	return secs
}

// TestAgainstSciPy compares with scipy.signal.step, both as one rational
// stage of the whole filter and as a cascade of sections (the form of the
// design's ideal step response, step.FromSection): the lowpass cases to
// 1e-11 absolute, the highpass, bandpass and bandstop cases ("sos-ss") to
// 1e-9 of the peak |y| (their reference has 10 significant digits; the
// worst difference is about 4e-10 of the peak, the reference's
// rounding).
func TestAgainstSciPy(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../../testdata/scipy/step.json")
	require.NoError(t, err)
	var data struct {
		Cases []scipyCase `json:"cases"`
	}
	require.NoError(t, json.Unmarshal(raw, &data))
	require.NotEmpty(t, data.Cases)
	for _, tc := range data.Cases {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			zeros, poles := complexes(tc.Zeros), complexes(tc.Poles)
			var secs []step.Stage
			for _, s := range sectionsOf(zeros, poles, tc.Gain) {
				secs = append(secs, step.FromSection(s))
			}
			whole := []step.Stage{rationalOf(zeros, poles, tc.Gain, 1)}
			for name, stages := range map[string][]step.Stage{"sections": secs, "rational": whole} {
				y, err := step.Response(stages, tc.T)
				require.NoError(t, err, name)
				if tc.Method == "sos-ss" {
					// reference: scipy.signal.step of the chained zpk2sos/tf2ss
					// state space, 10 significant digits.
					peak, worst := 0.0, 0.0
					for i, v := range tc.Y {
						peak = math.Max(peak, math.Abs(v))
						worst = math.Max(worst, math.Abs(y[i]-v))
					}
					t.Logf("%s/%s: worst difference %.2g of the peak %.4g", tc.Name, name, worst/peak, peak)
					require.LessOrEqual(t, worst, 1e-9*peak, name)
				} else {
					// reference: scipy.signal.step of the zpk, written with 10
					// significant digits (gen_step.py); SciPy and this package
					// agree to about 1e-12 here, so the rounding of the file
					// (5e-10 of a value near 1) is what the tolerance allows.
					requireClose(t, tc.Y, y, 1e-9)
				}
				require.InDelta(t, step.DCGain(stages), tc.Y[len(tc.Y)-1], 1e-3*math.Max(1, math.Abs(step.DCGain(stages))), name)
			}
		})
	}
}

// scipyFigCase is one record of ../../testdata/scipy/stepfig.json (see
// gen_stepfig.py): scipy.signal.step of an analog (z, p, k) filter, by
// chained sections, at N equally spaced times from 0 to TEndS, with at
// least 100 points per period of its fastest ringing pole.
type scipyFigCase struct {
	Name  string       `json:"name"`
	Zeros [][2]float64 `json:"zeros"`
	Poles [][2]float64 `json:"poles"`
	Gain  float64      `json:"gain"`
	TEndS float64      `json:"t_end"`
	N     int          `json:"n"`
	Y     []float64    `json:"y"`
}

// lastOutsideTime returns the time of the last sample of y (at the times
// i·h) farther than band from final, and −1 for none.
func lastOutsideTime(y []float64, h, final, band float64) float64 {
	for i := len(y) - 1; i >= 0; i-- {
		if math.Abs(y[i]-final) > band {
			return float64(i) * h
		}
	}
	return -1
}

// TestFiguresAgainstSciPy checks Measure's figures of the ideal sections
// (step.FromSection, as the design's ideal response) of a lowpass, two
// highpasses, a bandpass and two bandstops against figures worked out
// here, by plain sampling, from scipy.signal's dense step response of the
// same zpk (reference: scipy.signal.step of zpk2sos sections chained by
// tf2ss, testdata/scipy/stepfig.json):
//
//   - the final value is H(0) from the zpk; the peak is the largest
//     sample |y| (or |H(0)|);
//   - the rule: overshoot where |H(0)| ≥ 1 % of the peak (the lowpass,
//     the bandstops), otherwise undershoot (the highpasses, among them the
//     even-order elliptic one with H(0) at its stopband level, 46 dB down,
//     and the bandpass);
//   - overshoot = largest sample beyond H(0) in % of |H(0)|, undershoot =
//     largest sample of the sign opposite to the peak's in % of the peak:
//     a sampled maximum falls short of the true one by at most
//     (π/100)²/2 ≈ 5e-4 of it at 100 points per period, so within 1e-3
//     relative (plus the reference's 10 digits);
//   - settling to ±0.1 % of the peak and to ±½ LSB of 12 bits of a full
//     scale of 1: it lies between the last sample outside the band
//     widened by 0.2 % (outside the true band for sure) and the sample
//     after the last one outside the band narrowed by 0.2 % (between
//     samples the response exceeds them by at most 5e-4 of the band).
func TestFiguresAgainstSciPy(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../../testdata/scipy/stepfig.json")
	require.NoError(t, err)
	var data struct {
		Cases []scipyFigCase `json:"cases"`
	}
	require.NoError(t, json.Unmarshal(raw, &data))
	require.Len(t, data.Cases, 6)
	for _, tc := range data.Cases {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			zeros, poles := complexes(tc.Zeros), complexes(tc.Poles)
			require.Len(t, tc.Y, tc.N)
			h := tc.TEndS / float64(tc.N-1)
			fastest := 0.0
			for _, p := range poles {
				fastest = math.Max(fastest, math.Abs(imag(p)))
			}
			require.LessOrEqual(t, h, 2*math.Pi/(100*fastest), "100 points per period")

			// H(0) from the zpk.
			dc := complex(tc.Gain, 0)
			for _, z := range zeros {
				dc *= -z
			}
			for _, p := range poles {
				dc /= -p
			}
			final := real(dc)
			kp := 0
			for i, v := range tc.Y {
				if math.Abs(v) > math.Abs(tc.Y[kp]) {
					kp = i
				}
			}
			peak := math.Max(math.Abs(tc.Y[kp]), math.Abs(final))
			sp := math.Copysign(1, tc.Y[kp])
			overshoot := math.Abs(final) >= 0.01*peak
			wantOver := strings.Contains(tc.Name, "lowpass") || strings.Contains(tc.Name, "bandstop")
			require.Equal(t, wantOver, overshoot, "the rule picks overshoot for lowpass and bandstop only")
			refExtreme := 0.0
			for _, v := range tc.Y {
				if overshoot {
					refExtreme = math.Max(refExtreme, math.Copysign(1, final)*(v-final)/math.Abs(final)*100)
				} else {
					refExtreme = math.Max(refExtreme, -sp*v/peak*100)
				}
			}

			var stages []step.Stage
			for _, s := range sectionsOf(zeros, poles, tc.Gain) {
				stages = append(stages, step.FromSection(s))
			}
			for _, b := range []step.Band{{Frac: 1e-3}, {Frac: step.HalfLSBFrac(12), FullScale: 1}} {
				fig, err := step.Measure(stages, b)
				require.NoError(t, err)
				require.InDelta(t, final, fig.FinalValue, 1e-12)
				require.InEpsilon(t, peak, fig.PeakAbs, 1e-3)
				got := fig.UndershootPct
				if overshoot {
					got = fig.OvershootPct
					require.True(t, math.IsNaN(fig.UndershootPct))
				} else {
					require.True(t, math.IsNaN(fig.OvershootPct) && math.IsNaN(fig.RiseTimeS))
				}
				require.InDelta(t, refExtreme, got, 1e-3*refExtreme+1e-6, "over/undershoot %%")

				band := b.Frac * peak
				if b.FullScale > 0 {
					band = b.Frac * b.FullScale
				}
				lo := lastOutsideTime(tc.Y, h, final, band*1.002)
				hi := lastOutsideTime(tc.Y, h, final, band*0.998) + h
				require.GreaterOrEqual(t, fig.SettlingS, lo, "settling after the last sample outside")
				require.LessOrEqual(t, fig.SettlingS, hi, "settling before the samples are all inside")
				t.Logf("band %.3g: final %.4g, peak %.4g (scipy samples %.4g), %s %.5g %% (samples %.5g %%), settling %.6g s in [%.6g, %.6g]",
					fig.BandAbs, fig.FinalValue, fig.PeakAbs, peak, map[bool]string{true: "overshoot", false: "undershoot"}[overshoot],
					got, refExtreme, fig.SettlingS, lo, hi)
			}
		})
	}
}
