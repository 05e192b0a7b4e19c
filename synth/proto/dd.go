package proto

import "math"

// Double-double arithmetic: a value is hi+lo with |lo| ≤ ulp(hi)/2, about
// 106 bits of significand. It is used only to evaluate θ_n near its zeros,
// where float64 loses up to ten digits to cancellation.

type dd struct{ hi, lo float64 }

// twoSum returns s, e with s+e = a+b exactly.
func twoSum(a, b float64) (float64, float64) {
	s := a + b
	bb := s - a
	return s, (a - (s - bb)) + (b - bb)
}

// twoProd returns p, e with p+e = a·b exactly (barring overflow).
func twoProd(a, b float64) (float64, float64) {
	p := a * b
	return p, math.FMA(a, b, -p)
}

func ddAdd(a, b dd) dd {
	s, e := twoSum(a.hi, b.hi)
	t, f := twoSum(a.lo, b.lo)
	e += t
	s, e = twoSum(s, e) // renormalise
	e += f
	s, e = twoSum(s, e)
	return dd{s, e}
}

func ddMul(a, b dd) dd {
	p, e := twoProd(a.hi, b.hi)
	e += a.hi*b.lo + a.lo*b.hi
	p, e = twoSum(p, e)
	return dd{p, e}
}

func ddNeg(a dd) dd { return dd{-a.hi, -a.lo} }

// cdd is a complex double-double.
type cdd struct{ re, im dd }

func cddAdd(a, b cdd) cdd { return cdd{ddAdd(a.re, b.re), ddAdd(a.im, b.im)} }

func cddMul(a, b cdd) cdd {
	return cdd{
		ddAdd(ddMul(a.re, b.re), ddNeg(ddMul(a.im, b.im))),
		ddAdd(ddMul(a.re, b.im), ddMul(a.im, b.re)),
	}
}

// cddScale multiplies by a float64 m.
func cddScale(a cdd, m float64) cdd {
	mm := dd{m, 0}
	return cdd{ddMul(a.re, mm), ddMul(a.im, mm)}
}

func (a cdd) complex() complex128 { return complex(a.re.hi+a.re.lo, a.im.hi+a.im.lo) }
