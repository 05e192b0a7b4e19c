package noise_test

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
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
