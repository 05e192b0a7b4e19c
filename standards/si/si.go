// Package si formats quantities with the metric (SI) prefixes from femto
// to tera.
package si

import (
	"math"
	"strconv"
	"strings"
)

// siPrefixes are the metric prefixes of the SI (BIPM, The International System of Units, 9th edition), by power of 1000
// from 10⁻¹⁵.
var siPrefixes = []string{"f", "p", "n", "µ", "m", "", "k", "M", "G", "T"}

// Format formats v with a metric prefix and digits significant digits, trailing
// zeros dropped: Format(15915.49, "Hz", 4) = "15.92 kHz". Zero is "0 unit";
// NaN and infinities are spelt out.
func Format(v float64, unit string, digits int) string {
	switch {
	case math.IsNaN(v):
		return "—"
	case math.IsInf(v, 0):
		if v > 0 {
			return "∞"
		}
		return "−∞"
	case v == 0:
		return strings.TrimSpace("0 " + unit)
	}
	sign := ""
	if v < 0 {
		sign, v = "−", -v
	}
	// Round first, so that 999.96 with 4 digits becomes 1 k, not 1000.
	v, _ = strconv.ParseFloat(strconv.FormatFloat(v, 'g', digits, 64), 64)
	exp := int(math.Floor(math.Log10(v) / 3))
	exp = max(-5, min(4, exp))
	scaled := v / math.Pow(1000, float64(exp))
	num := strconv.FormatFloat(scaled, 'f', max(0, digits-1-int(math.Floor(math.Log10(scaled)))), 64)
	if strings.Contains(num, ".") {
		num = strings.TrimRight(strings.TrimRight(num, "0"), ".")
	}
	return sign + num + " " + siPrefixes[exp+5] + unit
}
