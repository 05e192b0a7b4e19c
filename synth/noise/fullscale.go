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

// SNRdB returns the signal-to-noise ratio of a full-scale sine (rms
// fullScaleVpp/(2√2)) in the output words of an ideal bits-bit converter
// whose input carries noiseRMSV: against the quantisation noise
// q = LSB/√12 ([QuantizationRMSV]) and the noise added in power,
// 20·log10((fullScaleVpp/(2√2))/√(q² + noise²)) in dB. With no noise it is
// the ideal converter's 20·log10(2^bits·√1.5) ≈ 6.02·bits + 1.76 dB
// (textbook). It returns NaN for invalid bits or full scale (as
// [LSBVolts]) or a noise that is not finite and ≥ 0.
func SNRdB(bits int, fullScaleVpp, noiseRMSV float64) float64 {
	q := QuantizationRMSV(bits, fullScaleVpp)
	if math.IsNaN(q) || !(noiseRMSV >= 0) || math.IsInf(noiseRMSV, 1) {
		return math.NaN()
	}
	return 20 * math.Log10(fullScaleVpp/(2*math.Sqrt2)/math.Hypot(q, noiseRMSV))
}

// ENOBLossBits returns the bits a noise of noiseRMSV at the converter's
// input costs an ideal bits-bit converter: log2(√(q² + noise²)/q) with
// q = LSB/√12, ≥ 0 (0 without noise, ½ bit when the noise equals q). It
// returns NaN for invalid input, as [SNRdB].
func ENOBLossBits(bits int, fullScaleVpp, noiseRMSV float64) float64 {
	q := QuantizationRMSV(bits, fullScaleVpp)
	if math.IsNaN(q) || !(noiseRMSV >= 0) || math.IsInf(noiseRMSV, 1) {
		return math.NaN()
	}
	r := noiseRMSV / q
	if r > 1e100 {
		return math.Log2(r)
	}
	// ½·log2(1 + r²), accurate for a small r.
	return math.Log1p(r*r) / (2 * math.Ln2)
}
