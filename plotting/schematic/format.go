package schematic

import (
	"math"
	"strconv"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
)

// prefixes are the SI prefixes FormatValue uses, by power of ten from
// 10^-15 (index 0) to 10^12 in steps of three.
var prefixes = [...]string{"f", "p", "n", "µ", "m", "", "k", "M", "G", "T"}

// minPrefixExp is the power of ten of prefixes[0].
const minPrefixExp = -15

// unit returns the unit symbol of a part kind: Ω, F, or "" for an unknown
// kind.
func unit(kind circuit.PartKind) string {
	switch kind {
	case circuit.Resistor:
		return "Ω"
	case circuit.Capacitor:
		return "F"
	}
	return ""
}

// FormatValue returns v (Ohm for a resistor, Farad for a capacitor) in
// engineering notation: three significant figures, trailing zeros dropped,
// an SI prefix from f to T and the unit, separated by a space, for example
// "10.2 kΩ", "4.7 nF", "220 pF", "1 MΩ", "1.5 µF".
//
// Three figures are enough for every IEC 60063 value: E3 to E24 values have
// two significant figures and E48 to E192 values three, so a value rounded
// to a series prints exactly. An exact (unrounded) value prints rounded to
// three figures, and the rounding may carry into the next prefix: 9999 Ω
// is "10 kΩ" and 999.7 Ω is "1 kΩ".
//
// A value outside 1 f .. 999 T of the unit prints in exponent form
// ("1.5e-18 F"). A value that no part can have — zero, negative, NaN or
// infinite — prints as "?" with the unit ("? Ω"), so that a drawing shows
// a visible mark instead of a plausible number. An unknown kind prints the
// number and prefix without a unit.
func FormatValue(v float64, kind circuit.PartKind) string {
	u := unit(kind)
	if !(v > 0) || math.IsInf(v, 1) {
		return join("?", u)
	}
	// 'e' with two decimals is the correctly rounded three-figure mantissa
	// and its exponent: "1.02e+04".
	s := strconv.FormatFloat(v, 'e', 2, 64)
	digits := s[0:1] + s[2:4]
	exp, err := strconv.Atoi(s[5:])
	if err != nil { // unreachable: FormatFloat's exponent is an integer
		return join(strconv.FormatFloat(v, 'g', 3, 64), u)
	}
	e3 := exp - mod3(exp)
	i := (e3 - minPrefixExp) / 3
	if i < 0 || i >= len(prefixes) {
		return join(strconv.FormatFloat(v, 'g', 3, 64), u)
	}
	shift := exp - e3 // 0, 1 or 2 digits before the point beyond the first
	num := digits[:shift+1]
	if frac := strings.TrimRight(digits[shift+1:], "0"); frac != "" {
		num += "." + frac
	}
	return join(num, prefixes[i]+u)
}

// mod3 is n modulo 3 in 0..2 for negative n too.
func mod3(n int) int { return ((n % 3) + 3) % 3 }

// join puts a number and its unit together with a space, or returns the
// number alone when the unit is empty.
func join(num, unit string) string {
	if unit == "" {
		return num
	}
	return num + " " + unit
}
