package circuit_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
)

// A first-order RC lowpass behind a follower (R1 = 10 kΩ, C1 = 10 nF)
// converted to differential by a unity-gain FDA (10 kΩ halves): the
// differential output is −1 times the section's (its outputs crossed,
// +1), 3 dB down at 1/(2π·R1·C1), and SplitConversion gives the section
// and the conversion back.
func ExampleStage_WithConversion() {
	se := circuit.Stage{
		Topology: "rc-buffer",
		Parts: []circuit.Part{
			{Ref: "R1", Kind: circuit.Resistor, A: circuit.In, B: "p", Value: 10e3},
			{Ref: "C1", Kind: circuit.Capacitor, A: "p", B: circuit.Ground, Value: 10e-9},
		},
		OpAmps: []circuit.OpAmp{{Ref: "U1", Plus: "p", Minus: "out", Out: "out"}},
		Out:    "out",
	}
	st, err := se.WithConversion(circuit.Part{Value: 10e3})
	if err != nil {
		fmt.Println(err)
		return
	}
	var parts []string
	for _, p := range st.Parts {
		parts = append(parts, p.Ref+" "+p.A+"-"+p.B)
	}
	fmt.Println(strings.Join(parts, "; "))
	u := st.OpAmps[1]
	fmt.Printf("%s: + %s, − %s, out %s and %s\n", u.Ref, u.Plus, u.Minus, u.Out, u.OutN)
	m := circuit.Model{Ideal: true}
	dc, _ := st.SolveAt(m, 0)
	crossed, _ := st.CrossOutputs().SolveAt(m, 0)
	fc := 1 / (2 * math.Pi * 10e3 * 10e-9)
	h, _ := st.SolveAt(m, complex(0, 2*math.Pi*fc))
	fmt.Printf("DC %.4g (crossed %.4g), at %.4g Hz %.3g dB\n", real(dc), real(crossed), fc, 20*math.Log10(cmplx.Abs(h)))
	sec, conv, ok := st.SplitConversion()
	fmt.Println(ok, sec.Out, len(sec.Parts), len(conv.Parts))
	// Output:
	// R1 in-p; C1 p-0; R2A out-cvma; R3A cvma-cvoa; R2B 0-cvmb; R3B cvmb-cvob
	// U2: + cvmb, − cvma, out cvoa and cvob
	// DC -1 (crossed 1), at 1592 Hz -3.01 dB
	// true out 2 4
}
