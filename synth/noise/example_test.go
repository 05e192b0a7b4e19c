package noise_test

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/circuit/circuittest"
	"github.com/polewright/polewright/synth/noise"
)

// 10 kΩ into 1 nF, buffered by a noiseless ideal follower: the resistor's
// noise integrates to √(kT/C) = 2.035 µV at 300 K, whatever R.
func ExampleOutput() {
	const r, c = 10e3, 1e-9
	ch := circuit.Chain{
		Model: circuit.Model{Ideal: true},
		Stages: []circuit.Stage{{
			Topology: "rc-buffer",
			Parts: []circuit.Part{
				{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "n1", Value: r},
				{Ref: "C1", Kind: circuit.Capacitor, A: "n1", B: circuit.Ground, Value: c},
			},
			OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
			Out:    "out",
		}},
	}
	fc := 1 / (2 * math.Pi * r * c)
	res, err := noise.Output(ch, noise.OpAmpNoise{}, 300, []float64{10, fc}, [2]float64{0, 1e6 * fc})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("density %.4g nV/√Hz at 10 Hz, %.4g nV/√Hz at fc\n", res.OutputVPerRtHz[0]*1e9, res.OutputVPerRtHz[1]*1e9)
	fmt.Printf("rms %.4g µV, √(kT/C) %.4g µV\n", res.OutputRMSV*1e6, math.Sqrt(noise.BoltzmannJPerK*300/c)*1e6)
	fmt.Printf("%s %.2f, %s %.2f\n", res.Contributors[0].Ref, res.Contributors[0].Share, res.Contributors[1].Ref, res.Contributors[1].Share)
	// Output:
	// density 12.87 nV/√Hz at 10 Hz, 9.102 nV/√Hz at fc
	// rms 2.035 µV, √(kT/C) 2.035 µV
	// R101 1.00, U101 0.00
}

// A 16-bit converter over 4 Vpp: LSB = 4 V/2¹⁶, quantisation noise
// LSB/√12.
func ExampleQuantizationRMSV() {
	fmt.Printf("LSB %.2f µV, q-noise %.2f µV rms\n", noise.LSBVolts(16, 4)*1e6, noise.QuantizationRMSV(16, 4)*1e6)
	// Output:
	// LSB 61.04 µV, q-noise 17.62 µV rms
}

// A 4 Vpp sine at a 20 kHz passband edge needs 2π·20 kHz·2 V.
func ExampleSlewVPerS() {
	fmt.Printf("%.4g V/µs\n", noise.SlewVPerS(20e3, 4)/1e6)
	// Output:
	// 0.2513 V/µs
}

// A 1 kΩ resistor at 300 K.
func ExampleThermalVPerRtHz() {
	fmt.Printf("%.3g nV/√Hz\n", noise.ThermalVPerRtHz(1e3, 300)*1e9)
	// Output:
	// 4.07 nV/√Hz
}

// The order-8 Sallen-Key Butterworth chain at 1 kHz, with op-amps of
// 1 MHz gain-bandwidth and the default noise, feeding a converter that
// samples at 48 kHz, and one whose modulator samples at 3.072 MHz for
// 48 kHz words: the unity followers' voltage noise is flat to about
// 1 MHz, and the 48 kHz sampling folds all of it into the words.
func ExampleOutputSampled() {
	ch := circuit.Chain{Stages: circuittest.Butterworth8(1000), Model: circuit.Model{GBWHz: 1e6, DCGainDB: 100}}
	for _, s := range []noise.Sampling{{SampleRateHz: 48e3}, {SampleRateHz: 3.072e6, OutputRateHz: 48e3}} {
		res, err := noise.OutputSampled(ch, noise.DefaultOpAmpNoise(), 0, nil, [2]float64{0, 24e3}, s)
		if err != nil {
			fmt.Println(err)
			return
		}
		sm := res.Sampled
		fmt.Printf("fs %.4g MHz: in band %.3g µV, sampled %.3g µV to %.0f MHz; SNR %.1f dB, %.2f bits lost (16 bits, 4 Vpp)\n",
			s.SampleRateHz/1e6, res.OutputRMSV*1e6, sm.RMSV*1e6, sm.LimitHz/1e6, noise.SNRdB(16, 4, sm.RMSV), noise.ENOBLossBits(16, 4, sm.RMSV))
	}
	// Output:
	// fs 0.048 MHz: in band 2.77 µV, sampled 12.7 µV to 927 MHz; SNR 96.3 dB, 0.30 bits lost (16 bits, 4 Vpp)
	// fs 3.072 MHz: in band 2.77 µV, sampled 2.91 µV to 184 MHz; SNR 98.0 dB, 0.02 bits lost (16 bits, 4 Vpp)
}
