// Package noise computes the output noise of a filter as built
// ([circuit.Chain]): its spectral density, its RMS value over a band and
// each part's share, and the converter figures it is compared with (the
// LSB and the quantisation noise), plus the slew rate a full-scale sine
// needs.
//
// # Sources
//
// Every resistor has thermal noise, a current source of density² 4kT/R in
// parallel with it (k = [BoltzmannJPerK], exact; T in kelvin, 300 K by
// default). Every op-amp has an input voltage noise en in series with its
// non-inverting input and an input current noise in from each input to
// ground, the two currents uncorrelated; both are white densities, given
// by [OpAmpNoise] ([DefaultOpAmpNoise]: 10 nV/√Hz and 1 pA/√Hz). The
// op-amp model itself (single pole or ideal, [circuit.Model]) and the
// capacitors are noiseless. All sources are uncorrelated, so their powers
// add.
//
// # Propagation
//
// Each stage is the modified nodal system of package circuit (node
// voltages with the input first, the input source's current, one output
// current per op-amp; A(s) = G + s·C with every admittance scaled by a
// typical resistance of the stage). A noise source is a right-hand side b:
// a current into a node's balance, or en in an op-amp's equation
// V(out)/A(s) − (V(+) + en) + V(−) = 0. The stage output is
// e_outᵀ·A⁻¹·b = yᵀ·b with Aᵀ·y = e_out, so one adjoint solve per stage and
// frequency (a dense complex LU with partial pivoting and two steps of
// iterative refinement) gives the transfer of every source at once. The
// stage's input is driven by an ideal source (the previous op-amp output,
// or the signal source), which is a short for noise, and a stage's output
// is an op-amp output, which no later stage loads; so stage k's noise
// power reaches the filter output multiplied by the later stages' |H_j|²
// ([circuit.Chain.TransferFunctions]), and the output power density is
//
//	S(f) = Σ_k S_k(f) · Π_{j>k} |H_j(j2πf)|².
//
// Against ngspice 39's noise analysis of the deck that
// [circuit.Chain.WriteSPICE] writes with [circuit.SpiceOptions].Noise (the
// same sources as helper resistors), the density agrees to about 3e-6 dB
// for the test circuits (the issue requires 0.1 dB).
//
// # Integration
//
// The RMS value is √∫S(f)df over the band, computed in u = ln f as
// ∫S(e^u)·e^u du by global adaptive Gauss–Kronrod 7/15 quadrature
// (QUADPACK's qk15 rule): initial panels at most half a decade wide, with
// edges at every pole frequency of the chain inside the band, where the
// peaks of resonances lie; the panel with the largest estimate
// |K15 − G7| is halved until the estimates sum to at most 1e-7 of the
// result (or 2,000 panels). The estimate bounds the error of the 7-point
// Gauss rule; the 15-point Kronrod result that is used is far more
// accurate, so the power is accurate to better than 1e-6 relative (the
// tests find 2e-12 against a 20,001-point Simpson rule, and 1e-6 against
// the closed form of a Q = 200 resonance). A band starting at 0 Hz runs
// the log grid from 10⁻⁶ of the lowest pole frequency, below which the
// density is flat, and adds that first piece as one midpoint panel. Each
// part's power is integrated on the same panels, for its share.
//
// An order-8 chain on 200 points, integrated from 10 Hz to 24 kHz, takes
// about 1.2 ms (BenchmarkOutput).
package noise
