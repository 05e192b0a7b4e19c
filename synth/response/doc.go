// Package response evaluates the frequency response of a transfer function
// held in zero/pole/gain form on a grid of frequencies: magnitude in dB,
// phase in degrees and group delay in seconds, all computed factor by
// factor from the roots, never from expanded polynomials. It also builds
// frequency grids that resolve sharp resonances and finds the peak of the
// magnitude.
//
// # Conventions
//
// Frequencies passed to and returned by this package are in Hz; zeros and
// poles are in rad/s, as in package zpk. The only conversion between the
// two is [RadPerSec] (and its inverse, next to it).
//
// Functions that fill a slice follow gonum's destination-first style: the
// first argument dst receives the result; if len(dst) < len(freqHz) a new
// slice is allocated instead, and the result is returned as
// dst[:len(freqHz)]. With a long enough dst they do not allocate. dst may
// be freqHz itself, in which case the frequencies are overwritten.
//
// Phase and group delay are analytic: the phase is the sum of every
// factor's continuous argument, so it needs no unwrapping and never
// depends on how densely the frequencies are sampled, and the group delay
// is the closed-form derivative of that sum, with no finite differences.
//
// A root whose real part is zero, or below 1e-12 of its imaginary part in
// magnitude, is treated as lying exactly on the jω axis. Such a zero makes
// the phase step by exactly +180° (a pole: −180°) where the frequency
// passes it, and contributes nothing to the group delay; exactly at its
// frequency the magnitude is −Inf dB (+Inf for a pole), the phase is half
// way through the step, and the group delay omits the impulse.
package response
