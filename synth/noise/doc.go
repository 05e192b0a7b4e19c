// Package noise computes the output noise of a filter as built
// ([circuit.Chain]): its spectral density, its RMS value over a band and
// each part's share, the noise a converter's output words carry once
// sampling has folded the spectrum, and the converter figures it is
// compared with (the LSB, the quantisation noise, the SNR and the bits
// lost), plus the slew rate a full-scale sine needs.
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
// e_outᵀ·A⁻¹·b = yᵀ·b with Aᵀ·y = e_out, so one adjoint solve gives the
// transfer of every source at once, and det A·yᵀ·b, a cofactor of A, is a
// polynomial in s of degree at most that of det A. So each stage is
// turned once into rational functions N_i(s)/D(s), one numerator per
// source over the nodal determinant ([circuit.Stage.SourceTransfers]),
// interpolated on circles exactly as the stage's voltage transfer
// ([circuit.Stage.TransferFunction]; see package circuit): at each point
// one LU of A gives det A and one adjoint solve the values of every
// numerator. A density then costs per stage one real Horner evaluation
// of each polynomial on the jω axis. The
// stage's input is driven by an ideal source (the previous op-amp output,
// or the signal source), which is a short for noise, and a stage's output
// is an op-amp output, which no later stage loads; so stage k's noise
// power,
//
//	S_k(f) = Σ_i S_i · |N_i(j2πf)|² / |D(j2πf)|²
//
// (S_i the white density² of source i), reaches the filter output
// multiplied by the later stages' |H_j|²
// ([circuit.Chain.TransferFunctions]), and the output power density is
//
//	S(f) = Σ_k S_k(f) · Π_{j>k} |H_j(j2πf)|².
//
// The rational form agrees with the direct adjoint solve at each
// frequency (a dense complex LU with iterative refinement, what this
// package did before) to about 5e-13 relative from 1 Hz to 1 GHz for the
// example specs, stopbands and notches included. At a frequency where
// D vanishes (0 Hz for a stage with a node joined to the rest only by
// capacitors) the nodal matrix is singular and the density an error.
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
// (QUADPACK's qk15 rule): initial panels at most half a decade wide
// within a decade of the chain's resonant poles (Q ≥ 1), with edges at
// their frequencies, where the peaks lie, and two decades wide elsewhere
// (near a real or low-Q pole, and far from every pole, the density is
// smooth on that scale: close to a power of f); the panel with the
// largest estimate |K15 − G7| is halved until the estimates sum to at
// most 1e-5 of the result (or 2,000 panels). The estimate bounds the
// error of the 7-point Gauss rule; the 15-point Kronrod result that is
// used is far more accurate, so the power is accurate to better than 1e-6
// relative (the tests find 3e-9 against a 20,001-point Simpson rule,
// whose own error that is, and 1e-6 against the closed form of a Q = 200
// resonance). A band starting at 0 Hz runs the log grid from 10⁻³ of the
// lowest pole frequency, below which the density is flat to 1e-6 (or,
// for a highpass, negligible), and adds that first piece as one midpoint
// panel, so 0 Hz itself, where a highpass's nodal matrix is singular, is
// never evaluated. Each part's power is integrated on the same panels,
// for its share.
//
// # Sampling
//
// [OutputSampled] adds what a converter's output words carry. Sampling at
// fs aliases f to |f − k·fs| for the nearest k; the output words (at
// fout ≤ fs, after an oversampling converter's decimation filter, taken
// as ideal) keep what lands in [0, fout/2]. So the folded power is the
// density integrated over the bands [k·fs − fout/2, k·fs + fout/2] ∩
// [0, ∞), k = 0, 1, 2, …: every frequency from 0 Hz when fout = fs. It is
// computed in one pool of panels sharing the error budget above:
//
//   - band 0, [0, fout/2], is the in-band integral;
//   - with fout < fs, bands 1 to K − 1 one by one, K being 8 plus the
//     bands up to the highest pole whose damping −Re(p)/2π is below 2·fs
//     (at most 256): near such a pole the density varies within a band
//     spacing;
//   - above (K − ½)·fs, where every feature of the density is wide
//     against fs, the comb average: Σ_{k≥K} ∫band_k S =
//     (fout/fs)·∫S df from (K − ½)·fs, plus the midpoint rule's
//     Euler–Maclaurin correction (S(A + fout/2) − S(A − fout/2))·
//     (fs² − fout²)/(24·fs) at A = (K − ½)·fs. Its error is of order
//     (m/K)⁴ of the comb's power when S falls as f^−m, and exp(−σ/fs)
//     for a pole of damping σ (the trapezoid rule's on analytic
//     functions); the tests find 1e-6 of the total against the closed
//     form summed band by band (2e-4 without the correction). With
//     fout = fs the bands join, and this is ∫S df from fout/2 on;
//   - all of it up to a cap, SampledCapFactor (10⁴) times the larger of
//     fs and the chain's highest pole frequency. With single-pole op-amps
//     the chain's poles include the op-amps' closed-loop poles, above
//     which every output noise falls at least as f⁻², so the cap lies
//     far beyond where the integral has converged.
//
// Beyond the cap the density is taken to fall as f^−m, m its local slope
// between cap/2 and cap (a rational density is a power of f that far
// above its poles), which bounds the tail: ∫S df from the cap on is
// S(cap)·cap/(m − 1). When m is below 1.5 the integral diverges: ideal
// op-amps whose output noise stays flat at high frequency (a highpass or
// bandstop, or a unity follower's voltage noise, which reaches the output
// at every frequency). [Sampled].Capped then says so, and the figure is
// the noise up to the cap. Otherwise the highest panels, and then the
// highest nodes' terms of the highest panel kept, are left out while what
// is left out, the tail beyond the cap included, stays under 0.1 % of the
// total ([SampledRestFrac]); [Sampled].LimitHz is the top of the last
// node kept, its share of the panel being the cell its Kronrod weight
// spans (about a fifth of a decade at most, in a two-decade panel). The order-8 Sallen-Key chain of BenchmarkOutput
// (1 kHz, 10 nV/√Hz op-amps of 1 MHz gain-bandwidth) sampled at 48 kHz
// thus carries its unity followers' voltage noise up to about 1 MHz: 4.6
// times its in-band noise, with a limit near 1 GHz, where the f⁻² tail
// has fallen under 0.1 % (ExampleOutputSampled).
//
// [SNRdB] and [ENOBLossBits] set the folded noise against the output
// words' quantisation noise, LSB/√12 of an ideal bits-bit word (for an
// oversampling converter too: its modulator's own shaped noise is taken
// as below that of its output word).
//
// An order-8 chain on 200 points, integrated from 10 Hz to 24 kHz, takes
// about 0.3 ms (BenchmarkOutput, the fastest of eight runs on a shared
// two-core machine; 0.75 ms with a refined LU per stage and frequency);
// integrated from 0 Hz with the noise the words of a 48 kHz converter
// carry, about 0.23 ms, and of a 3.072 MHz modulator's 48 kHz words,
// about 0.28 ms. Compiling the chain (its stages' rational transfers and
// those of every source) is about half of that.
package noise
