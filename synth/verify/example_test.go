package verify_test

import (
	"context"
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/verify"
)

// A 4th-order Butterworth lowpass at 1 kHz as two unity-gain Sallen-Key
// stages (1 % resistors, 5 % capacitors), built 500 times: how many
// boards keep within ±0.5 dB to 700 Hz and reach 20 dB of loss by 3 kHz,
// and how far do the stages' f0 and Q spread?
func ExampleMonteCarlo() {
	stage := func(q float64) circuit.Stage {
		c2 := 10e-9
		c1 := 4 * q * q * c2
		r := 1 / (2 * math.Pi * 1000 * math.Sqrt(c1*c2))
		return circuit.Stage{
			Topology: "sallen-key",
			Parts: []circuit.Part{
				{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "n1", Value: r, TolerancePct: 1},
				{Ref: "R2", Kind: circuit.Resistor, A: "n1", B: "n2", Value: r, TolerancePct: 1},
				{Ref: "C1", Kind: circuit.Capacitor, A: "n1", B: "out", Value: c1, TolerancePct: 5},
				{Ref: "C2", Kind: circuit.Capacitor, A: "n2", B: circuit.Ground, Value: c2, TolerancePct: 5},
			},
			OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
			Out:    "out",
		}
	}
	ch := circuit.Chain{
		Stages: []circuit.Stage{stage(0.5412), stage(1.3066)},
		Model:  circuit.Model{GBWHz: 1e6, DCGainDB: 100},
	}
	freq := []float64{100, 300, 700, 3000, 10000}
	meets := func(db []float64) bool {
		for i, f := range freq {
			if f <= 700 && math.Abs(db[i]) > 0.5 || f >= 3000 && db[i] > -20 {
				return false
			}
		}
		return true
	}
	res, err := verify.MonteCarlo(context.Background(), ch, verify.Tolerance{}, verify.MonteCarloOptions{
		Trials: 500, Seed: 1, FreqHz: freq,
		Edges: []verify.Edge{{Name: "passband_edge", FreqHz: 700}},
	}, verify.GridOnly(meets))
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("yield %.3g\n", res.Yield)
	for k, s := range res.Stages {
		fmt.Printf("stage %d: f0 %.4g Hz ± %.3g %%, Q %.3g ± %.3g %%\n", k+1, s.F0MeanHz, s.F0StdPct, s.QMean, s.QStdPct)
	}
	fmt.Printf("at 700 Hz: %.3g to %.3g dB\n", res.Envelope.MinDB[2], res.Envelope.MaxDB[2])
	// Output:
	// yield 0.876
	// stage 1: f0 999.6 Hz ± 1.98 %, Q 0.541 ± 2.11 %
	// stage 2: f0 999.6 Hz ± 2.03 %, Q 1.31 ± 2.03 %
	// at 700 Hz: -0.765 to 0.335 dB
}

// The sensitivities of a unity-gain Sallen-Key lowpass with R1 ≠ R2, and
// the tolerances that keep its f0 within 1 % and Q within 2 % on 99 % of
// the boards.
func ExampleSensitivities() {
	st := circuit.Stage{
		Topology: "sallen-key",
		Parts: []circuit.Part{
			{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "n1", Value: 10e3},
			{Ref: "R2", Kind: circuit.Resistor, A: "n1", B: "n2", Value: 22e3},
			{Ref: "C1", Kind: circuit.Capacitor, A: "n1", B: "out", Value: 33e-9},
			{Ref: "C2", Kind: circuit.Capacitor, A: "n2", B: circuit.Ground, Value: 4.7e-9},
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "n2", Minus: "out", Out: "out"}},
		Out:    "out",
	}
	sens, err := verify.Sensitivities(st, circuit.Model{Ideal: true})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range sens {
		fmt.Printf("%s: S^f0 %.4g, S^Q %.4g\n", s.Ref, s.F0, s.Q)
	}
	req, err := verify.RequiredTolerancePct(sens, verify.ToleranceTarget{F0Pct: 1, QPct: 2, Yield: 0.99})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range req {
		fmt.Printf("%s: %.3g %%\n", r.Ref, r.TolerancePct)
	}
	// Output:
	// R1: S^f0 -0.5, S^Q 0.1875
	// R2: S^f0 -0.5, S^Q -0.1875
	// C1: S^f0 -0.5, S^Q 0.5
	// C2: S^f0 -0.5, S^Q -0.5
	// R1: 0.617 %
	// R2: 0.617 %
	// C1: 0.617 %
	// C2: 0.617 %
}
