package synth_test

import (
	"context"
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/zpk"
)

// scipyAllpassCase is one record of testdata/scipy/allpass.json (see
// gen_allpass.py): a filter from scipy.signal, its poles and zeros, and
// its group delay on 201 evenly spaced passband frequencies, from
// scipy.signal.freqs_zpk.
type scipyAllpassCase struct {
	Name string `json:"name"`
	Spec struct {
		Response         string    `json:"response"`
		Approximation    string    `json:"approximation"`
		Order            int       `json:"order"`
		PassbandHz       []float64 `json:"passband_hz"`
		PassbandRippleDB *float64  `json:"passband_ripple_db"`
		MaxSpreadPct     float64   `json:"max_spread_pct"`
	} `json:"spec"`
	Poles  [][2]float64 `json:"poles"`
	Zeros  [][2]float64 `json:"zeros"`
	FreqHz []float64    `json:"freq_hz"`
	DelayS []float64    `json:"delay_s"`
}

// spreadPct is (max − min)/mean of v in percent, the mean the trapezoidal
// average over evenly spaced points: the criterion of INTERFACE.md
// ("Spread = (max − min) / mean of the group delay over the passband in
// linear frequency"), written out here apart from package equalize.
func spreadPct(v []float64) float64 {
	sum := (v[0] + v[len(v)-1]) / 2
	for _, x := range v[1 : len(v)-1] {
		sum += x
	}
	mean := sum / float64(len(v)-1)
	return 100 * (slices.Max(v) - slices.Min(v)) / mean
}

// allpassDelayS is the group delay of an all-pass section at ω, by the
// closed forms: first order (a − s)/(a + s), τ = 2a/(a² + ω²); second
// order, τ = 2(ω0/Q)(ω0² + ω²)/((ω0² − ω²)² + (ω·ω0/Q)²) (the derivatives
// of the phases −2·atan(ω/a) and −2·atan((ω·ω0/Q)/(ω0² − ω²))).
func allpassDelayS(sec synth.Section, w float64) float64 {
	if sec.Order == 1 {
		a := -sec.Poles[0][0]
		return 2 * a / (a*a + w*w)
	}
	w0 := 2 * math.Pi * sec.F0Hz
	b := w0 / *sec.Q
	d := w0*w0 - w*w
	return 2 * b * (w0*w0 + w*w) / (d*d + w*w*b*b)
}

// TestDelayEqualizerAgainstSciPy: for each filter of allpass.json, the
// design with delay_equalizer (a) keeps the filter's own poles, which are
// scipy's (1e-9 relative), and its order; (b) has all-pass sections whose
// zeros mirror their poles, so that |H| is the filter's (1e-9 dB); (c)
// has a group delay — scipy.signal.freqs_zpk's of the filter plus the
// closed forms of its all-pass sections — whose spread over the passband,
// computed here, is within max_spread_pct (0.1 % slack for the grid:
// ours is finer), where the filter's own is well above it; (d) reports
// that delay: response.GroupDelayS of the design's transfer function
// agrees with it within 1e-7 relative.
func TestDelayEqualizerAgainstSciPy(t *testing.T) {
	t.Parallel()
	raw, err := os.ReadFile("../testdata/scipy/allpass.json")
	require.NoError(t, err)
	var data struct {
		Cases []scipyAllpassCase `json:"cases"`
	}
	require.NoError(t, json.Unmarshal(raw, &data))
	require.Len(t, data.Cases, 4)
	for _, tc := range data.Cases {
		t.Run(tc.Name, func(t *testing.T) {
			t.Parallel()
			s := baseSpec(synth.Response(tc.Spec.Response), tc.Spec.Approximation)
			s.Order, s.PassbandHz = tc.Spec.Order, tc.Spec.PassbandHz
			if tc.Spec.PassbandRippleDB != nil {
				s.PassbandRippleDB = *tc.Spec.PassbandRippleDB
			}
			s.DelayEqualizer = &synth.DelayEqualizer{MaxSpreadPct: tc.Spec.MaxSpreadPct}
			d, err := synth.SynthesizeIdeal(context.Background(), s)
			require.NoError(t, err)
			require.Equal(t, tc.Spec.Order, d.Order)

			// (a) the filter's poles are scipy's.
			var filterPoles []complex128
			var allpass []synth.Section
			filter := zpk.ZPK{Gain: 1}
			for _, sec := range d.Sections {
				if sec.Kind == section.Allpass {
					allpass = append(allpass, sec)
					continue
				}
				for _, p := range sec.Poles {
					filterPoles = append(filterPoles, complex(p[0], p[1]))
				}
				for _, z := range sec.Zeros {
					filter.Zeros = append(filter.Zeros, complex(z[0], z[1]))
				}
			}
			filter.Poles = filterPoles
			require.Len(t, filterPoles, len(tc.Poles))
			for _, sp := range tc.Poles {
				want := complex(sp[0], sp[1])
				best := math.Inf(1)
				for _, p := range filterPoles {
					best = math.Min(best, cmplx.Abs(p-want)/cmplx.Abs(want))
				}
				require.Less(t, best, 1e-9, "scipy pole %v", want)
			}
			require.NotEmpty(t, allpass, "the filter's own spread is above the target: sections are needed")
			require.LessOrEqual(t, len(allpass), 8)
			require.Len(t, d.Poles, len(tc.Poles)+func() int {
				n := 0
				for _, a := range allpass {
					n += a.Order
				}
				return n
			}())

			// (b) all-pass: zeros are the poles mirrored; |H| is the filter's.
			for _, a := range allpass {
				for i, p := range a.Poles {
					m := -complex(p[0], -p[1])
					found := false
					for _, z := range a.Zeros {
						found = found || cmplx.Abs(complex(z[0], z[1])-m) <= 1e-9*cmplx.Abs(m)
					}
					require.True(t, found, "pole %d %v has no mirrored zero in %v", i, p, a.Zeros)
				}
			}
			h := d.TransferFunction()
			filter.Gain = h.Gain
			for _, f := range tc.FreqHz {
				w := 2 * math.Pi * f
				require.InDelta(t, 0, 20*math.Log10(h.MagnitudeAt(w)/filter.MagnitudeAt(w)), 1e-9, "%g Hz", f)
			}

			// (c) the spread of scipy's delay plus the all-pass sections'.
			total := make([]float64, len(tc.FreqHz))
			for i, f := range tc.FreqHz {
				total[i] = tc.DelayS[i]
				for _, a := range allpass {
					total[i] += allpassDelayS(a, 2*math.Pi*f)
				}
			}
			own := spreadPct(tc.DelayS)
			got := spreadPct(total)
			t.Logf("%s: filter spread %.3g %%, equalised %.4g %% (target %g %%) with %d sections", tc.Name, own, got, tc.Spec.MaxSpreadPct, len(allpass))
			require.Greater(t, own, 3*tc.Spec.MaxSpreadPct)
			require.LessOrEqual(t, got, tc.Spec.MaxSpreadPct*1.001)

			// (d) our delay of the equalised transfer function.
			ours := response.GroupDelayS(nil, h, tc.FreqHz)
			for i := range ours {
				require.InEpsilon(t, total[i], ours[i], 1e-7, "%g Hz", tc.FreqHz[i])
			}
		})
	}
}
