package web

import (
	"math"
	"strconv"
	"strings"

	siunit "github.com/polewright/polewright/standards/si"
)

// si formats v with a metric prefix (see [si.Format]).
func si(v float64, unit string, digits int) string { return siunit.Format(v, unit, digits) }

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
	"butterworth":  "Butterworth",
	"chebyshev1":   "Chebyshev I",
	"chebyshev2":   "Chebyshev II",
	"bessel":       "Bessel",
	"elliptic":     "Elliptic",
	"legendre":     "Optimum-L (Legendre)",
	"gaussian":     "Gaussian",
	"linear-phase": "Linear phase (equiripple)",
}
