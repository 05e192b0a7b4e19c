package synth

import (
	"fmt"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
	"github.com/polewright/polewright/synth/response"
)

// NoiseReport is the output noise of the chain as built.
type NoiseReport struct {
	FreqHz         []float64 `json:"freq_hz"`
	OutputVPerRtHz []float64 `json:"output_v_per_rthz"`
	// OutputRMSV is the noise integrated over BandHz.
	OutputRMSV float64    `json:"output_rms_v"`
	BandHz     [2]float64 `json:"band_hz"`
	// LSBV and QuantizationRMSV (LSB/√12) are the converter's, nil
	// without one.
	LSBV             *float64 `json:"lsb_v"`
	QuantizationRMSV *float64 `json:"quantization_rms_v"`
	// TempK is the temperature of the thermal noise.
	TempK        float64       `json:"temp_k"`
	Contributors []Contributor `json:"contributors"`
}

// Contributor is one part's share of the integrated output noise power:
// a resistor's thermal noise, or an op-amp's voltage and current noise.
type Contributor struct {
	Ref   string  `json:"ref"`
	Share float64 `json:"share"`
}

func (d *Design) noise(ch circuit.Chain) error {
	lo, hi := d.Response.FreqHz[0], d.Response.FreqHz[len(d.Response.FreqHz)-1]
	if c := d.Spec.Converter; c != nil {
		hi = c.SampleRateHz / 2
	}
	if !(hi > lo) {
		lo = hi / 1000
	}
	grid := response.LogSpaceHz(nil, lo, hi, NoisePoints)
	on := noise.OpAmpNoise{VoltageVPerRtHz: d.Spec.OpAmp.NoiseVPerRtHz, CurrentAPerRtHz: d.Spec.OpAmp.NoiseAPerRtHz}
	r, err := noise.Output(ch, on, noise.DefaultTempK, grid, [2]float64{lo, hi})
	if err != nil {
		return fmt.Errorf("synth: noise: %w", err)
	}
	d.Noise = &NoiseReport{
		FreqHz: r.FreqHz, OutputVPerRtHz: r.OutputVPerRtHz, OutputRMSV: r.OutputRMSV, BandHz: r.BandHz,
		TempK: noise.DefaultTempK,
	}
	for _, c := range r.Contributors {
		d.Noise.Contributors = append(d.Noise.Contributors, Contributor{Ref: c.Ref, Share: c.Share})
	}
	if c := d.Spec.Converter; c != nil {
		lsb, q := noise.LSBVolts(c.Bits, c.FullScaleVpp), noise.QuantizationRMSV(c.Bits, c.FullScaleVpp)
		d.Noise.LSBV, d.Noise.QuantizationRMSV = &lsb, &q
	}
	return nil
}
