// Package synth turns a filter requirement into an ordered chain of first-
// and second-order sections: it parses and validates a [Spec], finds the
// lowest order that meets the mask, computes the prototype's poles and
// zeros, transforms them to the requested response and band, factors them
// into sections ordered for headroom, distributes the passband gain and
// evaluates the response.
//
// # Pipeline
//
// [Synthesize] calls, in turn, proto (prototypes and minimum orders), xform
// (frequency transformations), section (factoring, ordering, gain) and
// response (magnitude, phase and group delay on a grid). All the numerics
// stay in pole/zero and section form; no high-order polynomial is ever
// expanded.
//
// # Delay equaliser
//
// With delay_equalizer, package equalize appends all-pass sections to the
// ordered, gain-distributed chain until the spread of the group delay over
// the passband, (max − min)/mean in linear frequency (a lowpass's from
// 0 Hz, a bandpass's between its edges), is within max_spread_pct, or
// refuses the spec naming delay_equalizer.max_spread_pct with the best
// spread found; asking for that spread then succeeds in practice: the
// search is deterministic and adds the same sections whatever the target,
// except that it ends early on a first-order section (one op-amp) that
// meets the target. A
// highpass or bandstop passband reaches infinite frequency, where every
// delay falls to zero: refused naming delay_equalizer. The all-pass
// sections are stages like any other (topology allpass): in the circuit
// model, the deck, the BOM, the noise, the Monte Carlo and the plots; the
// order stays the filter's.
//
// # Band edges
//
// The lowpass prototype has its passband edge at 1 rad/s, where the loss is
// exactly passband_ripple_db. A lowpass is scaled to ωp, a highpass is
// s → ωp/s, a bandpass s → (s²+ω0²)/(B·s) and a bandstop s → B·s/(s²+ω0²)
// with ω0² the product of the passband edges and B their difference. The
// normalised stopband edge, which sets the order, is the smaller of the two
// images of the stopband edges. For a bandstop whose lowest order is sought,
// one passband edge may be moved towards the stopband, where that lowers the
// order, until the stopband edges are geometrically symmetric about ω0 (the
// passband then keeps at most passband_ripple_db of loss over the whole of
// the spec's passband, and more of it); the edges used are reported.
package synth
