package schematic_test

import (
	"bytes"
	"fmt"
	"strings"

	"github.com/polewright/polewright/plotting/schematic"
	"github.com/polewright/polewright/synth/circuit"
)

func ExampleFormatValue() {
	fmt.Println(schematic.FormatValue(10200, circuit.Resistor))
	fmt.Println(schematic.FormatValue(4.7e-9, circuit.Capacitor))
	fmt.Println(schematic.FormatValue(2.2e-10, circuit.Capacitor))
	fmt.Println(schematic.FormatValue(9999, circuit.Resistor))
	fmt.Println(schematic.FormatValue(0, circuit.Resistor))
	// Output:
	// 10.2 kΩ
	// 4.7 nF
	// 220 pF
	// 10 kΩ
	// ? Ω
}

// An RC lowpass with a follower, drawn with the chain-wide designators of
// stage 2 of a chain.
func ExampleStage() {
	chain := circuit.Chain{Stages: []circuit.Stage{{}, {
		Topology: "rc-buffer",
		Parts: []circuit.Part{
			{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "p", Value: 10.2e3},
			{Ref: "C1", Kind: circuit.Capacitor, A: "p", B: circuit.Ground, Value: 4.7e-9},
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "p", Minus: "out", Out: "out"}},
		Out:    "out",
	}}}
	var b bytes.Buffer
	err := schematic.Stage(&b, chain.Stages[1], schematic.Options{
		Title: "Stage 2",
		Refs:  func(local string) string { return chain.Ref(2, local) },
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	svg := b.String()
	fmt.Println(strings.HasPrefix(svg, "<svg "), strings.Contains(svg, ">R201<"), strings.Contains(svg, ">10.2 kΩ<"))
	// Output:
	// true true true
}
