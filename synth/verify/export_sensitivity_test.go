package verify

import (
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/circuit"
)

// DominantFromRoots reads f0 (Hz) and Q from the poles dominantRoots
// selects in r's poles, by the formulas of circuit.Rational.DominantPair.
func DominantFromRoots(r circuit.Rational) (f0Hz, q float64, ok bool) {
	sel, ok := dominantRoots(r.Poles(), r.SectionOrder)
	if !ok {
		return 0, 0, false
	}
	const toHz = 1 / (2 * math.Pi)
	switch p := sel.roots[0]; sel.kind {
	case pairComplex:
		return cmplx.Abs(p) * toHz, cmplx.Abs(p) / (-2 * real(p)), true
	case pairReal:
		p1, p2 := real(p), real(sel.roots[1])
		w0 := math.Sqrt(p1 * p2)
		return w0 * toHz, w0 / -(p1 + p2), true
	default:
		return math.Abs(real(p)) * toHz, 0, true
	}
}

// AdjointSensitivities is the adjoint path of Sensitivities alone,
// unranked; ok is false where Sensitivities falls back to central
// differences.
func AdjointSensitivities(st circuit.Stage, m circuit.Model) (sens []Sensitivity, ok bool, err error) {
	r, err := st.TransferFunction(m)
	if err != nil {
		return nil, false, err
	}
	sel, ok := dominantRoots(r.Poles(), r.SectionOrder)
	if !ok {
		return nil, false, nil
	}
	sens, ok = adjointSensitivities(st, m, r.ScaleRadPerSec, sel)
	return sens, ok, nil
}
