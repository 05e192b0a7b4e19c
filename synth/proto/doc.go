// Package proto computes normalised analog lowpass prototypes — Butterworth,
// Chebyshev I, Chebyshev II (inverse Chebyshev), Bessel–Thomson, elliptic
// (Cauer), optimum-L (Legendre–Papoulis), Gaussian and linear-phase with
// equiripple phase error — as zeros, poles and gain ([zpk.ZPK]), and the
// minimum order that meets a lowpass loss mask.
//
// # Normalisation
//
// The same convention holds for every approximation:
//
//   - the loss at ω = 1 rad/s is exactly rippleDB (Amax): 1 rad/s is the
//     passband edge;
//   - the largest |H(jω)| over the passband 0 ≤ ω ≤ 1 is 1, so an
//     even-order Chebyshev I or elliptic prototype has |H(0)| =
//     10^(−rippleDB/20), and the others have |H(0)| = 1;
//   - attenDB (Amin) shapes only Chebyshev II and elliptic prototypes, whose
//     stopband loss is exactly attenDB at its minima; the stopband edge
//     (where the loss first reaches attenDB) is [StopbandEdge];
//   - the Bessel prototype is the reverse Bessel polynomial's (unit group
//     delay) scaled in frequency so that its loss at 1 rad/s is rippleDB;
//     so is the linear-phase one (from its unit-delay form). Some
//     linear-phase prototypes (larger phase ripple, higher order) rise
//     above their DC gain before they fall (0.025 dB at 0.5° and order 20,
//     0.4 dB at 2°):
//     their gain is set so that the peak is 1 and the loss at 1 rad/s,
//     counted from the peak, is rippleDB;
//   - the optimum-L prototype is |H|² = 1/(1 + ε²·L_n(ω²)) with
//     ε² = 10^(rippleDB/10) − 1 and L_n(1) = 1, and the Gaussian one
//     |H|² = 1/Σ_{k≤n}(a·ω²)^k/k! with a set so that the loss at 1 rad/s is
//     rippleDB.
//
// Relative to scipy.signal: buttap is ours at rippleDB = 10·log10 2 (−3 dB
// at 1 rad/s); cheb1ap and ellipap are ours; cheb2ap is ours scaled so
// that the stopband edge is at 1 rad/s; besselap(n, norm='mag') is ours at
// rippleDB = 10·log10 2.
//
// # Method
//
// Everything is computed, nothing is tabled, and no polynomial is expanded.
// Butterworth and Chebyshev poles and zeros have closed forms. Elliptic
// prototypes follow Orfanidis: the degree equation is solved through the
// nome, and the Jacobi functions cd and sn (complex arguments included) and
// the complete integrals K, K′ come from descending Landen transformations
// that carry each modulus together with its complement, so moduli near 0
// or 1 keep full relative accuracy. Bessel poles are found by the
// Aberth–Ehrlich iteration on the three-term recurrence of the reverse
// Bessel polynomial, finished with a double-double evaluation (float64
// loses up to ten digits to cancellation near the zeros at order 20); a
// tridiagonal eigenvalue formulation is the fallback starting point. The
// Bessel frequency scaling solves loss(ω) = rippleDB by bracketed Newton
// iteration on the same recurrence along the jω axis. The optimum-L
// polynomial is built and kept in the Legendre basis (x = 2ω² − 1) and the
// zeros of 1 + ε²·L_n found there by the Aberth–Ehrlich iteration from the
// Butterworth poles; the Gaussian poles come from the zeros of the
// truncated exponential series (Aberth–Ehrlich again). The linear-phase
// prototype comes from a Remez exchange on the phase error, its
// denominator kept in the Chebyshev basis, continued order by order from
// n = 1 and cached per phase ripple (see linphase.go); it is computed for
// orders 1–[LinearPhaseMaxOrder] and phase ripple [MinPhaseErrorDeg] to
// [MaxPhaseErrorDeg] degrees, where every exchange was checked to settle
// and the error to be equiripple (tests).
//
// # Accuracy
//
// Over orders 1–20 the poles and zeros agree with scipy 1.10.1 to 2e-14
// relative for the all-pole prototypes (gains 2e-13) and to 2e-11 for the
// elliptic ones (gains 1e-10). The elliptic differences are scipy's: on
// the worst case and on very selective designs the poles agree with a
// 60-digit mpmath evaluation to about 1e-14, real parts relative to
// themselves (see the tests). Bessel poles are within a few ulps of 256-bit
// references.
//
// [MinOrder] uses the closed forms of scipy's buttord, cheb1ord, cheb2ord
// and ellipord and evaluates Bessel, optimum-L, Gaussian and linear-phase
// prototypes order by order.
//
// The optimum-L, Gaussian and linear-phase poles come from iterations
// whose evaluation loses accuracy at extreme losses: [Lowpass] checks that
// the loss at 1 rad/s is rippleDB to 1e-9 dB and otherwise returns
// [ErrNotRepresentable]. Measured over orders 1–20: optimum-L holds from
// 1e-12 dB to 80 dB of passband ripple (at 100 dB most orders are refused:
// the poles crowd toward s = 0 where the Legendre-basis evaluation
// cancels), Gaussian from 1e-12 dB to 200 dB; at 1e-300 dB the gains of
// the higher orders overflow.
//
// References:
//
//   - S. J. Orfanidis, "Lecture Notes on Elliptic Filter Design", Rutgers
//     University, 2006: normalised Jacobi functions by Landen
//     transformations, the degree equation, elliptic zeros and poles.
//   - M. Abramowitz and I. A. Stegun (eds.), Handbook of Mathematical
//     Functions, NBS, 1964, chapters 16 and 17: Jacobi elliptic and theta
//     functions, Landen's transformation, the nome.
//   - W. E. Thomson, "Delay networks having maximally flat frequency
//     characteristics", Proc. IEE Part III, 96 (1949), 487–490.
//   - H. L. Krall and O. Frink, "A new class of orthogonal polynomials: the
//     Bessel polynomials", Trans. Amer. Math. Soc. 65 (1949), 100–115.
//   - O. Aberth, "Iteration methods for finding all zeros of a polynomial
//     simultaneously", Math. Comp. 27 (1973), 339–344; L. W. Ehrlich, "A
//     modified Newton method for polynomials", Comm. ACM 10 (1967), 107–108.
//   - T. J. Dekker, "A floating-point technique for extending the available
//     precision", Numer. Math. 18 (1971), 224–242 (double-double).
//   - A. Papoulis, "Optimum filters with monotonic response", Proc. IRE 46
//     (1958), 606–609, and "On monotonic response filters", Proc. IRE 47
//     (1959), 332–333: the optimum-L polynomials.
//   - E. Ulbrich and H. Piloty, "Über den Entwurf von Allpässen, Tiefpässen
//     und Bandpässen mit einer im Tschebyscheffschen Sinne approximierten
//     konstanten Gruppenlaufzeit", AEÜ 14 (1960), 451–467: equal-ripple
//     delay approximation.
//   - G. Szegő, "Über eine Eigenschaft der Exponentialreihe", Sitzungsber.
//     Berl. Math. Ges. 23 (1924), 50–64: where the zeros of the truncated
//     exponential series lie.
package proto
