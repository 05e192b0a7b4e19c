package topology_test

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// A 1 kHz, Q = 0.7071 (Butterworth) unity-gain lowpass section as a
// Sallen-Key stage with E96 resistors and E12 capacitors.
func ExampleRealize() {
	w0 := 2 * math.Pi * 1000
	p := cmplx.Rect(w0, math.Pi-math.Acos(1/(2*0.7071))) // upper pole of ω0, Q
	sec := section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Gain: w0 * w0}

	r, err := topology.Realize(sec, topology.SallenKey, topology.DefaultOptions())
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(r.Reason)
	for _, part := range r.Stage.Parts {
		fmt.Printf("%s %s–%s %.4g (exact %.4g, %s)\n", part.Ref, part.A, part.B, part.Value, part.Exact, part.Series)
	}
	fmt.Printf("f0 %+.3f %%, Q %+.3f %%, gain %.4f\n", r.F0ErrPct, r.QErrPct, 1+r.GainErrPct/100)
	// Output:
	// sallen-key as asked: unity gain (K = 1), C1/C2 = 2.2 ≥ 4Q² = 2
	// R1 in–a 5230 (exact 5240, E96)
	// R2 a–p 9760 (exact 9765, E96)
	// C1 a–out 3.3e-08 (exact 3.3e-08, E12)
	// C2 p–0 1.5e-08 (exact 1.5e-08, E12)
	// f0 +0.125 %, Q -0.022 %, gain 1.0000
}
