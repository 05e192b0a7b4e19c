// Package xform applies the classical frequency transformations to a
// lowpass prototype held in zero/pole/gain form: lowpass to lowpass (edge
// scaling), lowpass to highpass, lowpass to bandpass and lowpass to
// bandstop.
//
// # Conventions
//
// All frequencies are angular, in rad/s. A prototype is normally
// normalised to a 1 rad/s edge, but any proper rational function works
// (at least as many poles as finite zeros). Zeros at infinity of the
// prototype are implicit, as in package zpk; a transformation that moves
// them to a finite place stores them explicitly (at s = 0 for highpass and
// bandpass, at ±jω0 for bandstop).
//
// Nothing is ever expanded into polynomial coefficients: each prototype
// root is mapped on its own and every gain is a product of factors. The
// quadratic s² − 2a·s + ω0² = 0 that the bandpass and bandstop mappings
// solve for each root is solved without cancellation (the larger root
// first, the other as ω0² divided by it), and it is solved once per
// conjugate pair, so a real prototype whose complex roots come in exact
// conjugate pairs gives a result whose complex roots are exact conjugates;
// real roots that map to real roots stay exactly real, and roots on the
// imaginary axis stay exactly on it.
//
// The functions return new slices and never modify their argument. They
// match SciPy's lp2lp_zpk, lp2hp_zpk, lp2bp_zpk and lp2bs_zpk up to the
// order of the roots.
//
// # Errors
//
// The transformations are meant to be called with frequencies that the
// caller has already validated. A non-positive, NaN or infinite frequency
// or bandwidth, an improper prototype (more finite zeros than poles) given
// to the highpass, bandpass or bandstop mapping, or a prototype root at
// s = 0 given to the highpass or bandstop mapping is a programming error
// and makes the function panic with a message starting "xform: ".
package xform
