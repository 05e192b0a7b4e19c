package circuit

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// Defaults of [SpiceOptions].
const (
	// DefaultSpiceTitle is the deck's title line when SpiceOptions.Title
	// is empty.
	DefaultSpiceTitle = "polewright active filter"
	// DefaultPointsPerDecade is the sweep density when
	// SpiceOptions.PointsPerDecade is 0.
	DefaultPointsPerDecade = 100
	// DefaultDataFile is the file the deck's .control block writes the AC
	// data to when SpiceOptions.DataFile is empty.
	DefaultDataFile = "ac.data"
	// DefaultNoiseDataFile is the file the noise analysis writes when
	// SpiceNoise.Analysis is set and SpiceNoise.DataFile is empty.
	DefaultNoiseDataFile = "noise.data"
	// DefaultTranDataFile is the file the transient analysis writes when
	// SpiceTransient.DataFile is empty.
	DefaultTranDataFile = "tran.data"
	// DefaultNoiseTempK is the temperature of the deck's noise analysis
	// when SpiceNoise.TempK is 0: 300 K, written as .options temp=26.85
	// (SPICE takes degrees Celsius).
	DefaultNoiseTempK = 300
)

// boltzmann is the Boltzmann constant in J/K (exact in the SI since 2019),
// the k of the noise helpers' resistances. ngspice 39 uses its own value
// (CONSTboltz, 1.38064852e-23), which differs by 3.4e-7 relative, far
// below any tolerance of a noise check.
const boltzmann = 1.380649e-23

// celsiusZeroK is 0 °C in kelvin, SPICE's offset between temp and T.
const celsiusZeroK = 273.15

// IdealOpAmpGain is the gain of the VCVS that stands for an ideal op-amp in
// the SPICE deck (SPICE has no nullor). Its residual error against the
// nullor is about 1/(gain·β) ≈ 1e-8 relative for a feedback fraction β of
// order one. A larger gain is worse, not better: the simulator's nodal
// matrix then has a condition number of about the gain, and with 1e12 the
// three-amplifier loops of a state-variable stage came out of ngspice
// with errors near 1e-4 (0.3° of phase beside a notch).
const IdealOpAmpGain = 1e8

// opAmpSubckt is the name of the op-amp subcircuit in the deck; its pins
// are non-inverting input, inverting input, output.
const opAmpSubckt = "pw_opamp"

// fdaSubckt is the name of the fully differential op-amp subcircuit; its
// pins are non-inverting input, inverting input, positive output,
// negative output.
const fdaSubckt = "pw_fda"

// SpiceOptions controls [Chain.WriteSPICE]. The zero value is usable.
type SpiceOptions struct {
	// Title is the deck's first line (SPICE's title line, written as a
	// comment); DefaultSpiceTitle when empty.
	Title string
	// Description is written below the title as comment lines, one "* "
	// line per line of text: typically the spec the filter was built from.
	Description string
	// PointsPerDecade is N of `.ac dec N StartHz StopHz`;
	// DefaultPointsPerDecade when 0.
	PointsPerDecade int
	// StartHz and StopHz bound the sweep. When both are 0 the sweep runs
	// over whole decades from two decades below the lowest stage's f0 to
	// two decades above the highest (see [Rational.DominantPair]), or from
	// 1 Hz to 1 MHz for a chain without poles.
	StartHz, StopHz float64
	// DataFile is the file, relative to ngspice's working directory, that
	// the .control block writes with wrdata; DefaultDataFile when empty.
	DataFile string
	// Noise, when set, gives the op-amp subcircuit noise sources of these
	// densities, so that a SPICE noise analysis of the deck sees the same
	// sources as package noise (see [SpiceNoise]).
	Noise *SpiceNoise
	// Transient, when set, makes the source a step as well and adds a
	// transient analysis to the .control block (see [SpiceTransient]).
	Transient *SpiceTransient
	// Supply, when set, puts the board on its rails: supply and reference
	// sources, every ground connection of the filter on node ref, a
	// limiter at each op-amp output and an operating-point analysis (see
	// [SpiceSupply]).
	Supply *SpiceSupply
	// Sampler, when set, puts a sampling converter's input on node out
	// (see [SpiceSampler]).
	Sampler *SpiceSampler
}

// DefaultAcqDataFile is the file the acquisition analysis writes when
// SpiceSampler.DataFile is empty.
const DefaultAcqDataFile = "acq.data"

// SpiceSampler describes a SAR converter's input for the deck: its
// sampling capacitor behind a switch on node out (see [Chain.WriteSPICE]).
type SpiceSampler struct {
	// CapacitanceFarad is the sampling capacitor; AcquisitionS how long
	// the switch stays closed (the analysis' length); KickV the voltage
	// the capacitor holds before the switch closes, relative to out's
	// operating point (−Vfs: the other end of the range).
	CapacitanceFarad, AcquisitionS, KickV float64
	// SwitchOhm is the closed switch's resistance (> 0).
	SwitchOhm float64
	// DataFile is the acquisition analysis' data file;
	// DefaultAcqDataFile when empty.
	DataFile string
}

// SamplerNode is the deck's node of the sampling capacitor.
const SamplerNode = "acq_samp"

// OpDataFile is the file the deck's operating-point analysis writes (one
// row: the operating-point plot's first vector, then v(out), the last
// column) when SpiceOptions.Supply is set or the model has an offset or a
// bias current; the deck also prints v(out).
const OpDataFile = "op.data"

// SpiceSupply describes the board's supply for the deck (see
// [Chain.WriteSPICE]).
type SpiceSupply struct {
	// PositiveV and NegativeV are the rails, ReferenceV the signal's zero
	// (PositiveV > ReferenceV > NegativeV).
	PositiveV, NegativeV, ReferenceV float64
	// OutputHeadroomV is how close to each rail an op-amp output swings:
	// the limiter holds outputs within [NegativeV + OutputHeadroomV,
	// PositiveV − OutputHeadroomV] and is linear inside.
	OutputHeadroomV float64
	// StepLowV and StepHighV are the transient step's levels relative to
	// the reference (say −Vpp/2 and +Vpp/2); both 0 keep the unit step.
	StepLowV, StepHighV float64
}

// SpiceNoise describes the op-amp noise of the deck (see
// [Chain.WriteSPICE]). The densities are white; zero leaves a source out.
type SpiceNoise struct {
	// VoltageVPerRtHz is the op-amp's input voltage noise density en, in
	// series with the non-inverting input, in V/√Hz.
	VoltageVPerRtHz float64
	// CurrentAPerRtHz is the op-amp's input current noise density in,
	// from each input to ground (uncorrelated), in A/√Hz.
	CurrentAPerRtHz float64
	// CornerHz is the 1/f corner of both densities: each density squared
	// is en²·(1 + CornerHz/f); 0 leaves them white. The 1/f part comes
	// from the flicker noise of the helper resistors (ngspice's resistor
	// model parameters kf and af = 2 with a 1 µA bias current, whose DC
	// voltage a noiseless twin cancels).
	CornerHz float64
	// TempK is the circuit temperature in kelvin, which sets both the
	// resistors' thermal noise and the helpers' resistances;
	// DefaultNoiseTempK when 0.
	TempK float64
	// Analysis adds `noise v(out) vin dec N StartHz StopHz` (the .ac
	// sweep's points) to the .control block, writing the output noise
	// density onoise_spectrum (V/√Hz) to DataFile.
	Analysis bool
	// DataFile is the noise analysis' data file; DefaultNoiseDataFile when
	// empty.
	DataFile string
}

// SpiceTransient describes the deck's step-response analysis (see
// [Chain.WriteSPICE]).
type SpiceTransient struct {
	// StopS is the end of the analysis in seconds, finite and > 0.
	StopS float64
	// StepS is the print step and the largest internal time step of the
	// simulator (tran's tstep and tmax); StopS/1000 when 0.
	StepS float64
	// RiseS is the rise time of the input step, a ramp from 0 V at t = 0
	// to 1 V at RiseS; StepS/1000 when 0. To first order the ramp delays
	// the response by RiseS/2, so the response differs from the ideal
	// step's by at most about RiseS/2 times its largest slope.
	RiseS float64
	// DataFile is the analysis' data file; DefaultTranDataFile when empty.
	DataFile string
}

// spiceNum formats v for the deck in plain exponent form, never with a
// scale suffix (SPICE reads "M" as milli): the shortest decimal that reads
// back as exactly v, padded to 12 significant digits ("2.20000000000e-08",
// "1.5915494309189535e-07"). Every value is thus exact and shows at least
// 12 digits.
func spiceNum(v float64) string {
	s := strconv.FormatFloat(v, 'e', -1, 64)
	mant := s[:strings.IndexByte(s, 'e')]
	digits := 0
	for i := 0; i < len(mant); i++ {
		if mant[i] >= '0' && mant[i] <= '9' {
			digits++
		}
	}
	if digits <= 12 {
		return strconv.FormatFloat(v, 'e', 11, 64)
	}
	return s
}

// sweep resolves the sweep options.
func (c Chain) sweep(opt SpiceOptions) (ppd int, start, stop float64, err error) {
	ppd = opt.PointsPerDecade
	if ppd == 0 {
		ppd = DefaultPointsPerDecade
	}
	if ppd < 1 {
		return 0, 0, 0, invalidf("spice options: PointsPerDecade %d is not >= 1", opt.PointsPerDecade)
	}
	start, stop = opt.StartHz, opt.StopHz
	if start == 0 && stop == 0 {
		tfs, err := c.TransferFunctions()
		if err != nil {
			return 0, 0, 0, err
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, r := range tfs {
			if f0, _, ok := r.DominantPair(); ok {
				lo, hi = math.Min(lo, f0), math.Max(hi, f0)
			}
		}
		if math.IsInf(lo, 1) {
			return ppd, 1, 1e6, nil
		}
		start = math.Pow(10, math.Floor(math.Log10(lo))-2)
		stop = math.Pow(10, math.Ceil(math.Log10(hi))+2)
		return ppd, start, stop, nil
	}
	if !finitePositive(start) || !finitePositive(stop) || !(stop > start) {
		return 0, 0, 0, invalidf("spice options: StartHz %v and StopHz %v are not finite with 0 < StartHz < StopHz", start, stop)
	}
	return ppd, start, stop, nil
}

// commentLine makes s safe as the rest of a "* " comment line.
func commentLine(s string) string {
	return strings.Map(func(r rune) rune {
		if r < ' ' || r == 0x7f {
			return ' '
		}
		return r
	}, s)
}

// noiseHelpers resolves the noise option: the temperature in kelvin and
// the helpers' resistances, 0 for a source that is left out.
type noiseHelpers struct {
	tempK    float64
	rv, ri   float64 // en²/(4kT) and 4kT/in², in Ohm
	file     string
	analysis bool
	en, in   float64
	fourKT   float64
	corner   float64
}

// limiterSoftV is the rounding of the deck's output limiter, in V: its
// slope departs from 1 by less than 1e-4 (0.001 dB) more than 0.1 V
// inside the limits.
const limiterSoftV = 0.01

// flickerBiasA is the DC current of the flicker-noise helper resistors.
// Small, so that the helper's DC voltage (cancelled by its noiseless twin)
// is millivolts and the cancellation exact to far below any offset.
const flickerBiasA = 1e-6

// flickerCurrentOhm is the helper resistance of the current-noise sources
// with a 1/f corner, whose noise voltage a VCCS turns into a current.
const flickerCurrentOhm = 1000

// writeFlicker writes the subcircuit's noise sources with a 1/f corner:
// for the voltage noise, a resistor Rvn = en²/(4kT) fed 1 µA, with
// flicker coefficient kf = en²·fc/(Rvn²·(1 µA)²) (af = 2), so that its
// open-circuit density is en²·(1 + fc/f), and a unity VCVS Evn adding
// V(nvn) − V(nvr) to the sensed input (nvr: the noiseless twin carrying
// the same DC); for each input's current noise, the same pair at 1 kOhm
// and a VCCS of transconductance in/√(4kT·1 kOhm) from the pin to ground.
func (h *noiseHelpers) writeFlicker(b *bufio.Writer) {
	i0 := flickerBiasA
	pair := func(name string, r float64) {
		kf := r * h.fourKT * h.corner / (r * r * i0 * i0)
		fmt.Fprintf(b, "R%s n%s 0 %s pw_fl_%s\n", name, name, spiceNum(r), name)
		fmt.Fprintf(b, ".model pw_fl_%s R(kf=%s af=2)\n", name, spiceNum(kf))
		fmt.Fprintf(b, "I%s 0 n%s DC %s\n", name, name, spiceNum(i0))
		fmt.Fprintf(b, "R%sr n%sr 0 %s noisy=0\n", name, name, spiceNum(r))
		fmt.Fprintf(b, "I%sr 0 n%sr DC %s\n", name, name, spiceNum(i0))
	}
	if h.rv > 0 {
		pair("vn", h.rv)
		b.WriteString("Evn inpn inp nvn nvnr 1\n")
	}
	if h.in > 0 {
		g := h.in / math.Sqrt(h.fourKT*flickerCurrentOhm)
		for _, pin := range []string{"inp", "inn"} {
			pair("c"+pin, flickerCurrentOhm)
			fmt.Fprintf(b, "Gc%s %s 0 nc%s nc%sr %s\n", pin, pin, pin, pin, spiceNum(g))
		}
	}
}

func resolveNoise(n *SpiceNoise) (*noiseHelpers, error) {
	if n == nil {
		return nil, nil
	}
	for _, v := range []struct {
		name string
		x    float64
	}{{"VoltageVPerRtHz", n.VoltageVPerRtHz}, {"CurrentAPerRtHz", n.CurrentAPerRtHz}} {
		if !(v.x >= 0) || math.IsInf(v.x, 1) {
			return nil, invalidf("spice options: Noise.%s %v is not finite and >= 0", v.name, v.x)
		}
	}
	if !(n.CornerHz >= 0) || math.IsInf(n.CornerHz, 1) {
		return nil, invalidf("spice options: Noise.CornerHz %v is not finite and >= 0", n.CornerHz)
	}
	h := &noiseHelpers{tempK: n.TempK, en: n.VoltageVPerRtHz, in: n.CurrentAPerRtHz, analysis: n.Analysis, file: n.DataFile, corner: n.CornerHz}
	if h.tempK == 0 {
		h.tempK = DefaultNoiseTempK
	}
	if !finitePositive(h.tempK) {
		return nil, invalidf("spice options: Noise.TempK %v is not finite and > 0", n.TempK)
	}
	h.fourKT = 4 * boltzmann * h.tempK
	if h.en > 0 {
		h.rv = h.en * h.en / h.fourKT
	}
	if h.in > 0 {
		h.ri = h.fourKT / (h.in * h.in)
	}
	for _, r := range []float64{h.rv, h.ri} {
		if r != 0 && !finitePositive(r) {
			return nil, invalidf("spice options: Noise densities %v V/√Hz, %v A/√Hz give a helper resistance out of range", h.en, h.in)
		}
	}
	if h.file == "" {
		h.file = DefaultNoiseDataFile
	}
	if err := checkDataFile("Noise.DataFile", h.file); err != nil {
		return nil, err
	}
	return h, nil
}

// tranSpec is the resolved transient option.
type tranSpec struct {
	stop, step, rise float64
	file             string
}

func resolveTransient(t *SpiceTransient) (*tranSpec, error) {
	if t == nil {
		return nil, nil
	}
	r := &tranSpec{stop: t.StopS, step: t.StepS, rise: t.RiseS, file: t.DataFile}
	if !finitePositive(r.stop) {
		return nil, invalidf("spice options: Transient.StopS %v is not finite and > 0", t.StopS)
	}
	if r.step == 0 {
		r.step = r.stop / 1000
	}
	if !finitePositive(r.step) || r.step > r.stop {
		return nil, invalidf("spice options: Transient.StepS %v is not finite with 0 < StepS <= StopS", t.StepS)
	}
	if r.rise == 0 {
		r.rise = r.step / 1000
	}
	if !finitePositive(r.rise) || r.rise >= r.stop {
		return nil, invalidf("spice options: Transient.RiseS %v is not finite with 0 < RiseS < StopS", t.RiseS)
	}
	if r.file == "" {
		r.file = DefaultTranDataFile
	}
	if err := checkDataFile("Transient.DataFile", r.file); err != nil {
		return nil, err
	}
	return r, nil
}

// checkDataFile rejects a data file name that the control block cannot
// carry.
func checkDataFile(field, name string) error {
	if strings.ContainsAny(name, " \t\r\n\"';") {
		return invalidf("spice options: %s %q holds white space, quotes or ';'", field, name)
	}
	return nil
}

// WriteSPICE writes the chain as a SPICE3 deck that ngspice runs unchanged
// in batch mode (`ngspice -b deck.cir`):
//
//   - a header of comment lines: the title, the caller's description, the
//     op-amp model and the naming rules;
//   - the source `Vin in 0 DC 0 AC 1` driving node in;
//   - every stage's parts under their chain-wide designators ([Chain.Ref])
//     and chain-wide nodes ([Chain.Node]); the filter output is node out,
//     ground is 0;
//   - every op-amp as an instance X<ref> of the subcircuit pw_opamp (pins
//     non-inverting input, inverting input, output), so U101 of the bill of
//     materials is XU101 here ([SpiceName]);
//   - the subcircuit: for the single-pole model a transconductance of 1 S
//     into A0 Ohm parallel 1/ωt F, which makes A(s) = A0/(1 + s·A0/ωt)
//     exactly, buffered by a unity VCVS; for the ideal model a VCVS of
//     gain [IdealOpAmpGain];
//   - `.ac dec N StartHz StopHz` and a .control block that runs it and
//     writes the frequency and the real and imaginary parts of v(out) with
//     wrdata (16 digits) to opt.DataFile, then quits;
//   - `.end`.
//
// With opt.Noise the subcircuit carries the op-amp's noise, as ideal
// sources that neither load the circuit nor change its response:
//
//   - voltage noise en: a resistor Rvn = en²/(4kT) alone between node nvn
//     and ground, whose open-circuit thermal noise is √(4kT·Rvn) = en, and
//     a unity VCVS Evn from inp to inpn adding V(nvn) to the input the
//     amplifier senses (inpn instead of inp); no current flows in Evn,
//     because the amplifier's input is a controlling port;
//   - current noise in at each input: a resistor Rin = 4kT/in², shorted by
//     a 0 V source whose current (the resistor's thermal noise current,
//     √(4kT/Rin) = in) a unity CCCS copies from the input pin to ground,
//     one independent pair per input; at DC all carry zero current;
//   - the single-pole model's A0 Ohm resistor is written with noisy=0 (an
//     instance parameter of ngspice's resistor), so that the model itself
//     is noiseless, as in package noise;
//   - `.options temp=T−273.15` (SPICE takes °C; T = Noise.TempK, the °C
//     value rounded to 1e-9), the temperature of every resistor's thermal
//     noise.
//
// With Noise.Analysis the .control block then runs `noise v(out) vin dec N
// StartHz StopHz` over the .ac sweep and writes onoise_spectrum (V/√Hz) to
// Noise.DataFile, as a complex vector with zero imaginary part, so that
// spicerun.ReadData reads it.
//
// With opt.Transient the source also carries PWL(0 0 RiseS 1), a unit step
// with a linear rise over RiseS, and the .control block runs `tran StepS
// StopS 0 StepS` (StepS is also the largest time step) and writes v(out)
// at the simulator's time points, again as a complex vector with zero
// imaginary part, to Transient.DataFile. The AC data file is always the
// first one written; the analyses run in the order ac, noise, tran.
//
// The model's parasitics and DC errors go into the subcircuit: Cinp and
// Cinn (input capacitance to ground), Rout (open-loop output resistance,
// noiseless, between the amplifier and the out pin), Vos (the offset, in
// series with the sensed + input) and Ibp, Ibn (bias currents into each
// input); with an offset or a bias current the .control block also runs
// `op` and writes v(out) to [OpDataFile]. With opt.Supply (see
// [SpiceSupply]) the deck has Vpos, Vneg and Vref, every ground connection
// of the filter (and the source's low side) on node ref, the subcircuit's
// gain referred to ref (a fourth pin), a smooth output limiter and a
// .nodeset of the integrators at the reference; with Noise.CornerHz the
// noise sources carry 1/f noise (see writeFlicker).
//
// With opt.Sampler the deck carries a sampling converter's input on node
// out: the sampling capacitor Cacqs (node acq_samp to ground) behind switch
// Sacq (ron Sampler.SwitchOhm, roff 1e12 Ohm), held at KickV relative to
// the reference through a second switch until the acquisition. Both
// switches follow acq_arm, 0 V in every analysis but the last: there Sacq
// is open, so the .ac, noise and step analyses see the filter alone (out
// loaded by 1e12 Ohm). The .control block then runs one acquisition: it
// holds the source at its DC level (alter @vin[pwl]), sets acq_arm to 1 V,
// runs `tran` over Sampler.AcquisitionS (2000 steps, the switch closing
// over its first 1e-4) and writes v(acq_samp) and v(out) to
// Sampler.DataFile.
//
// A differential chain (its last stage differential, see
// [Stage.OutN]) has its last stage's outputs on nodes outp and outn and
// Eout making out = v(outp) − v(outn), so every analysis of v(out) reads
// the differential output, and the noise analysis is of v(outp,outn);
// each fully differential op-amp is an instance of pw_fda (pins +in,
// −in, +out, −out, and ref with opt.Supply): the same input parasitics,
// DC errors and noise as pw_opamp, the differential gain on node n1 (the
// same single-pole integrator, or a VCVS of gain [IdealOpAmpGain]) and
// the outputs at the reference ± v(n1)/2, so that their common mode is
// the reference (Vocm tied to ref, or to ground without a supply), each
// through Rout and the limiter when set. When the first stage is
// differentially driven (DiffIn), Einp and Einn drive inp and inn with
// +½ and −½ of v(in). A sampler on a differential chain is refused.
//
// Values are written in exponent form with at least 12 significant digits
// and as many as the exact float64 needs (see the package documentation),
// with no scale suffixes. The chain is validated first; an
// invalid chain or option returns an error wrapping [ErrInvalid] and
// writes nothing. Without Noise and Transient the deck is exactly what it
// was before they existed.
func (c Chain) WriteSPICE(w io.Writer, opt SpiceOptions) error {
	if err := c.Validate(); err != nil {
		return err
	}
	ppd, start, stop, err := c.sweep(opt)
	if err != nil {
		return err
	}
	data := opt.DataFile
	if data == "" {
		data = DefaultDataFile
	}
	if err := checkDataFile("DataFile", data); err != nil {
		return err
	}
	nz, err := resolveNoise(opt.Noise)
	if err != nil {
		return err
	}
	tr, err := resolveTransient(opt.Transient)
	if err != nil {
		return err
	}
	sup, err := resolveSupply(opt.Supply)
	if err != nil {
		return err
	}
	smp := opt.Sampler
	acqFile := ""
	if smp != nil {
		if !finitePositive(smp.CapacitanceFarad) || !finitePositive(smp.AcquisitionS) || !finitePositive(smp.SwitchOhm) ||
			math.IsNaN(smp.KickV) || math.IsInf(smp.KickV, 0) {
			return invalidf("spice options: Sampler needs finite CapacitanceFarad, AcquisitionS, SwitchOhm > 0 and a finite KickV")
		}
		acqFile = smp.DataFile
		if acqFile == "" {
			acqFile = DefaultAcqDataFile
		}
		if err := checkDataFile("Sampler.DataFile", acqFile); err != nil {
			return err
		}
	}
	title := opt.Title
	if title == "" {
		title = DefaultSpiceTitle
	}

	b := bufio.NewWriter(w)
	fmt.Fprintf(b, "* %s\n", commentLine(title))
	if opt.Description != "" {
		for _, line := range strings.Split(strings.TrimRight(opt.Description, "\r\n"), "\n") {
			fmt.Fprintf(b, "* %s\n", commentLine(strings.TrimRight(line, "\r")))
		}
	}
	b.WriteString("*\n")
	fmt.Fprintf(b, "* Written by polewright: %d stage(s), source Vin drives node in with AC 1,\n", len(c.Stages))
	b.WriteString("* the filter output is node out, ground is 0. Designators match the bill of\n")
	b.WriteString("* materials; op-amp U<n> is the subcircuit instance XU<n>. Local node x of\n")
	b.WriteString("* stage k is s<k>_x.\n")
	if c.Model.Ideal {
		fmt.Fprintf(b, "* Op-amp: ideal, as a VCVS of gain %s.\n", spiceNum(IdealOpAmpGain))
	} else {
		fmt.Fprintf(b, "* Op-amp: single pole, A(s) = A0/(1 + s*A0/(2*pi*GBW)), A0 = %s (%s dB),\n",
			spiceNum(c.Model.a0()), strconv.FormatFloat(c.Model.DCGainDB, 'g', -1, 64))
		fmt.Fprintf(b, "* GBW = %s Hz.\n", spiceNum(c.Model.GBWHz))
	}
	if nz != nil {
		fmt.Fprintf(b, "* Op-amp noise: en = %s V/rtHz at the + input, in = %s A/rtHz at each\n", spiceNum(nz.en), spiceNum(nz.in))
		fmt.Fprintf(b, "* input, from the thermal noise of helper resistors; T = %s K.\n", spiceNum(nz.tempK))
	}
	m := c.Model
	if m.HasParasitics() || m.OffsetV != 0 || m.BiasA != 0 {
		fmt.Fprintf(b, "* Op-amp parasitics and DC errors: input capacitance %s F from each input to\n", spiceNum(m.InputCapacitanceFarad))
		fmt.Fprintf(b, "* ground, open-loop output resistance %s Ohm, offset %s V at the + input,\n", spiceNum(m.OutputResistanceOhm), spiceNum(m.OffsetV))
		fmt.Fprintf(b, "* bias current %s A into each input.\n", spiceNum(m.BiasA))
	}
	gnd, refPin := Ground, ""
	if sup != nil {
		gnd, refPin = "ref", "ref "
		fmt.Fprintf(b, "* Supply: %s V and %s V, reference (the signal's zero) %s V on node ref;\n",
			spiceNum(sup.PositiveV), spiceNum(sup.NegativeV), spiceNum(sup.ReferenceV))
		fmt.Fprintf(b, "* every ground connection of the filter is on ref; op-amp outputs are held\n")
		fmt.Fprintf(b, "* %s V inside the rails by a smooth limiter, linear (to 1e-4) more than 0.1 V\n", spiceNum(sup.OutputHeadroomV))
		b.WriteString("* inside its limits, of slope 1e-3 beyond them. The op-amp's\n")
		b.WriteString("* gain acts around ref, its fourth pin: v(out) = v(ref) + A(s)*(v(+) - v(-)).\n")
		fmt.Fprintf(b, "Vpos vpos 0 DC %s\n", spiceNum(sup.PositiveV))
		fmt.Fprintf(b, "Vneg vneg 0 DC %s\n", spiceNum(sup.NegativeV))
		fmt.Fprintf(b, "Vref ref 0 DC %s\n", spiceNum(sup.ReferenceV))
	}
	node := func(stage int, local string) string {
		if local == Ground {
			return gnd
		}
		return c.Node(stage, local)
	}
	diff := c.Differential()
	if diff && smp != nil {
		return invalidf("spice options: Sampler on a differential chain (the sampler is single-ended)")
	}
	if diff {
		b.WriteString("* Differential: the filter's outputs are outp and outn, and Eout makes\n")
		b.WriteString("* out = v(outp) - v(outn). Fully differential op-amp U<n> is the instance XU<n>\n")
		fmt.Fprintf(b, "* of %s (pins +in, -in, +out, -out): v(+out) - v(-out) = A(s)*(v(+in) - v(-in)),\n", fdaSubckt)
		b.WriteString("* output common mode (v(+out) + v(-out))/2 held at the reference.\n")
	}
	if c.Stages[0].DiffIn {
		b.WriteString("* The source is differential: Einp and Einn drive inp and inn with +1/2 and\n")
		b.WriteString("* -1/2 of v(in).\n")
	}
	if tr != nil && !c.Model.Ideal {
		// The deck's time step follows the filter; the op-amps' own response
		// to the step's edge (a highpass passes it) is far faster.
		fmt.Fprintf(b, "* tran's largest time step is the filter's; to resolve the op-amps' fast response to\n")
		fmt.Fprintf(b, "* the step's edge (which a highpass passes), use one near 1/(20*GBW) = %s s.\n", spiceNum(1/(20*c.Model.GBWHz)))
	}
	switch {
	case tr != nil && sup != nil && (sup.StepLowV != 0 || sup.StepHighV != 0):
		fmt.Fprintf(b, "Vin in %s DC 0 AC 1 PWL(0 %s %s %s)\n", gnd, spiceNum(sup.StepLowV), spiceNum(tr.rise), spiceNum(sup.StepHighV))
	case tr != nil:
		fmt.Fprintf(b, "Vin in %s DC 0 AC 1 PWL(0 0 %s 1)\n", gnd, spiceNum(tr.rise))
	default:
		fmt.Fprintf(b, "Vin in %s DC 0 AC 1\n", gnd)
	}
	if c.Stages[0].DiffIn {
		fmt.Fprintf(b, "Einp %s %s in %s 0.5\n", InP, gnd, gnd)
		fmt.Fprintf(b, "Einn %s %s in %s -0.5\n", InN, gnd, gnd)
	}
	hasFDA, hasSE := false, false
	for k, st := range c.Stages {
		stage := k + 1
		note := ""
		if _, _, ok := st.SplitConversion(); ok {
			note = ", then its single-ended to differential conversion (the FDA, half B's input on the reference)"
		}
		fmt.Fprintf(b, "* stage %d: %s%s\n", stage, commentLine(st.Topology), note)
		for _, p := range st.Parts {
			fmt.Fprintf(b, "%s %s %s %s\n", SpiceName(c.Ref(stage, p.Ref)),
				node(stage, p.A), node(stage, p.B), spiceNum(p.Value))
		}
		for _, u := range st.OpAmps {
			if u.FullyDifferential() {
				hasFDA = true
				fmt.Fprintf(b, "%s %s %s %s %s %s%s\n", SpiceName(c.Ref(stage, u.Ref)),
					node(stage, u.Plus), node(stage, u.Minus), node(stage, u.Out), node(stage, u.OutN), refPin, fdaSubckt)
				continue
			}
			hasSE = true
			fmt.Fprintf(b, "%s %s %s %s %s%s\n", SpiceName(c.Ref(stage, u.Ref)),
				node(stage, u.Plus), node(stage, u.Minus), node(stage, u.Out), refPin, opAmpSubckt)
		}
	}
	if diff {
		fmt.Fprintf(b, "Eout %s 0 %s %s 1\n", Out, OutP, OutNNode)
	}
	if smp != nil {
		// The converter's input: the sampling capacitor, held at the kick
		// voltage through Sacqpre until the acquisition starts, then
		// switched onto out through Sacq. acq_arm is 0 V in every
		// analysis but the acquisition, which sets it to 1 V: until then
		// Sacq is open (1e12 Ohm) and the capacitor sits at 0 V.
		fmt.Fprintf(b, "* converter input: sampling capacitor %s F behind a %s Ohm switch, closed for\n", spiceNum(smp.CapacitanceFarad), spiceNum(smp.SwitchOhm))
		fmt.Fprintf(b, "* %s s from t = 0 in the acquisition analysis, charged %s V from out before.\n", spiceNum(smp.AcquisitionS), spiceNum(smp.KickV))
		rise := smp.AcquisitionS * 1e-4
		b.WriteString("Vacqarm acq_arm 0 DC 0\n")
		fmt.Fprintf(b, "Vacqramp acq_ramp 0 DC 0 PWL(0 0 %s 1)\n", spiceNum(rise))
		b.WriteString("Bacqctl acq_ctl 0 V = V(acq_arm)*V(acq_ramp)\n")
		b.WriteString("Bacqctln acq_ctln 0 V = 1 - V(acq_ctl)\n")
		if sup != nil {
			fmt.Fprintf(b, "Bacqpre acq_pre 0 V = V(ref) + V(acq_arm)*(%s)\n", spiceNum(smp.KickV))
		} else {
			fmt.Fprintf(b, "Bacqpre acq_pre 0 V = V(acq_arm)*(%s)\n", spiceNum(smp.KickV))
		}
		fmt.Fprintf(b, "Sacqpre acq_pre %s acq_ctln 0 pw_acqsw\n", SamplerNode)
		fmt.Fprintf(b, "Sacq out %s acq_ctl 0 pw_acqsw\n", SamplerNode)
		fmt.Fprintf(b, "Cacqs %s %s %s\n", SamplerNode, gnd, spiceNum(smp.CapacitanceFarad))
		fmt.Fprintf(b, ".model pw_acqsw sw(vt=0.5 vh=0 ron=%s roff=1e12)\n", spiceNum(smp.SwitchOhm))
	}
	if hasSE {
		writeAmpSubckt(b, m, nz, sup, refPin, false)
	}
	if hasFDA {
		writeAmpSubckt(b, m, nz, sup, refPin, true)
	}
	if sup != nil && !c.Model.Ideal {
		// The single-pole integrators start at the reference: from 0 V,
		// the limiter's flat side would send the operating point into
		// gmin stepping.
		b.WriteString(".nodeset")
		for k, st := range c.Stages {
			for _, u := range st.OpAmps {
				fmt.Fprintf(b, " v(%s.n1)=%s", strings.ToLower(SpiceName(c.Ref(k+1, u.Ref))), spiceNum(sup.ReferenceV))
			}
		}
		b.WriteString("\n")
	}
	if nz != nil {
		// In °C, rounded to 1e-9 K (26.85, not 26.850000000000023).
		fmt.Fprintf(b, ".options temp=%s\n", spiceNum(math.Round((nz.tempK-celsiusZeroK)*1e9)/1e9))
	}
	fmt.Fprintf(b, ".ac dec %d %s %s\n", ppd, spiceNum(start), spiceNum(stop))
	b.WriteString(".control\n")
	b.WriteString("set wr_singlescale\n")
	b.WriteString("set wr_vecnames\n")
	b.WriteString("set numdgt=15\n")
	b.WriteString("run\n")
	fmt.Fprintf(b, "wrdata %s v(out)\n", data)
	if sup != nil || m.OffsetV != 0 || m.BiasA != 0 {
		b.WriteString("op\n")
		b.WriteString("print v(out)\n")
		fmt.Fprintf(b, "wrdata %s v(out)\n", OpDataFile)
	}
	if nz != nil && nz.analysis {
		outV := "v(out)"
		if diff {
			outV = "v(" + OutP + "," + OutNNode + ")"
		}
		fmt.Fprintf(b, "noise %s vin dec %d %s %s\n", outV, ppd, spiceNum(start), spiceNum(stop))
		// noise makes the spectrum plot, then the integrated-noise plot,
		// which is current; the spectrum is the previous one.
		b.WriteString("setplot previous\n")
		b.WriteString("let onoise_c = onoise_spectrum + j(0)\n")
		fmt.Fprintf(b, "wrdata %s onoise_c\n", nz.file)
	}
	if tr != nil {
		fmt.Fprintf(b, "tran %s %s 0 %s\n", spiceNum(tr.step), spiceNum(tr.stop), spiceNum(tr.step))
		// The new transient plot is current (its name, tranN, depends on
		// the analyses before it).
		b.WriteString("let vout_c = v(out) + j(0)\n")
		fmt.Fprintf(b, "wrdata %s vout_c\n", tr.file)
	}
	if smp != nil {
		// One acquisition: the input held at its DC level, the switch
		// closed at t = 0; v(acq_samp) and v(out).
		if tr != nil {
			b.WriteString("alter @vin[pwl] = [ 0 0 1 0 ]\n")
		}
		b.WriteString("alter vacqarm dc = 1\n")
		st := smp.AcquisitionS / 2000
		fmt.Fprintf(b, "tran %s %s 0 %s\n", spiceNum(st), spiceNum(smp.AcquisitionS), spiceNum(st))
		fmt.Fprintf(b, "let vsamp_c = v(%s) + j(0)\n", SamplerNode)
		b.WriteString("let vout_a = v(out) + j(0)\n")
		fmt.Fprintf(b, "wrdata %s vsamp_c vout_a\n", acqFile)
	}
	b.WriteString("quit\n")
	b.WriteString(".endc\n")
	b.WriteString(".end\n")
	return b.Flush()
}

// resolveSupply checks the supply option.
func resolveSupply(sp *SpiceSupply) (*SpiceSupply, error) {
	if sp == nil {
		return nil, nil
	}
	for _, v := range []float64{sp.PositiveV, sp.NegativeV, sp.ReferenceV, sp.OutputHeadroomV, sp.StepLowV, sp.StepHighV} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, invalidf("spice options: Supply has a value that is not finite")
		}
	}
	if !(sp.PositiveV > sp.ReferenceV && sp.ReferenceV > sp.NegativeV) {
		return nil, invalidf("spice options: Supply: need PositiveV > ReferenceV > NegativeV (got %v, %v, %v)", sp.PositiveV, sp.ReferenceV, sp.NegativeV)
	}
	if !(sp.OutputHeadroomV >= 0) || 2*sp.OutputHeadroomV >= sp.PositiveV-sp.NegativeV {
		return nil, invalidf("spice options: Supply.OutputHeadroomV %v leaves no swing", sp.OutputHeadroomV)
	}
	return sp, nil
}

// writeAmpSubckt writes the op-amp subcircuit (pins +in, −in, out[, ref])
// or, with fda, the fully differential one (pins +in, −in, +out, −out[,
// ref]) with the model's parasitics, DC errors, noise and, with sup, the
// output limiter (see [Chain.WriteSPICE]).
func writeAmpSubckt(b *bufio.Writer, m Model, nz *noiseHelpers, sup *SpiceSupply, refPin string, fda bool) {
	name, outs := opAmpSubckt, "out"
	if fda {
		name, outs = fdaSubckt, "outp outn"
	}
	fmt.Fprintf(b, ".subckt %s inp inn %s%s\n", name, outs, strings.TrimSuffix(" "+refPin, " "))
	if m.InputCapacitanceFarad > 0 {
		fmt.Fprintf(b, "Cinp inp 0 %s\n", spiceNum(m.InputCapacitanceFarad))
		fmt.Fprintf(b, "Cinn inn 0 %s\n", spiceNum(m.InputCapacitanceFarad))
	}
	if m.BiasA != 0 {
		fmt.Fprintf(b, "Ibp inp 0 DC %s\n", spiceNum(m.BiasA))
		fmt.Fprintf(b, "Ibn inn 0 DC %s\n", spiceNum(m.BiasA))
	}
	drive, driveN := "out", "outn"
	if fda {
		drive = "outp"
	}
	if m.OutputResistanceOhm > 0 {
		if fda {
			drive, driveN = "outpi", "outni"
			fmt.Fprintf(b, "Rout outpi outp %s noisy=0\n", spiceNum(m.OutputResistanceOhm))
			fmt.Fprintf(b, "Routn outni outn %s noisy=0\n", spiceNum(m.OutputResistanceOhm))
		} else {
			drive = "outi"
			fmt.Fprintf(b, "Rout outi out %s noisy=0\n", spiceNum(m.OutputResistanceOhm))
		}
	}
	sense, noisy := "inp", ""
	if nz != nil && nz.corner > 0 {
		noisy = " noisy=0"
		nz.writeFlicker(b)
		if nz.rv > 0 {
			sense = "inpn"
		}
	} else if nz != nil {
		noisy = " noisy=0"
		if nz.rv > 0 {
			fmt.Fprintf(b, "Rvn nvn 0 %s\n", spiceNum(nz.rv))
			b.WriteString("Evn inpn inp nvn 0 1\n")
			sense = "inpn"
		}
		if nz.ri > 0 {
			for _, pin := range []string{"inp", "inn"} {
				fmt.Fprintf(b, "Rn%s n%s 0 %s\n", pin, pin, spiceNum(nz.ri))
				fmt.Fprintf(b, "Vn%s n%s 0 DC 0\n", pin, pin)
				fmt.Fprintf(b, "Fn%s %s 0 Vn%s 1\n", pin, pin, pin)
			}
		}
	}
	if m.OffsetV != 0 {
		// V(inpo) = V(sense) + Vos: the offset adds to the + input.
		fmt.Fprintf(b, "Vos inpo %s DC %s\n", sense, spiceNum(m.OffsetV))
		sense = "inpo"
	}
	var lo, hi string
	if sup != nil {
		lo, hi = spiceNum(sup.NegativeV+sup.OutputHeadroomV), spiceNum(sup.PositiveV-sup.OutputHeadroomV)
	}
	// limit is the limiter: x − 0.999·s·(sp((x − hi)/s) − sp((lo − x)/s))
	// with sp the softplus ln(1 + e^z), written overflow-free, and s =
	// limiterSoftV. Smooth (the operating point converges without gmin
	// stepping), of slope 1 within 1e-4 more than 10·s inside the limits,
	// and of slope 1e-3 beyond them.
	limit := func(x string) string {
		sp := func(z string) string {
			return fmt.Sprintf("(max(%s, 0) + ln(1 + exp(-abs(%s))))", z, z)
		}
		soft := spiceNum(limiterSoftV)
		z1 := fmt.Sprintf("(%s - %s)/%s", x, hi, soft)
		z2 := fmt.Sprintf("(%s - %s)/%s", lo, x, soft)
		return fmt.Sprintf("%s - 0.999*%s*(%s - %s)", x, soft, sp(z1), sp(z2))
	}
	if fda {
		writeFDAGain(b, m, sup, sense, noisy, drive, driveN, limit)
		fmt.Fprintf(b, ".ends %s\n", name)
		return
	}
	switch {
	case m.Ideal && sup != nil:
		fmt.Fprintf(b, "B1 %s 0 V = %s\n", drive, limit(fmt.Sprintf("(V(ref)+%s*(V(%s)-V(inn)))", spiceNum(IdealOpAmpGain), sense)))
	case m.Ideal:
		fmt.Fprintf(b, "E1 %s 0 %s inn %s\n", drive, sense, spiceNum(IdealOpAmpGain))
	default:
		zero := Ground
		if sup != nil {
			zero = "ref"
		}
		fmt.Fprintf(b, "G1 %s n1 %s inn 1\n", zero, sense)
		fmt.Fprintf(b, "R1 n1 %s %s%s\n", zero, spiceNum(m.a0()), noisy)
		fmt.Fprintf(b, "C1 n1 %s %s\n", zero, spiceNum(1/(2*math.Pi*m.GBWHz)))
		if sup != nil {
			fmt.Fprintf(b, "B1 %s 0 V = %s\n", drive, limit("V(n1)"))
		} else {
			fmt.Fprintf(b, "E1 %s 0 n1 0 1\n", drive)
		}
	}
	fmt.Fprintf(b, ".ends %s\n", name)
}

// writeFDAGain writes the fully differential op-amp's gain: the
// differential voltage vd on node n1 relative to the reference (zero: 0
// or ref), A(s)·(v(sense) − v(inn)) (the single-pole integrator of the
// op-amp subcircuit, or a VCVS of gain [IdealOpAmpGain]), and the two
// outputs at the reference ± vd/2 (through the limiter with sup), so
// that their common mode is the reference.
func writeFDAGain(b *bufio.Writer, m Model, sup *SpiceSupply, sense, noisy, drive, driveN string, limit func(string) string) {
	zero := Ground
	if sup != nil {
		zero = "ref"
	}
	if m.Ideal {
		fmt.Fprintf(b, "E1 n1 %s %s inn %s\n", zero, sense, spiceNum(IdealOpAmpGain))
	} else {
		fmt.Fprintf(b, "G1 %s n1 %s inn 1\n", zero, sense)
		fmt.Fprintf(b, "R1 n1 %s %s%s\n", zero, spiceNum(m.a0()), noisy)
		fmt.Fprintf(b, "C1 n1 %s %s\n", zero, spiceNum(1/(2*math.Pi*m.GBWHz)))
	}
	if sup != nil {
		fmt.Fprintf(b, "B1 %s 0 V = %s\n", drive, limit("(V(ref)+0.5*(V(n1)-V(ref)))"))
		fmt.Fprintf(b, "B2 %s 0 V = %s\n", driveN, limit("(V(ref)-0.5*(V(n1)-V(ref)))"))
		return
	}
	fmt.Fprintf(b, "E1p %s 0 n1 0 0.5\n", drive)
	fmt.Fprintf(b, "E1n %s 0 n1 0 -0.5\n", driveN)
}
