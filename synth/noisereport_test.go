package synth_test

import (
	"context"
	"encoding/json"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/noise"
)

// The noise report's figures (INTERFACE.md, "Noise, added fields"): with
// a converter, band_hz is [0, output_rate_hz/2] and output_rms_v equals
// inband_rms_v; sampled_rms_v, its limit, snr_db and enob_loss_bits are
// there and follow their closed forms (q = LSB/√12, LSB = full scale /
// 2^bits); the sampled noise is at least the in-band noise. Without a
// converter they are null and the band runs from 0 Hz to the plot's last
// frequency. The JSON has no NaN or Inf (encoding/json refuses them).
func TestNoiseReportFigures(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name    string
		spec    string
		bandTop float64 // Hz; 0: the plot's last frequency
		capped  bool
	}{
		{"48k", `{"approximation": "chebyshev1", "passband_hz": 18000, "order": 6, "passband_ripple_db": 0.5,
			"converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 4}}`, 24e3, false},
		{"oversampled", `{"passband_hz": 20000, "order": 3,
			"converter": {"bits": 24, "sample_rate_hz": 3.072e6, "output_rate_hz": 48000, "full_scale_vpp": 5}}`, 24e3, false},
		{"highpass-48k", `{"response": "highpass", "passband_hz": 100, "order": 4,
			"converter": {"bits": 12, "sample_rate_hz": 48000, "full_scale_vpp": 3.3}}`, 24e3, false},
		{"ideal-48k", `{"passband_hz": 18000, "order": 4, "opamp": {"ideal": true},
			"converter": {"bits": 16, "sample_rate_hz": 48000, "full_scale_vpp": 4}}`, 24e3, true},
		{"no-converter", `{"passband_hz": 1000, "order": 4}`, 0, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s, err := synth.ParseSpecBytes([]byte(tc.spec))
			require.NoError(t, err)
			d, err := synth.Synthesize(context.Background(), s)
			require.NoError(t, err)
			n := d.Noise
			require.NotNil(t, n)
			require.Equal(t, n.InbandRMSV, n.OutputRMSV)
			require.Positive(t, n.InbandRMSV)
			require.Zero(t, n.BandHz[0])
			raw, err := json.Marshal(n)
			require.NoError(t, err)
			var m map[string]any
			require.NoError(t, json.Unmarshal(raw, &m))
			for _, k := range []string{"inband_rms_v", "sampled_rms_v", "sampled_limit_hz", "snr_db", "enob_loss_bits", "output_rms_v", "band_hz"} {
				require.Contains(t, m, k)
			}
			c := s.Converter
			if c == nil {
				require.Equal(t, n.FreqHz[len(n.FreqHz)-1], n.BandHz[1])
				for _, k := range []string{"sampled_rms_v", "sampled_limit_hz", "snr_db", "enob_loss_bits", "lsb_v", "quantization_rms_v"} {
					require.Nil(t, m[k], k)
				}
				return
			}
			require.Equal(t, tc.bandTop, n.BandHz[1])
			require.NotNil(t, n.SampledRMSV)
			require.NotNil(t, n.SampledLimitHz)
			require.NotNil(t, n.SNRDB)
			require.NotNil(t, n.ENOBLossBits)
			require.Equal(t, tc.capped, n.SampledCapped)
			require.GreaterOrEqual(t, *n.SampledRMSV, n.InbandRMSV)
			require.Greater(t, *n.SampledLimitHz, n.BandHz[1])
			q := c.FullScaleVpp / math.Pow(2, float64(c.Bits)) / math.Sqrt(12)
			tot := math.Hypot(q, *n.SampledRMSV)
			require.InDelta(t, 20*math.Log10(c.FullScaleVpp/(2*math.Sqrt2)/tot), *n.SNRDB, 1e-9)
			require.InDelta(t, math.Log2(tot/q), *n.ENOBLossBits, 1e-9)
			require.LessOrEqual(t, *n.SNRDB, 6.0206*float64(c.Bits)+1.7609+1e-3) // never above the ideal converter's
			t.Logf("in band %.4g µV, sampled %.4g µV to %.3g Hz, q %.4g µV: SNR %.2f dB, %.3f bits lost",
				n.InbandRMSV*1e6, *n.SampledRMSV*1e6, *n.SampledLimitHz, q*1e6, *n.SNRDB, *n.ENOBLossBits)
		})
	}
}

// The report's figures are package noise's on the design's chain: the
// in-band noise over [0, fout/2] and the sampled noise at the converter's
// rates.
func TestNoiseReportMatchesPackage(t *testing.T) {
	t.Parallel()
	s, err := synth.ParseSpecBytes([]byte(`{"passband_hz": 20000, "order": 3,
		"converter": {"bits": 16, "sample_rate_hz": 3.072e6, "output_rate_hz": 48000, "full_scale_vpp": 4}}`))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	ch, err := d.Chain()
	require.NoError(t, err)
	on := noise.OpAmpNoise{VoltageVPerRtHz: s.OpAmp.NoiseVPerRtHz, CurrentAPerRtHz: s.OpAmp.NoiseAPerRtHz}
	r, err := noise.OutputSampled(ch, on, noise.DefaultTempK, nil, [2]float64{0, 24e3}, noise.Sampling{SampleRateHz: 3.072e6, OutputRateHz: 48e3})
	require.NoError(t, err)
	require.InEpsilon(t, r.OutputRMSV, d.Noise.InbandRMSV, 1e-12)
	require.InEpsilon(t, r.Sampled.RMSV, *d.Noise.SampledRMSV, 1e-12)
	require.InEpsilon(t, r.Sampled.LimitHz, *d.Noise.SampledLimitHz, 1e-12)
}
