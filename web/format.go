package web

import (
	"math"
	"strconv"
	"strings"
)

// siPrefixes are the metric prefixes used on the page, by power of 1000
// from 10⁻¹⁵.
var siPrefixes = []string{"f", "p", "n", "µ", "m", "", "k", "M", "G", "T"}

// si formats v with a metric prefix and digits significant digits, trailing
// zeros dropped: si(15915.49, "Hz", 4) = "15.92 kHz". Zero is "0 unit";
// NaN and infinities are spelt out.
func si(v float64, unit string, digits int) string {
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

// db formats a level in dB with two decimals; signed adds a + to positive
// values (for margins).
func db(v float64, signed bool) string {
	if math.IsNaN(v) {
		return "—"
	}
	s := strconv.FormatFloat(v, 'f', 2, 64)
	if s == "-0.00" {
		s = "0.00"
	}
	if signed && v >= 0 && !strings.HasPrefix(s, "-") {
		s = "+" + s
	}
	return strings.Replace(s, "-", "−", 1) + " dB"
}

// pct formats a relative error as a signed percentage with 2 decimals.
func pct(rel float64) string {
	s := strconv.FormatFloat(100*rel, 'f', 2, 64)
	if s == "-0.00" {
		s = "0.00"
	}
	if !strings.HasPrefix(s, "-") {
		s = "+" + s
	}
	return strings.Replace(s, "-", "−", 1) + " %"
}

// plain formats v in the shortest decimal form that reads back as v,
// without an exponent ("172000", "110.12"), for values put into the form.
func plain(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// approxNames are the approximations as the page spells them.
var approxNames = map[string]string{
	"butterworth": "Butterworth",
	"chebyshev1":  "Chebyshev I",
	"chebyshev2":  "Chebyshev II",
	"bessel":      "Bessel",
	"elliptic":    "Elliptic",
}
