// Package section factors a transfer function into first- and second-order
// sections, orders them for headroom and distributes the chain's gain over
// them.
//
// # Factoring
//
// Each conjugate pole pair becomes a second-order section and each real pole
// a first-order one. Zeros are handed out by two rules:
//
//   - Zeros on the jω axis, in conjugate pairs, go to pole pairs. Pole pairs
//     are taken in descending Q, and each takes the remaining zero pair
//     nearest to it in log frequency (the highest-Q poles need the nearest
//     zeros to tame their peaks; this is the usual pairing rule).
//   - Zeros at s = 0 are dealt round: first one to every pole pair that has
//     no jω-axis zeros, then one to every first-order section, then a second
//     one to every such pole pair. A highpass thus gets highpass sections, a
//     bandpass gets bandpass sections.
//
// A section's own gain is normalised by its kind: unit gain at DC for
// lowpass and lowpass-notch sections, at infinite frequency for highpass and
// highpass-notch sections, at f0 for bandpass sections, and at DC for a
// symmetric notch.
//
// # All-pass sections
//
// [FirstOrderAllpass] and [SecondOrderAllpass] make the sections of a delay
// equaliser: zeros the mirror images of the poles ([Section.IsAllpass]),
// kind [Allpass], unit gain at every frequency and +1 at DC. [Factor]
// never makes them; the pipeline appends them after ordering and gain
// distribution, last in the chain, where they change no node's peak.
//
// # Ordering
//
// The node after the first j sections carries the product of those j
// sections, so its peak over frequency depends only on which sections came
// before, not on their order. [Order] finds the order that minimises the
// worst peak over all nodes exactly by a dynamic programme over the 2ⁿ
// subsets (a bottleneck shortest path), for up to [MaxExact] sections; ties
// are broken towards ascending Q (common practice). Longer chains use a
// greedy build-up, kept only if it beats ascending Q.
//
// # Gain distribution
//
// With sections normalised as above, let Pⱼ be the peak of the product of
// the first j sections, G the chain's required passband maximum and A the
// factor the normalised chain needs to reach G. [Distribute] sets the
// cumulative gain after stage j to cⱼ = min(A, G/Pⱼ) for j < n and cₙ = A:
// gain is put as early as it can go (best for noise) while no internal node
// peaks above the output.
package section
