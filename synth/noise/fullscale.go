package noise

import "math"

// LSBVolts returns the step of an ideal bits-bit converter with the
// full-scale range fullScaleVpp (peak to peak, V): fullScaleVpp/2^bits.
// It returns NaN for bits outside 1..64 or a full scale that is not finite
// and > 0.
func LSBVolts(bits int, fullScaleVpp float64) float64 {
	if bits < 1 || bits > 64 || !(fullScaleVpp > 0) || math.IsInf(fullScaleVpp, 1) {
		return math.NaN()
	}
	return math.Ldexp(fullScaleVpp, -bits)
}

// QuantizationRMSV returns the rms quantisation noise of an ideal
// bits-bit converter, LSB/√12 (the error uniform over ±½ LSB; textbook),
// in V. Invalid input gives NaN as for [LSBVolts].
func QuantizationRMSV(bits int, fullScaleVpp float64) float64 {
	return LSBVolts(bits, fullScaleVpp) / math.Sqrt(12)
}

// SlewVPerS returns the slew rate a full-scale sine of frequency fHz
// needs, 2π·f·Vpeak with Vpeak = fullScaleVpp/2, in V/s: the largest
// slope of Vpeak·sin(2πft) (common practice: an op-amp slower than this
// distorts the sine at full scale). Negative or non-finite input gives
// NaN.
func SlewVPerS(fHz, fullScaleVpp float64) float64 {
	if !(fHz >= 0) || math.IsInf(fHz, 1) || !(fullScaleVpp >= 0) || math.IsInf(fullScaleVpp, 1) {
		return math.NaN()
	}
	return 2 * math.Pi * fHz * fullScaleVpp / 2
}
