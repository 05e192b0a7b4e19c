package main

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"sort"
	"strconv"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// The Wren 16 is a field recorder of our own invention: a 16-bit
// converter over 5.6 Vpp behind an anti-alias filter. Three variants: a
// 48 kHz successive-approximation front end (fout = fs) with a steep
// elliptic lowpass; a sigma-delta front end whose modulator samples at
// 3.072 MHz and decimates to 48 kHz words, behind a gentle lowpass; and a
// 48 kHz front end behind a 20 Hz highpass (a DC-blocking input, whose
// noise does not fall until the op-amps' closed-loop bandwidth).
var wren16 = []struct {
	name, spec string
}{
	{"wren16-48k-elliptic", `{"approximation": "elliptic", "passband_hz": 18000, "passband_ripple_db": 0.1,
  "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 5.6, "alias_atten_db": 80},
  "opamp": {"gbw_hz": 10e6, "dc_gain_db": 110, "noise_v_per_rthz": 6e-9, "noise_a_per_rthz": 1e-12}}`},
	{"wren16-sd-3.072M-to-48k", `{"approximation": "butterworth", "passband_hz": 20000, "passband_ripple_db": 0.5,
  "converter": {"bits": 16, "sample_rate_hz": 3.072e6, "output_rate_hz": 48000, "full_scale_vpp": 5.6, "alias_atten_db": 60},
  "opamp": {"gbw_hz": 10e6, "dc_gain_db": 110, "noise_v_per_rthz": 6e-9, "noise_a_per_rthz": 1e-12}}`},
	{"wren16-48k-highpass", `{"response": "highpass", "approximation": "butterworth", "passband_hz": 20, "stopband_hz": 5,
  "passband_ripple_db": 1, "stopband_atten_db": 30,
  "converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 5.6},
  "opamp": {"gbw_hz": 10e6, "dc_gain_db": 110, "noise_v_per_rthz": 6e-9, "noise_a_per_rthz": 1e-12}}`},
}

// noiseLine is the deck's noise analysis line, and the transient's lines,
// which this test does not need.
var (
	noiseLine = regexp.MustCompile(`(?m)^noise v\(out\) vin dec .*$`)
	tranLines = regexp.MustCompile(`(?m)^(tran |let vout_c|wrdata ` + regexp.QuoteMeta(circuit.DefaultTranDataFile) + `).*\n`)
)

// TestSampledNoiseAgainstNgspice runs the exported deck's noise analysis
// in ngspice 39 (the outside reference) over 200 points a decade from
// 10⁻⁴ of the lowest passband edge to ten times the design's
// sampled_limit_hz, integrates its density from 0 Hz (the flat part below
// the sweep as S(f0)·f0, a lowpass's density being flat there to
// (f0/fp)² ≈ 1e-8, and a highpass's negligible; then the trapezoid rule
// in ln f) and folds it band by band, |f − k·fs| ≤ fout/2, by Simpson's
// rule over each band on ngspice's density interpolated in log-log. The
// design's inband_rms_v and sampled_rms_v must agree within 1 %; what
// ngspice puts between sampled_limit_hz and the end of the sweep must be
// under the contract's 0.1 % (plus 1e-4 for the two integrations), and
// snr_db and enob_loss_bits follow from sampled_rms_v by their closed
// forms.
func TestSampledNoiseAgainstNgspice(t *testing.T) {
	t.Parallel()
	spicerun.Require(t)
	for _, sc := range wren16 {
		t.Run(sc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errOut := runCLI(t, sc.spec, "design", "-spec", "-")
			require.Equal(t, exitOK, code, errOut)
			var d struct {
				Spec struct {
					PassbandHz []float64 `json:"passband_hz"`
					Converter  struct {
						Bits         int     `json:"bits"`
						SampleRateHz float64 `json:"sample_rate_hz"`
						OutputRateHz float64 `json:"output_rate_hz"`
						FullScaleVpp float64 `json:"full_scale_vpp"`
					} `json:"converter"`
				} `json:"spec"`
				Noise struct {
					OutputRMSV     float64    `json:"output_rms_v"`
					BandHz         [2]float64 `json:"band_hz"`
					InbandRMSV     float64    `json:"inband_rms_v"`
					SampledRMSV    *float64   `json:"sampled_rms_v"`
					SampledLimitHz *float64   `json:"sampled_limit_hz"`
					SNRDB          *float64   `json:"snr_db"`
					ENOBLossBits   *float64   `json:"enob_loss_bits"`
					QuantRMSV      *float64   `json:"quantization_rms_v"`
				} `json:"noise"`
			}
			require.NoError(t, json.Unmarshal([]byte(out), &d))
			n, c := d.Noise, d.Spec.Converter
			require.NotNil(t, n.SampledRMSV)
			require.NotNil(t, n.SampledLimitHz)
			require.NotNil(t, n.SNRDB)
			require.NotNil(t, n.ENOBLossBits)
			require.NotNil(t, n.QuantRMSV)
			fs, fout := c.SampleRateHz, c.OutputRateHz
			require.Positive(t, fout)
			h := fout / 2
			require.Equal(t, [2]float64{0, h}, n.BandHz)
			require.Equal(t, n.InbandRMSV, n.OutputRMSV)

			code, deck, errOut := runCLI(t, sc.spec, "export", "-spec", "-", "-as", "spice")
			require.Equal(t, exitOK, code, errOut)
			f0 := 1e-4 * d.Spec.PassbandHz[0]
			f1 := 10 * *n.SampledLimitHz
			require.Regexp(t, noiseLine, deck)
			deck = noiseLine.ReplaceAllLiteralString(deck, "noise v(out) vin dec 200 "+strconv.FormatFloat(f0, 'e', 15, 64)+" "+strconv.FormatFloat(f1, 'e', 15, 64))
			deck = tranLines.ReplaceAllLiteralString(deck, "")
			require.NotContains(t, deck, "tran ")
			dir := t.TempDir()
			ctx, cancel := context.WithTimeout(t.Context(), 60*time.Second)
			defer cancel()
			_, _, err := spicerun.RunDir(ctx, dir, []byte(deck))
			require.NoError(t, err)
			file, err := os.Open(filepath.Join(dir, circuit.DefaultNoiseDataFile))
			require.NoError(t, err)
			freq, vecs, err := spicerun.ReadData(file)
			file.Close()
			require.NoError(t, err)
			require.Greater(t, len(freq), 1000)
			sp := newSpectrum(freq, vecs[0])

			inband := math.Sqrt(sp.from0(h))
			var sampled2 float64
			limit := *n.SampledLimitHz
			if fout >= fs {
				sampled2 = sp.from0(limit)
			} else {
				sampled2 = sp.from0(h)
				for k := 1.0; k*fs-h < limit; k++ {
					sampled2 += sp.simpson(k*fs-h, math.Min(k*fs+h, limit), 64)
				}
			}
			sampled := math.Sqrt(sampled2)
			t.Logf("inband: ours %.6g µV, ngspice %.6g µV (%+.2g); sampled: ours %.6g µV, ngspice %.6g µV (%+.2g) to %.3g Hz",
				n.InbandRMSV*1e6, inband*1e6, n.InbandRMSV/inband-1, *n.SampledRMSV*1e6, sampled*1e6, *n.SampledRMSV/sampled-1, limit)
			require.InEpsilon(t, inband, n.InbandRMSV, 0.01)
			require.InEpsilon(t, sampled, *n.SampledRMSV, 0.01)

			// The rest: what ngspice's density folds in between the limit
			// and the end of the sweep.
			var all2 float64
			if fout >= fs {
				all2 = sp.from0(f1)
			} else {
				all2 = sampled2
				for k := math.Floor(limit/fs) + 1; k*fs+h <= f1; k++ {
					lo := math.Max(k*fs-h, limit)
					all2 += sp.simpson(lo, k*fs+h, 16)
				}
			}
			rest := 1 - sampled2/all2
			t.Logf("ngspice's rest between the limit and %.3g Hz: %.3g of the total", f1, rest)
			require.Less(t, rest, 1e-3+1e-4)

			// snr_db and enob_loss_bits: their closed forms (the contract),
			// q = LSB/√12 = full scale/2^bits/√12.
			q := c.FullScaleVpp / math.Pow(2, float64(c.Bits)) / math.Sqrt(12)
			require.InEpsilon(t, q, *n.QuantRMSV, 1e-12)
			tot := math.Sqrt(q*q + *n.SampledRMSV**n.SampledRMSV)
			require.InDelta(t, 20*math.Log10(c.FullScaleVpp/(2*math.Sqrt2)/tot), *n.SNRDB, 1e-9)
			require.InDelta(t, math.Log2(tot/q), *n.ENOBLossBits, 1e-9)
		})
	}
}

// spectrum is ngspice's output noise power density on its sweep.
type spectrum struct {
	u, lnS []float64 // ln f, ln S
	f, s   []float64
}

func newSpectrum(freq []float64, v []complex128) spectrum {
	var sp spectrum
	for i, f := range freq {
		d := real(v[i])
		sp.f = append(sp.f, f)
		sp.s = append(sp.s, d*d)
		sp.u = append(sp.u, math.Log(f))
		sp.lnS = append(sp.lnS, math.Log(d*d))
	}
	return sp
}

// from0 integrates the density from 0 Hz to bHz (within the sweep): the
// flat part below the sweep's first frequency f0 as S(f0)·f0, then the
// trapezoid rule in u = ln f on S·f, the last interval cut at bHz with
// S·f interpolated linearly in u.
func (sp spectrum) from0(bHz float64) float64 {
	sum := sp.s[0] * sp.f[0]
	ub := math.Log(bHz)
	for i := 1; i < len(sp.u); i++ {
		ga, gb := sp.s[i-1]*sp.f[i-1], sp.s[i]*sp.f[i]
		if sp.u[i] >= ub {
			t := (ub - sp.u[i-1]) / (sp.u[i] - sp.u[i-1])
			return sum + 0.5*(ga+ga+t*(gb-ga))*(ub-sp.u[i-1])
		}
		sum += 0.5 * (ga + gb) * (sp.u[i] - sp.u[i-1])
	}
	return sum
}

// at interpolates the density linearly in log-log.
func (sp spectrum) at(fHz float64) float64 {
	u := math.Log(fHz)
	i := sort.SearchFloat64s(sp.u, u)
	i = min(max(i, 1), len(sp.u)-1)
	t := (u - sp.u[i-1]) / (sp.u[i] - sp.u[i-1])
	return math.Exp(sp.lnS[i-1] + t*(sp.lnS[i]-sp.lnS[i-1]))
}

// simpson integrates the interpolated density over [a, b] in linear f by
// Simpson's rule on n (even) intervals.
func (sp spectrum) simpson(a, b float64, n int) float64 {
	if !(b > a) {
		return 0
	}
	hh := (b - a) / float64(n)
	sum := sp.at(a) + sp.at(b)
	for i := 1; i < n; i++ {
		w := 2.0
		if i%2 == 1 {
			w = 4
		}
		sum += w * sp.at(a+float64(i)*hh)
	}
	return sum * hh / 3
}
