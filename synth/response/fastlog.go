package response

import "math"

// logBits is the number of leading mantissa bits that pick logTable's
// entry.
const logBits = 7

// logTable holds, for each bucket j of the mantissa m ∈ [1, 2) (the
// logBits bits after the binary point), the reciprocal c of the bucket's
// centre (c = 1 for the first bucket, so that logarithms of numbers near
// 1 keep their relative precision) and −ln c.
var logTable = func() (t [1 << logBits]struct{ inv, negLog float64 }) {
	for j := range t {
		if j == 0 {
			t[j].inv = 1
			continue
		}
		c := 1 + (float64(j)+0.5)/(1<<logBits)
		t[j].inv = 1 / c
		t[j].negLog = -math.Log(t[j].inv)
	}
	return t
}()

// logPos returns the natural logarithm of x, within about one unit in the
// last place of math.Log(x), at a fraction of its cost; x ≤ 0,
// subnormal, in [0.5, 1), +Inf or NaN goes to math.Log. With x = 2^k·m, m ∈ [1, 2) and c the
// reciprocal of the centre of m's bucket (logTable),
// ln x = k·ln 2 − ln c + ln(1 + r) for r = m·c − 1, |r| < 2^−8, formed
// exactly by a fused multiply–add; ln(1 + r) is its Taylor series to r⁸
// (the first term left out, r⁹/9, is below 1e−22).
func logPos(x float64) float64 {
	b := math.Float64bits(x)
	e := int(b >> 52 & 0x7ff)
	if e == 0 || e == 0x7ff || e == 1022 || b>>63 != 0 {
		// e = 1022 is [0.5, 1), where k·ln 2 and ln m would cancel near 1.
		return math.Log(x)
	}
	m := math.Float64frombits(b&(1<<52-1) | 1023<<52)
	t := &logTable[b>>(52-logBits)&(1<<logBits-1)]
	r := math.FMA(m, t.inv, -1)
	// ln(1+r) = r − r²/2 + r³/3 − … − r⁸/8, in Horner form on r.
	p := -1.0 / 8
	p = p*r + 1.0/7
	p = p*r - 1.0/6
	p = p*r + 1.0/5
	p = p*r - 1.0/4
	p = p*r + 1.0/3
	p = p*r - 1.0/2
	k := float64(e - 1023)
	// ln 2 split as Go's math.Log splits it: k·ln2Hi is exact.
	const (
		ln2Hi = 6.93147180369123816490e-01
		ln2Lo = 1.90821492927058770002e-10
	)
	return k*ln2Hi + (t.negLog + (k*ln2Lo + (r + r*r*p)))
}
