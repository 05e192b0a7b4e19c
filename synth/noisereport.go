package synth

import (
	"fmt"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
	"github.com/polewright/polewright/synth/response"
)

// NoiseReport is the output noise of the chain as built. Every integral
// starts at 0 Hz.
type NoiseReport struct {
	// FreqHz and OutputVPerRtHz are the density's plot: NoisePoints
	// log-spaced frequencies from the response grid's first frequency to
	// its last, or to SampleRateHz/2 with a converter.
	FreqHz         []float64 `json:"freq_hz"`
	OutputVPerRtHz []float64 `json:"output_v_per_rthz"`
	// OutputRMSV is the noise integrated over BandHz, kept for
	// compatibility: it equals InbandRMSV.
	OutputRMSV float64 `json:"output_rms_v"`
	// BandHz is [0, OutputRateHz/2] with a converter, else [0, the plot's
	// last frequency].
	BandHz [2]float64 `json:"band_hz"`
	// InbandRMSV is the output noise from 0 Hz to the converter's
	// OutputRateHz/2 (without a converter: to the plot's last frequency),
	// nothing folded: the integral over BandHz.
	InbandRMSV float64 `json:"inband_rms_v"`
	// SampledRMSV is what the converter's output words carry: the density
	// at every frequency that sampling at SampleRateHz folds into
	// [0, OutputRateHz/2], integrated from 0 Hz to SampledLimitHz, above
	// which less than 0.1 % of the power lies ([noise.OutputSampled]). Nil
	// without a converter.
	SampledRMSV *float64 `json:"sampled_rms_v"`
	// SampledLimitHz is the highest frequency SampledRMSV integrates. Nil
	// without a converter.
	SampledLimitHz *float64 `json:"sampled_limit_hz"`
	// SampledCapped reports that the sampled noise does not converge (ideal
	// op-amps whose output noise stays flat at high frequency): SampledRMSV
	// is then the noise up to the cap, SampledLimitHz, and grows with it.
	SampledCapped bool `json:"-"`
	// SNRDB is the signal-to-noise ratio of a full-scale sine in the
	// output words: against the quantisation noise of an ideal Bits-bit
	// output word, LSB/√12, plus SampledRMSV ([noise.SNRdB]). Nil without
	// a converter.
	SNRDB *float64 `json:"snr_db"`
	// ENOBLossBits is log2(√(q² + SampledRMSV²)/q), q = LSB/√12: the bits
	// the filter's noise costs the ideal converter ([noise.ENOBLossBits]).
	// Nil without a converter.
	ENOBLossBits *float64 `json:"enob_loss_bits"`
	// LSBV and QuantizationRMSV (LSB/√12) are the converter's, nil
	// without one.
	LSBV             *float64 `json:"lsb_v"`
	QuantizationRMSV *float64 `json:"quantization_rms_v"`
	// TempK is the temperature of the thermal noise.
	TempK float64 `json:"temp_k"`
	// FlickerFromHz is where the integrals start when the op-amp has a 1/f
	// corner (its 1/f power from 0 Hz is unbounded): the inverse of a
	// 100 s record ([noise.DefaultFlickerFromHz]); nil for white noise,
	// whose integrals start at 0 Hz.
	FlickerFromHz *float64 `json:"flicker_from_hz"`
	// Contributors are the parts' shares of the noise power over BandHz.
	Contributors []Contributor `json:"contributors"`
}

// Contributor is one part's share of the integrated output noise power:
// a resistor's thermal noise, or an op-amp's voltage and current noise.
type Contributor struct {
	Ref   string  `json:"ref"`
	Share float64 `json:"share"`
}

// noise fills d.Noise: the density on the plot's grid, the in-band noise
// from 0 Hz with each part's share and, with a converter, the noise its
// output words carry and the SNR and bits it leaves.
func (d *Design) noise(ch circuit.Chain) error {
	lo, hi := d.Response.FreqHz[0], d.Response.FreqHz[len(d.Response.FreqHz)-1]
	c := d.Spec.Converter
	if c != nil {
		hi = c.SampleRateHz / 2
	}
	if !(hi > lo) {
		lo = hi / 1000
	}
	grid := response.LogSpaceHz(nil, lo, hi, NoisePoints)
	on := noise.OpAmpNoise{VoltageVPerRtHz: d.Spec.OpAmp.NoiseVPerRtHz, CurrentAPerRtHz: d.Spec.OpAmp.NoiseAPerRtHz,
		CornerHz: d.Spec.OpAmp.NoiseCornerHz}
	var (
		r   noise.Result
		err error
	)
	if c != nil {
		s := noise.Sampling{SampleRateHz: c.SampleRateHz, OutputRateHz: c.OutputRateHz}
		if s.OutputRateHz == 0 {
			s.OutputRateHz = s.SampleRateHz
		}
		r, err = noise.OutputSampled(ch, on, noise.DefaultTempK, grid, [2]float64{0, s.OutputRateHz / 2}, s)
	} else {
		r, err = noise.Output(ch, on, noise.DefaultTempK, grid, [2]float64{0, hi})
	}
	if err != nil {
		return fmt.Errorf("synth: noise: %w", err)
	}
	d.Noise = &NoiseReport{
		FreqHz: r.FreqHz, OutputVPerRtHz: r.OutputVPerRtHz, OutputRMSV: r.OutputRMSV, BandHz: r.BandHz,
		InbandRMSV: r.OutputRMSV, TempK: noise.DefaultTempK,
	}
	if on.CornerHz > 0 {
		from := float64(noise.DefaultFlickerFromHz)
		d.Noise.FlickerFromHz = &from
	}
	for _, c := range r.Contributors {
		d.Noise.Contributors = append(d.Noise.Contributors, Contributor{Ref: c.Ref, Share: c.Share})
	}
	if c != nil {
		lsb, q := noise.LSBVolts(c.Bits, c.FullScaleVpp), noise.QuantizationRMSV(c.Bits, c.FullScaleVpp)
		d.Noise.LSBV, d.Noise.QuantizationRMSV = finitePtr(lsb), finitePtr(q)
		if sm := r.Sampled; sm != nil {
			d.Noise.SampledRMSV, d.Noise.SampledLimitHz, d.Noise.SampledCapped = finitePtr(sm.RMSV), finitePtr(sm.LimitHz), sm.Capped
			d.Noise.SNRDB = finitePtr(noise.SNRdB(c.Bits, c.FullScaleVpp, sm.RMSV))
			d.Noise.ENOBLossBits = finitePtr(noise.ENOBLossBits(c.Bits, c.FullScaleVpp, sm.RMSV))
		}
	}
	return nil
}
