package circuit_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"os"

	"github.com/polewright/polewright/synth/circuit"
)

// A one-stage chain: 10 kΩ into 10 nF, buffered by a follower, with an
// ideal op-amp; at f = 1/(2πRC) the response is (1 − j)/2, −3 dB.
func ExampleChain_Response() {
	chain := circuit.Chain{
		Model: circuit.Model{Ideal: true},
		Stages: []circuit.Stage{{
			Topology: "rc-buffer",
			Parts: []circuit.Part{
				{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "n1", Value: 10e3, Exact: 10e3, Series: "E96", TolerancePct: 1},
				{Ref: "C1", Kind: circuit.Capacitor, A: "n1", B: circuit.Ground, Value: 10e-9, Exact: 10e-9, Series: "E12", TolerancePct: 5},
			},
			OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
			Out:    "out",
		}},
	}
	fc := 1 / (2 * math.Pi * 10e3 * 10e-9)
	h, err := chain.Response(nil, []float64{fc})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("H(j2π·%.4g Hz) = %.4g, %.4g dB\n", fc, h[0], 20*math.Log10(cmplx.Abs(h[0])))
	// Output:
	// H(j2π·1592 Hz) = (0.5-0.5i), -3.01 dB
}

func ExampleChain_WriteBOM() {
	chain := circuit.Chain{
		Model: circuit.Model{GBWHz: 1e6, DCGainDB: 100},
		Stages: []circuit.Stage{{
			Topology: "sallen-key",
			Parts: []circuit.Part{
				{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "n1", Value: 10.2e3, Series: "E96", TolerancePct: 1},
				{Ref: "R2", Kind: circuit.Resistor, A: "n1", B: "n2", Value: 10.2e3, Series: "E96", TolerancePct: 1},
				{Ref: "C1", Kind: circuit.Capacitor, A: "n1", B: "out", Value: 22e-9, Series: "E12", TolerancePct: 5},
				{Ref: "C2", Kind: circuit.Capacitor, A: "n2", B: circuit.Ground, Value: 10e-9, Series: "E12", TolerancePct: 5},
			},
			OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
			Out:    "out",
		}},
	}
	if err := chain.WriteBOM(os.Stdout); err != nil {
		fmt.Println(err)
	}
	// Output:
	// ref,kind,value,unit,series,tolerance,stage,display
	// R101,resistor,10200,Ohm,E96,1%,1,10.2 kΩ
	// R102,resistor,10200,Ohm,E96,1%,1,10.2 kΩ
	// C101,capacitor,0.000000022,F,E12,5%,1,22 nF
	// C102,capacitor,0.00000001,F,E12,5%,1,10 nF
	// U101,opamp,1000000,Hz,,,1,1 MHz
}

func ExampleRational_DominantPair() {
	// Unity-gain Sallen-Key lowpass, R1 = R2 = 10 kΩ, C1 = 22 nF, C2 = 10 nF,
	// with a 1 MHz op-amp: f0 = 1/(2π√(R1R2C1C2)) ≈ 1073 Hz and
	// Q = √(C1/C2)/2 ≈ 0.742 for the ideal op-amp; the far op-amp pole is
	// not the dominant pair.
	st := circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "n1", Value: 10e3},
			{Ref: "R2", Kind: circuit.Resistor, A: "n1", B: "n2", Value: 10e3},
			{Ref: "C1", Kind: circuit.Capacitor, A: "n1", B: "out", Value: 22e-9},
			{Ref: "C2", Kind: circuit.Capacitor, A: "n2", B: circuit.Ground, Value: 10e-9},
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
	r, err := st.TransferFunction(circuit.Model{GBWHz: 1e6, DCGainDB: 100})
	if err != nil {
		fmt.Println(err)
		return
	}
	f0, q, _ := r.DominantPair()
	fmt.Printf("%d poles; f0 = %.4g Hz, Q = %.4g\n", len(r.Poles()), f0, q)
	// Output:
	// 3 poles; f0 = 1072 Hz, Q = 0.7422
}

// An inverting gain stage of 2.2 driving a 1 kΩ / 10 nF follower lowpass,
// on a 1 MHz op-amp with 200 Ω of open-loop output resistance: the
// follower's input loads the first op-amp's output, slightly at 1 kHz,
// where its loop gain is large, and more at 100 kHz.
func ExampleChain_Loading() {
	ch := loadedPair()
	l, err := ch.Loading()
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, f := range []float64{1e3, 1e5} {
		fmt.Printf("%g Hz: %.5f dB\n", f, l.DBAt(f))
	}
	// Output:
	// 1000 Hz: 0.00035 dB
	// 100000 Hz: -0.10227 dB
}

// loadedPair is an inverting stage driving a follower RC, both on a 1 MHz
// op-amp with 200 Ω of open-loop output resistance.
func loadedPair() circuit.Chain {
	inv := circuit.Stage{
		Topology: "inverting",
		Parts: []circuit.Part{
			{Ref: "R1", Kind: circuit.Resistor, A: "in", B: "n1", Value: 1e3},
			{Ref: "R2", Kind: circuit.Resistor, A: "n1", B: "out", Value: 2.2e3},
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "0", Minus: "n1", Out: "out"}},
		Out:    "out",
	}
	rc := circuit.Stage{
		Topology: "rc-buffer",
		Parts: []circuit.Part{
			{Ref: "R1", Kind: circuit.Resistor, A: "in", B: "n1", Value: 1e3},
			{Ref: "C1", Kind: circuit.Capacitor, A: "n1", B: "0", Value: 10e-9},
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n1", Minus: "out", Out: "out"}},
		Out:    "out",
	}
	ch := circuit.Chain{Stages: []circuit.Stage{inv, rc}, Model: circuit.Model{GBWHz: 1e6, DCGainDB: 100, OutputResistanceOhm: 200}}
	return ch
}

// ExampleLoading_FirstOrder loads the first of two stages by the second's
// input for a step response: the loaded stage's rational carries the
// second stage's input poles too, its product with the second stage is
// the chain's response as built, and StepShift says how far the loading
// may move the unit step (the chain of ExampleChain_Loading).
func ExampleLoading_FirstOrder() {
	ch := loadedPair()
	tfs, err := ch.TransferFunctions()
	if err != nil {
		fmt.Println(err)
		return
	}
	l, err := ch.Loading()
	if err != nil {
		fmt.Println(err)
		return
	}
	fo := l.FirstOrder(tfs)
	built, err := ch.Response(nil, []float64{1e5})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("poles: %d unloaded, %d loaded\n", len(tfs[0].Poles()), len(fo[0].Poles()))
	fmt.Printf("at 100 kHz the first-order stages are the chain as built: %t\n", cmplx.Abs(fo.AtHz(1e5)-built[0]) < 1e-9*cmplx.Abs(built[0]))
	fmt.Printf("the loading may move the unit step by %.1e\n", l.StepShift(tfs, 1, 1e9, 8))
	// Output:
	// poles: 1 unloaded, 3 loaded
	// at 100 kHz the first-order stages are the chain as built: true
	// the loading may move the unit step by 2.0e-02
}
