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

// The studio anti-alias filter's far-zero section (f0 17.2 kHz, Q 0.86,
// zeros at 176 kHz, unity DC gain) on the two-integrator loop: three
// op-amps, no path with an s term, so its zeros stay on the jω axis with
// any part values. The window's least capacitor (100 pF) cannot be 1/105
// of an integrating capacitor whose damping resistor R1 = Q/(ω0·C1)
// stays above 1 kΩ, so the gain is the ratio C3/C1 a few dB up, which
// package synth takes up in another stage.
func ExampleRealize_twoIntegratorNotch() {
	w0, wz := 2*math.Pi*17.2e3, 2*math.Pi*176e3
	p := cmplx.Rect(w0, math.Pi-math.Acos(1/(2*0.86)))
	sec := section.Section{Poles: []complex128{p, cmplx.Conj(p)}, Zeros: []complex128{complex(0, wz), complex(0, -wz)}, Gain: w0 * w0 / (wz * wz)}

	r, err := topology.Realize(sec, topology.TwoIntegratorNotch, topology.DefaultOptions())
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, part := range r.Stage.Parts {
		fmt.Printf("%s %s–%s %.4g\n", part.Ref, part.A, part.B, part.Value)
	}
	fmt.Printf("op-amps %d, inverting %v\n", len(r.Stage.OpAmps), r.Inverting)
	fmt.Printf("f0 %+.2f %%, Q %+.2f %%, zeros %+.2f %%, gain %+.2f dB\n", r.F0ErrPct, r.QErrPct, r.ZeroErrPct, 20*math.Log10(1+r.GainErrPct/100))
	// Output:
	// R1 out–i1 1180
	// R2 inv–i1 1020
	// R3 out–i2 1.78e+04
	// R4 in–i2 1.15e+04
	// R5 lp–i3 1.47e+04
	// R6 i3–inv 1.43e+04
	// C1 i1–out 6.8e-09
	// C2 i2–lp 6.8e-10
	// C3 in–i1 1e-10
	// op-amps 3, inverting true
	// f0 -0.39 %, Q +0.43 %, zeros -0.13 %, gain +3.79 dB
}
