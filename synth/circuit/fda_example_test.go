package circuit_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
)

// An inverting first-order lowpass (R1 = R2 = 10 kΩ, C1 = 10 nF) made
// fully differential: two matched halves around one FDA, here converting
// a single-ended input. At DC the differential gain is −R2/R1 and at
// 1/(2π·R2·C1) it is 3 dB down; with half B's input resistor 1 % high a
// common-mode input reaches the output as R2·(1/R1B − 1/R1)·(1 − Vx),
// Vx = (R2/R1 + R2/R1B)/(2 + R2/R1 + R2/R1B) (the node equations at DC,
// the FDA's inputs both at Vx): −0.00496.
func ExampleStage_ToFullyDifferential() {
	se := circuit.Stage{
		Topology: "inverting-rc",
		Parts: []circuit.Part{
			{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "m", Value: 10e3},
			{Ref: "R2", Kind: circuit.Resistor, A: "m", B: "out", Value: 10e3},
			{Ref: "C1", Kind: circuit.Capacitor, A: "m", B: "out", Value: 10e-9},
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: circuit.Ground, Minus: "m", Out: "out"}},
		Out:    "out",
	}
	fd, err := se.ToFullyDifferential(false)
	if err != nil {
		fmt.Println(err)
		return
	}
	var parts []string
	for _, p := range fd.Parts {
		parts = append(parts, p.Ref+" "+p.A+"-"+p.B)
	}
	fmt.Println(strings.Join(parts, "; "))
	m := circuit.Model{Ideal: true}
	dc, _ := fd.SolveAt(m, 0)
	fc := 1 / (2 * math.Pi * 10e3 * 10e-9)
	h, _ := fd.SolveAt(m, complex(0, 2*math.Pi*fc))
	fmt.Printf("DC %.4g, at %.4g Hz %.3g dB\n", real(dc), fc, 20*math.Log10(cmplx.Abs(h)))
	fd.Parts[3].Value *= 1.01 // R1B
	_, common, _ := fd.InputModes()
	c, _ := common.SolveAt(m, 0)
	fmt.Printf("common mode to differential at DC: %.3g\n", real(c))
	// Output:
	// R1A in-ma; R2A ma-outa; C1A ma-outa; R1B 0-mb; R2B mb-outb; C1B mb-outb
	// DC -1, at 1592 Hz -3.01 dB
	// common mode to differential at DC: -0.00496
}
