// Package zpk holds rational transfer functions in factored form,
// H(s) = K·∏(s−zᵢ)/∏(s−pⱼ), and evaluates them without ever expanding the
// numerator or denominator into polynomial coefficients.
//
// # Conventions
//
// Zeros and poles are complex numbers in rad/s, or in rad/s normalised to a
// 1 rad/s edge where a caller says so. Complex roots are stored with their
// conjugates, so a real filter has a real gain K and real coefficients when
// expanded. Only finite zeros are stored: a lowpass of order n with m finite
// zeros has n−m zeros at infinity.
package zpk
