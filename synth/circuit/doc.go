// Package circuit is the filter as built: stages of resistors, capacitors
// and op-amps with their nodes, one model from which both the as-built
// analysis and the exports (SPICE deck, bill of materials) are produced, so
// that what is analysed is what is exported.
//
// A [Chain] is a list of [Stage] values in signal order and one op-amp
// [Model]. [Chain.Validate] checks it; [Chain.Response] and
// [Chain.MagnitudeDB] analyse it; [Chain.WriteSPICE] and [Chain.WriteBOM]
// export it. Package spicerun (synth/circuit/spicerun) runs exported decks
// through ngspice for tests.
//
// # Nodes and designators
//
// A stage's parts and op-amps name stage-local nodes: [In] ("in") is the
// stage input, [Ground] ("0") the reference and Stage.Out the output, which
// must be an op-amp output. In the chain ([Chain.Node]) stage k's node x
// becomes "s{k}_x", stage k's input is stage k−1's output node, stage 1's
// input is the global "in", and the last stage's output is [Out] ("out").
// Node names are ASCII letters, digits and underscores, and no two of a
// stage may differ only in case, because SPICE folds case.
//
// Designators are local too ("R3", "C1", "U1": a letter and 1..99).
// [Chain.Ref] makes them chain-wide as letter + stage number + two-digit
// local number: R3 of stage 1 is R103, C1 of stage 12 is C1201, U1 of
// stage 2 is U201. The bill of materials uses these refs. The SPICE deck
// uses the same names for its elements, except that an op-amp is a
// subcircuit instance and SPICE requires the X prefix: U201 in the bill of
// materials is XU201 in the deck ([SpiceName]).
//
// # Op-amp model
//
// Every op-amp of a chain uses the chain's [Model]. The single-pole model
// is a voltage-controlled voltage source from V(+) − V(−) to the output
// with gain
//
//	A(s) = A0/(1 + s·A0/ωt),  A0 = 10^(DCGainDB/20),  ωt = 2π·GBWHz,
//
// so |A| falls through 1 near the gain-bandwidth product. The ideal model
// is a nullor: V(+) = V(−), no input current, an output current that is
// whatever the circuit needs. Both have zero output impedance, so without
// an output resistance a stage does not load the one before it and the
// chain's response is exactly the product of its stages' responses. With
// one ([Model.OutputResistanceOhm]) each boundary adds the factor
// 1/(1 + Zout·Yin) of [Chain.Loading].
//
// In the SPICE deck the single-pole op-amp is a subcircuit: a 1 S
// transconductance G1 drives the node n1 loaded by R1 = A0 Ohm parallel
// C1 = 1/ωt F, so V(n1) = (V(+) − V(−))·A0/(1 + s·A0·C1), which is A(s)
// exactly, and a unity VCVS E1 copies n1 to the output. The ideal op-amp
// is a VCVS of gain [IdealOpAmpGain] (1e8), which differs from the nullor
// by about 1e-8 relative and keeps the simulator's matrix well
// conditioned.
//
// # Analysis
//
// A stage is analysed by modified nodal analysis at a complex frequency s:
// the unknowns are the node voltages (input included), the current of an
// ideal 1 V source driving the input, and one output current per op-amp;
// the equations are the nodes' current balances, V(in) = 1 and, per
// op-amp, V(out)·(1/A0 + s/ωt) − V(+) + V(−) = 0 (for the ideal model
// V(+) − V(−) = 0). The matrix is A(p) = G + p·C in the normalised
// variable p = s/ωref, with admittances scaled by a typical resistance of
// the stage so that its entries are of order one near |p| = 1. It is
// solved by a dense complex LU with partial pivoting; [Stage.SolveAt] adds
// two steps of iterative refinement, which keeps the output accurate to
// rounding even deep in a stopband, where it is many orders below the
// other unknowns.
//
// For sweeps, [Stage.TransferFunction] turns the stage into a [Rational]
// once. By Cramer's rule V(out) = det A_out(p)/det A(p), with A_out the
// matrix whose output column is replaced by the source vector. Every
// capacitor and every single-pole op-amp is a rank-one term p·u·vᵀ of
// A(p), in which a determinant is affine, so both determinants are
// polynomials of degree at most d = (capacitors + single-pole op-amps).
// They are sampled (one LU gives det A and, times the solved output,
// det A_out) at an even number m ≥ d+3 of points p_k = ρ·e^(iθ_k) evenly
// spaced on a circle, rotated by half a step so that no point lies on the
// real axis, where real poles lie; the points come in conjugate pairs, so
// only half are evaluated. The inverse discrete Fourier transform gives
// the coefficients. Because d < m there is no aliasing, and because the
// transform is unitary up to the factor m it adds no error of its own:
// every coefficient is as accurate as the samples, whatever the spread of
// the coefficients, and the bins above d, which are zero but for rounding,
// measure the samples' noise. The first circle is |p| = 1 at the stage's
// natural scale 1/(R·C) (geometric means of its resistors and capacitors),
// where the matrix entries are of order one; a caller's scale is applied
// afterwards by an exact change of variable. A coefficient whose term is
// not well above the noise there (the op-amps' far poles, or a coefficient
// that is structurally zero and shows as noise) is measured again on the
// circle where its term is largest relative to the others, as estimated
// from the first pass (a coefficient at the noise level, even one that
// came out exactly zero, is estimated at the noise floor: an exact zero
// on one circle is rounding like any other); a coefficient that stays at
// the noise level there, or whose estimate is below 1e-12 of the largest
// term everywhere in |p| ∈ [1e-8, 1e8], is set to exactly zero, so a
// highpass has exact zeros at s = 0 and a lowpass numerator is a
// constant. Against the refined direct solution the rational form agrees
// to about 1e-13 relative or better over eight decades for the test
// circuits (the tests require 1e-10).
//
// [Stage.Slopes] gives the stage as an affine function of each part's
// admittance alone (a part is the rank-one stamp y·u·uᵀ): by the matrix
// determinant lemma and the Sherman–Morrison formula the derivatives of
// det A and det A_out in y are det A·uᵀA⁻¹u and
// det A·(uᵀA⁻¹u·x_out − (A⁻¹u)_out·uᵀx), so the one LU at each point,
// and one solve per node, give every part's slopes; they are interpolated
// on the nominal's circles, a slope's coefficient read from whichever
// serves it to within a factor 1e4 of its best circle (so to about 1e-12
// of its polynomial's largest term), and a circle is added only where
// none does.
//
// [Stage.SourceTransfers] interpolates, the same way and together, the
// transfers of any number of sources inside the stage (a current between
// two nodes, a voltage in series with an op-amp's non-inverting input) to
// its output, as numerators over the same determinant: at each point one
// LU of Aᵀ and one solve of Aᵀ·y = e_out give every source's transfer,
// whose products with det A are cofactors of A, again of degree at most
// d; each polynomial has its own noise floor and its own second circles.
// Package noise turns every noise source into such a function once per
// stage.
//
// A sweep then costs, per stage and frequency, two real Horner
// evaluations (p = jx splits a real polynomial into its even and odd
// powers of x) and one complex division; a [Cascade] is the product of its
// stages' functions. [Rational.Poles] and [Rational.Zeros] are the roots,
// in rad/s (companion-matrix eigenvalues, polished by Newton's method), and
// [Rational.DominantPair] picks the section's own pole pair (the one
// nearest the jω axis relative to its magnitude, not the op-amps' far
// poles) to report the realised f0 and Q.
//
// Functions that fill a slice follow gonum's destination-first style, as
// in package response: if len(dst) is too short a new slice is allocated,
// and the result is dst[:len(freqHz)].
package circuit
