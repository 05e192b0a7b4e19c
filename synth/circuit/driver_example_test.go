package circuit_test

import (
	"fmt"

	"github.com/polewright/polewright/synth/circuit"
)

// A follower driving a converter's input through 49.9 Ω and 2.2 nF, with
// a 10 MHz op-amp whose open-loop output resistance is 40 Ω: the phase
// margin of its loop with that load.
func ExampleStage_PhaseMarginDeg() {
	st := circuit.Stage{Topology: "buffer", OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: circuit.In, Minus: "out", Out: "out"}}, Out: "out"}
	st = st.WithDriver(circuit.Part{Value: 49.9, Exact: 49.9, Series: "E96"}, circuit.Part{Value: 2.2e-9, Exact: 2.2e-9, Series: "E12"})
	m := circuit.Model{GBWHz: 10e6, DCGainDB: 100, OutputResistanceOhm: 40}
	pm, fc, ok, err := st.PhaseMarginDeg(m, 1)
	if err != nil || !ok {
		fmt.Println(err, ok)
		return
	}
	fmt.Printf("driver %s %g Ohm, %s %g F; phase margin %.1f° at %.2f MHz\n", st.Parts[0].Ref, st.Parts[0].Value, st.Parts[1].Ref, st.Parts[1].Value, pm, fc/1e6)
	// Output: driver R1 49.9 Ohm, C1 2.2e-09 F; phase margin 83.7° at 5.67 MHz
}
