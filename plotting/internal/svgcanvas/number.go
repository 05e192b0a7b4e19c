package svgcanvas

import (
	"math"
	"strconv"
)

// pow10 holds the exact powers of ten 10⁰ … 10⁸; lower[e+4] is the
// double nearest 10^e, e = −4 … 4 (a wrong guess of the exponent at its
// edge yields a rounded value out of range, which goes to strconv).
var (
	pow10 = [...]float64{1, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8}
	lower = [...]float64{1e-4, 1e-3, 1e-2, 1e-1, 1, 1e1, 1e2, 1e3, 1e4}
)

// appendG appends v as strconv.AppendFloat(b, v, 'g', 5, 64) does (and so
// fmt's %.5g). Coordinates of a plot, between 1e-4 and 1e5 in size, take a
// short path: v scaled by an exact power of ten to five digits before the
// point and rounded, which is the correctly rounded decimal unless the
// scaled value lies within 1e-9 of a rounding tie (its error is below
// 2e-11), and those, like every other value, go to strconv.
func appendG(b []byte, v float64) []byte {
	a := math.Abs(v)
	if !(a >= 1e-4 && a < 1e5) {
		return strconv.AppendFloat(b, v, 'g', pr, 64)
	}
	e := 0 // a in [10^e, 10^(e+1))
	if a >= 1 {
		for e < 4 && a >= lower[e+5] {
			e++
		}
	} else {
		for e > -4 && a < lower[e+4] {
			e--
		}
	}
	x := a * pow10[4-e]
	fl := math.Floor(x)
	f := x - fl
	if math.Abs(f-0.5) < 1e-9 {
		return strconv.AppendFloat(b, v, 'g', pr, 64)
	}
	r := int(fl)
	if f > 0.5 {
		r++
	}
	if r < 10000 || r > 99999 {
		return strconv.AppendFloat(b, v, 'g', pr, 64)
	}
	var d [5]byte
	d[0], r = byte('0'+r/10000), r%10000
	d[1], r = byte('0'+r/1000), r%1000
	d[2], r = byte('0'+r/100), r%100
	d[3], d[4] = byte('0'+r/10), byte('0'+r%10)
	n := 5 // significant digits left once trailing zeros go
	for n > 1 && d[n-1] == '0' {
		n--
	}
	if v < 0 {
		b = append(b, '-')
	}
	if e >= 0 {
		b = append(b, d[:min(e+1, n)]...)
		for i := n; i < e+1; i++ {
			b = append(b, '0')
		}
		if n > e+1 {
			b = append(b, '.')
			b = append(b, d[e+1:n]...)
		}
		return b
	}
	b = append(b, '0', '.')
	for i := 0; i < -e-1; i++ {
		b = append(b, '0')
	}
	return append(b, d[:n]...)
}
