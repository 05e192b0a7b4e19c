package circuit

import (
	"fmt"
	"math"
	"slices"
)

// PartSlopes is a stage's transfer function as a function of each of its
// parts taken alone. A part enters the nodal matrix as one rank-one stamp
// of its admittance, so the nodal determinant and the output cofactor are
// affine in that admittance: with part j's admittance multiplied by a
// (a = 1 nominal; a resistor of value R·f has a = 1/f, a capacitor of
// value C·f has a = f) and every other part nominal,
//
//	V(Out)/V(In) = (Num + (a−1)·DNum[j]) / (Den + (a−1)·DDen[j]),
//
// polynomials in p = s/ScaleRadPerSec, ascending, all scaled by one common
// factor (Den's lowest non-zero coefficient is 1).
type PartSlopes struct {
	Num, Den       []float64
	DNum, DDen     [][]float64
	ScaleRadPerSec float64
}

// At returns the stage's polynomials with part j's admittance scaled by a,
// in num and den (each grown to the needed length; the results are
// returned).
func (ps PartSlopes) At(j int, a float64, num, den []float64) ([]float64, []float64) {
	num = affineAt(num[:0], ps.Num, ps.DNum[j], a-1)
	den = affineAt(den[:0], ps.Den, ps.DDen[j], a-1)
	return num, den
}

func affineAt(dst, c, d []float64, t float64) []float64 {
	n := max(len(c), len(d))
	for i := range n {
		var v float64
		if i < len(c) {
			v = c[i]
		}
		if i < len(d) {
			v += t * d[i]
		}
		dst = append(dst, v)
	}
	return dst
}

// Slopes returns the stage's [PartSlopes] with the op-amp model m, in the
// variable s/scaleRadPerSec (0: the stage's own scale, as for
// [Stage.TransferFunctionScaled]). It interpolates the nodal determinant
// and cofactor once for the nominal stage and once per part with that
// part's admittance doubled, on the nominal stage's normalisation, so the
// slopes are exact up to the interpolation's rounding. Errors are as for
// [Stage.TransferFunctionScaled].
func (st Stage) Slopes(m Model, scaleRadPerSec float64) (PartSlopes, error) {
	if err := m.Validate(); err != nil {
		return PartSlopes{}, err
	}
	t, err := st.check()
	if err != nil {
		return PartSlopes{}, err
	}
	natural, rn := stageScale(st, m)
	scale := scaleRadPerSec
	if scale == 0 {
		scale = natural
	}
	if !finitePositive(scale) {
		return PartSlopes{}, invalidf("scale %v rad/s is not finite and > 0", scale)
	}
	sys := compile(st, m, t, natural)
	num0, den0 := sys.interpolate()
	lo := slices.IndexFunc(den0, func(v float64) bool { return v != 0 })
	if lo < 0 {
		return PartSlopes{}, fmt.Errorf("%w: the nodal determinant is identically zero", ErrSingular)
	}
	norm := den0[lo]
	k := scale / natural
	rescale := func(c []float64) []float64 {
		kj := 1.0
		for j := range c {
			c[j] = c[j] * kj / norm
			kj *= k
		}
		return c
	}
	ps := PartSlopes{ScaleRadPerSec: scale}
	g0, c0 := slices.Clone(sys.g), slices.Clone(sys.c)
	for j := range st.Parts {
		// Double part j: add its stamp once more (the difference of the
		// stamped and the nominal matrices is the stamp itself).
		copy(sys.g, g0)
		copy(sys.c, c0)
		sys.stampPart(st.Parts[j], t, rn, natural)
		num2, den2 := sys.interpolate()
		dn := make([]float64, len(num0))
		dd := make([]float64, len(den0))
		for i := range dn {
			dn[i] = num2[i] - num0[i]
			dd[i] = den2[i] - den0[i]
		}
		ps.DNum = append(ps.DNum, trimPoly(rescale(dn)))
		ps.DDen = append(ps.DDen, trimPoly(rescale(dd)))
	}
	ps.Num = trimPoly(rescale(num0))
	ps.Den = trimPoly(rescale(den0))
	for _, c := range [][]float64{ps.Num, ps.Den} {
		for _, v := range c {
			if math.IsInf(v, 0) || math.IsNaN(v) {
				return PartSlopes{}, invalidf("scale %v rad/s is too far from the stage's natural scale %v rad/s", scale, natural)
			}
		}
	}
	return ps, nil
}
