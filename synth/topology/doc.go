// Package topology maps one first- or second-order section onto an op-amp
// circuit with IEC 60063 part values: [Realize] takes a section, a
// topology name and the part-value rules ([Options]) and returns the
// stage ([circuit.Stage]) with the reason for the choice and the errors of
// its f0, Q and gain as built with ideal op-amps.
//
// The topologies, each with its design equations and sources on the
// function that builds it:
//
//   - rc-buffer: first order, an RC lowpass or CR highpass and a
//     non-inverting op-amp (gain below one by a resistive divider, above one
//     by Rf/Rg).
//   - inverting-rc: first order, one inverting op-amp.
//   - sallen-key: lowpass and highpass, one non-inverting op-amp; unity
//     gain, general gain K, or equal-component K = 3 − 1/Q.
//   - multiple-feedback: lowpass, highpass and (Delyiannis-Friend)
//     bandpass, one inverting op-amp.
//   - state-variable: Kerwin-Huelsman-Newcomb, three op-amps for lowpass,
//     highpass and bandpass, a fourth that sums highpass and lowpass for
//     the lowpass-notch, highpass-notch and notch kinds (through a
//     T-network on the weaker path when the zeros are far from f0).
//   - allpass (and allpass-inverted): all-pass sections only, which a
//     delay equaliser appends (package equalize); not a spec topology.
//     First order on one op-amp (RC lowpass or, inverted, CR highpass into
//     the + input, equal R1 and R2); second order on two, a
//     multiple-feedback bandpass and a summer, A = 1 − 2·bandpass.
//   - fully-differential: the multiple-feedback lowpass, highpass
//     (C1/C2 = gain, no positive-feedback divider: the FDA has no spare
//     non-inverting input for it) and bandpass, and the first-order inverting RC,
//     each as two matched halves around one fully differential op-amp
//     (circuit.Stage.ToFullyDifferential); each half is the single-ended
//     design, whose equations are above. Notch and all-pass sections are
//     refused (ErrNoForm); package synth then builds the whole chain
//     single-ended and converts it after the last section
//     (circuit.Stage.WithConversion).
//   - one-amp-notch: lowpass-notch, highpass-notch and notch on one
//     op-amp, the Delyiannis-Friend bandpass with feedforward from the
//     input to both op-amp inputs (Friend, Harris and Hilberman's STAR
//     arrangement); an input split R1:R2 cancels the numerator's s term,
//     the + input divider and a resistor and capacitor at the inverting
//     node set the zeros and the gain.
//   - two-integrator-notch: lowpass-notch, highpass-notch and notch on
//     three op-amps, the Tow-Thomas two-integrator loop with feedforward
//     from the input into both integrators (Fleischer and Tow's general
//     biquad without its s-term paths): the numerator has no s term for
//     any part values, so the zeros stay on the jω axis whatever the
//     tolerances. Its gain is the capacitor ratio C3/C1 (within a factor
//     [MaxTwoIntegratorGainShift] of the section's; [Result.GainErrPct]
//     says by how much, in exact mode too), which package synth takes up
//     in another stage. Auto reaches it; it is not a spec topology.
//
// A stage realises the section's transfer function with a positive
// reference gain (the section's own gain, whether above or below one: gain
// distribution has already happened), times −1 for the inverting forms
// ([Result.Inverting]).
//
// # Auto rule
//
// "auto" tries topologies in order and takes the first that fits the
// windows and constraints; the [Result.Reason] says which, why, and why any
// earlier one failed:
//
//  1. First order: rc-buffer ("the simplest stage that keeps the sign"),
//     else inverting-rc.
//  2. jω-axis zeros (lowpass-notch, highpass-notch, notch): one-amp-notch
//     when Q ≤ [OneAmpNotchMaxQ] (5: its core's resistor spread is at
//     least 4Q² and its op-amp must supply a loop gain of about 2Q² at
//     f0), when the gain that the part tolerances leave at the zero
//     frequency (rms, first order, relative to the reference gain) is at
//     most [MaxNotchResidualDB] (−30 dB; a symmetric notch or zeros close
//     to f0 at moderate Q usually exceed it), and when series values keep
//     its zeros within 1 % with a
//     damping ζz ≤ 0.01, f0 within 2 % and Q within 3 %; the reason says
//     which limit failed (package synth adds a chain-level rule: a
//     one-op-amp notch whose zeros lie in a stop or alias band stays only
//     while 3σ of what the tolerances leave there, times the other
//     stages, is within the band's attenuation). Otherwise
//     two-integrator-notch (three op-amps, zeros on the jω axis whatever
//     the tolerances: no feedforward path carries an s term), and where
//     that does not fit state-variable ("sums its highpass and lowpass
//     outputs": four op-amps, zeros on the jω axis as its sum has no
//     bandpass term). Above Q = [AutoMaxQ] state-variable comes before
//     two-integrator-notch: the three op-amps in one loop move f0 and Q
//     more with a finite gain-bandwidth (measured: −0.37 % f0 and +1.2 %
//     Q at Q 10.9, 3.5 kHz, 10 MHz op-amps, against −0.02 % and +1.6 %
//     for the state-variable stage). The
//     one-amp form's gain is also bounded (the split α ≤ 1:
//     g·(ω0²/ωz² + r/Q²) ≤ 1 for a lowpass-notch without C3, r =
//     C1/(C1 + C2)). The state-variable stage picks its own shape for the
//     section (see Part values): with
//     the default windows it fits zeros from 1/100 to 100 times f0, Q from
//     0.08 to 50, f0 from 10 Hz to 100 kHz and gains from 0.3 to 3 (the
//     range the tests sweep), and a section that no shape fits is an
//     ErrLimits error saying which part of the circuit does not fit.
//  3. Q > 10 ([AutoMaxQ]): state-variable ("keeps Q insensitive to part
//     spread": Q is set by one resistor ratio, not by a difference of
//     terms); then multiple-feedback, then Sallen-Key.
//  4. Bandpass with Q ≤ 10: multiple-feedback when the gain at f0 is within
//     its limit Q²·(1 + Ca/Cb) (Ca/Cb ≤ [MaxBandpassCapRatio]), else
//     state-variable.
//  5. Lowpass or highpass with Q ≤ 10: Sallen-Key, then multiple-feedback,
//     then state-variable. Within Sallen-Key a gain g ≤ 1 is unity gain
//     with an input divider (for the highpass a capacitive one, whose
//     series-value ratio a gain K = g·(1 + C1b/C1a) just above one makes
//     exact, the least K that fits); g > 1 is K = g (general K; just above
//     one, where Rf/Rg = g − 1 is too small a ratio for the window, a
//     larger K with the divider; for the highpass also when K = g finds no
//     parts, as at high Q, where K > 1 narrows the resistor spread 4Q² of
//     K = 1), or for the lowpass the equal-component form with a divider
//     when g ≤ 3 − 1/Q, each only while Q's sensitivity to the gain
//     resistors is at most [MaxGainSensitivity] for the design before
//     rounding (possible only while Q²·(K − 1) ≤ 12) — else
//     multiple-feedback.
//
// A topology asked for by name that has no form for the section's kind is
// an error naming the kind (sallen-key has no bandpass or notch form,
// multiple-feedback no notch form, one-amp-notch and two-integrator-notch
// no lowpass, highpass or bandpass form, the first-order stages no
// second-order form). Asked for
// by name, one-amp-notch applies neither the residual bound nor Q ≤ 5.
//
// The one-amp-notch search tries capacitor pairs C2 and C1 (three values
// at or below C2, two above: C1 < C2 leaves the split more headroom, C1 >
// C2 lowers the noise gain 1 + Q²·(C1 + C2)/C1 at f0), and for each the
// feed capacitor C3 (none; to ground, raising the high-frequency gain; or
// from the input, lowering it) at the values that keep the divider ratio
// K away from small differences; the divider is rounded first (its
// smaller resistor near twice the window's least, for low noise), then
// R3, R6 and the split for the values as built. Its score adds to the
// squared errors and the zeros' damping ζz² ([Result.ZeroDamping])
// 1e-4·ln of a noise proxy (op-amp and divider noise times the noise gain
// at f0, R3 and R6 thermal noise) and 0.5e-4·ln of the tolerance
// residual at the zeros.
//
// # Part values
//
// Capacitors are picked first, from CapacitorSeries within
// [MinFarad, MaxFarad], because their series are coarser. For each first
// capacitor the form's constraint gives the ideal second one (for example
// C1/C2 ≥ 4Q² for the unity-gain Sallen-Key lowpass, C2/C1 ≥ 4Q²·(1 + g)
// for the multiple-feedback lowpass, C2 ≈ C1 for the Sallen-Key highpass,
// and also C2 ≈ C1/3, C1/10, C1/30 when K > 1, which lowers Q's
// sensitivity to the gain resistors)
// and only the few series values around it are tried. The exact resistors
// follow from the design equations; each is rounded to ResistorSeries as
// the nearest value and its two neighbours, every combination within
// [MinOhm, MaxOhm] is scored, and the realised ω0, Q, gain (and zero
// frequency) are computed by the topology's closed form with the rounded
// values. The score is the sum of the squared relative errors of ω0, Q,
// the gain and, for the notch kinds, the zero frequency; the best score
// over all capacitor choices and decades wins, and among scores within
// 1e-6 of the best the one whose resistors are nearest the geometric
// middle of the window (about 15 kΩ by default: common practice, between
// noise and loading). Candidates whose exact resistors lie outside the
// window are pruned before rounding. With Exact the resistors keep their
// exact values and f0, Q and gain are the section's to rounding error:
// every form sets its gain by resistor ratios, or by a capacitor ratio
// that resistors trim (the Sallen-Key highpass divider and its K, the
// multiple-feedback highpass C1/C2 and its positive-feedback divider),
// except the two-integrator notch, whose gain is the capacitor ratio
// C3/C1 (no resistor trims it without bringing an s term into its
// numerator) and which package synth compensates in another stage.
//
// The state-variable search rounds in three steps, each compensating the
// rounding of the one before: the integrator resistors and R2 for ω0 (the
// second integrator's capacitor is the first's, or C1/ρ for the notch
// shapes below, or its neighbour), then R1 and the damping divider for Q
// and the gain, then, for the notch kinds and the best few results of the
// first two steps, the summing weights for the zeros and the gain (with a
// T-network: the strong path's resistor, then the T's shunt for the weak
// weight that puts the zeros exactly).
//
// For the notch kinds the state-variable stage first chooses its shape:
// the summer's input gain a = R3/R1, b = R3/R2 and the integrator ratio
// ρ = τ1/τ2, each a power of two, and whether the weaker summing path is a
// T-network. The summing weights differ by b·(ωz/ω0)², which two
// resistors of the window cannot span for zeros far from f0, and Q
// = √(b·ρ)/(β·(1 + a + b)) needs a damping divider outside the window for
// very low or high Q at a = b = ρ = 1. Shapes are tried from the classic
// a = b = ρ = 1 outwards by a cost (octaves moved, internal levels above
// the input, a T-network), and the first whose exact resistors all keep a
// quarter away from the window's bounds is taken (else the one that comes
// nearest; none inside is ErrLimits). The lowpass, highpass and bandpass
// keep a set by the gain, b = 1 (raised in octaves for low Q) and ρ = 1.
//
// A quantity set by the ratio of two resistors of one series (the
// multiple-feedback lowpass gain R2/R1, the state-variable gains, the
// state-variable zero frequency) can only take the ratios the series
// offers: with E96 these lie about 2.4 % apart, so such a gain may be off
// by up to about 1.2 %, and [Result.GainErrPct] says by how much. The
// multiple-feedback highpass gain C1/C2 is a ratio of two capacitor
// values; the stage takes the nearest ratio below the gain and trims it
// up by positive feedback, λ = Rb/(Ra + Rb) at the op-amp's + input
// (Q's sensitivity to it bounded by [MaxGainSensitivity]), so its gain
// error is that of the divider ratio Ra/Rb times (1 − λ)·(g/r − 1), r =
// C1/C2: at most about 0.25 with the nearest E12 ratio.
//
// Every part carries its tolerance (resistors: the series' customary one;
// capacitors: CapacitorTolerancePct) and its exact design value before
// rounding.
//
// # Sources
//
//   - Texas Instruments, "Active Low-Pass Filter Design" (SLOA049) and
//     "Op Amps for Everyone" (SLOD006), ch. 16: Sallen-Key and
//     multiple-feedback low- and highpass equations, unity-gain and
//     equal-component forms.
//   - Analog Devices, "Analog Filters", ch. 8 of the Op Amp Applications
//     Handbook (tutorial MT-220 series): Sallen-Key general-K procedure,
//     multiple-feedback bandpass, state-variable.
//   - A. B. Williams and F. J. Taylor, "Electronic Filter Design Handbook":
//     first-order RC stages, state-variable and multiple-feedback forms.
//   - W. J. Kerwin, L. P. Huelsman and R. W. Newcomb, "State-variable
//     synthesis for insensitive integrated circuit transfer functions",
//     IEEE J. Solid-State Circuits SC-2 (1967): the state-variable circuit.
//   - T. Delyiannis (1969) and J. J. Friend (1970): the single-amplifier
//     bandpass.
//   - J. J. Friend, C. A. Harris and D. Hilberman, "STAR: an active
//     biquadratic filter section", IEEE Trans. Circuits and Systems
//     CAS-22 (1975), 115–121: the bandpass with feedforward to both
//     op-amp inputs for the notch kinds (one-amp-notch). S. A. Boctor's
//     single-amplifier lowpass-notch and highpass-notch circuits (IEEE
//     Trans. CAS-22, 1975) reach the same transfer functions; this form
//     was chosen as every constraint of it is a resistor ratio.
//   - P. E. Fleischer and J. Tow, "Design formulas for biquad active
//     filters using three operational amplifiers", Proc. IEEE 61(5),
//     1973 (citation typed from memory): the two-integrator loop with
//     feedforward (two-integrator-notch), of which only the paths without
//     an s term are kept.
//
// All were used from memory; every equation was rederived by nodal
// analysis and is checked in the tests against a full nodal analysis of
// the built stage.
package topology
