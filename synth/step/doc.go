// Package step computes the unit-step response of a cascade of rational
// sections exactly, by zero-order-hold discretisation of a state-space
// model (for a step input the hold is no approximation).
//
// # Model
//
// Each [Stage] is a rational function H(s) = N(x)/D(x) of the normalised
// variable x = s/ScaleRadPerSec, with deg N ≤ deg D. [Response] factors
// every stage into first- and second-order blocks (the roots of N and D,
// from [circuit.Rational.Poles] and [circuit.Rational.Zeros]): a conjugate
// pole pair or a single real pole per block, and two real poles together
// only where a complex zero pair needs a second-order block. A block with
// poles p and zeros z is written in its own variable σ = s/ω_b, with ω_b
// the magnitude (geometric mean) of its poles, as
//
//	∏(1 − σ·ω_b/z) / ∏(1 − σ·ω_b/p),
//
// which has unit gain at DC and a monic denominator σ² + σ/Q + 1 or σ + 1
// for stable poles, and is realised in controllable canonical form. Zeros
// at s = 0 contribute factors σ and poles at s = 0 integrators 1/σ. The
// stage's constant, Num[k]/Den[j] at the lowest non-zero coefficients,
// multiplies the stage's output. The states of every block are thus
// O(1) for a signal of order one, and the matrix entries are O(1) in the
// block's own time unit.
//
// The blocks are chained into one block lower-triangular system
// dx/dτ = A·x + B·u, y = C·x + D·u in the normalised time τ = ω_ref·t,
// where ω_ref is the geometric mean of the block frequencies; block b's
// rows carry the factor ω_b/ω_ref.
//
// # Discretisation
//
// For the input u = 1 on t ≥ 0 and x(0) = 0, the state at t + Δ is
// x(t+Δ) = Φ·x(t) + Γ with
//
//	exp([[A, B], [0, 0]]·Δ) = [[Φ, Γ], [0, 1]],
//
// computed by scaling and squaring with a Padé approximant, the algorithm
// of [mat.Dense.Exp], in a variant that works on exp − I throughout and
// exploits the block lower-triangular structure (the input is ordered
// first, so that the augmented matrix is block lower triangular too). The
// state is advanced as x ← x + ((Φ−I)·x + Γ). This keeps the slow modes to
// full precision when a fast pole, such as an op-amp's, forces many
// squarings: with plain exp and an LU solve, a pole ratio of 10⁶ costs
// about five digits. It is exact for a constant input: there is no
// integration error, only rounding (about 1e-15 of the response's size in
// the tests, against partial fractions and closed forms). A uniform grid needs one exponential
// for its step and one for its first time, when that is not 0; a
// non-uniform grid needs one per distinct step, except that a step twice
// a recent one is derived from it by one squaring (Φ(2Δ) = Φ(Δ)²), and
// the last few distinct steps are kept, so that a step that recurs is not
// computed again. Steps that differ only by the rounding of the times
// themselves (a few ulp of t) count as equal. The state update skips the
// zero blocks above the diagonal of Φ − I.
//
// [NewModel] factors the stages and builds the system once, for a
// [Model.Measure] and a [Model.Response] of the same cascade.
//
// At t = 0 the response is D = H(∞), the limit from the right, as in
// scipy.signal.step.
//
// # Figures
//
// [Measure] gives the figures of a lowpass, highpass, bandpass or
// bandstop alike by the rules of [Figures]: overshoot and rise time where
// the response settles to at least [MinFinalFrac] = 1 % of its largest
// |y|, undershoot where it does not, settling time to a [Band] for every
// stable response. It samples the response on a grid of its own, long
// and fine enough from the modes of the cascade (poles and the residues of
// H(s)/s there), so that a slowly decaying tail is neither cut short nor
// undersampled; see [Measure] for the bound it uses and its budget.
// [SettlingGrid] is a grid for plotting that reaches past that settling
// time.
package step
