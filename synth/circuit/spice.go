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
)

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
// Values are written in exponent form with at least 12 significant digits
// and as many as the exact float64 needs (see the package documentation),
// with no scale suffixes. The chain is validated first; an
// invalid chain or option returns an error wrapping [ErrInvalid] and
// writes nothing.
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
	if strings.ContainsAny(data, " \t\r\n\"';") {
		return invalidf("spice options: DataFile %q holds white space, quotes or ';'", data)
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
	b.WriteString("Vin in 0 DC 0 AC 1\n")
	for k, st := range c.Stages {
		stage := k + 1
		fmt.Fprintf(b, "* stage %d: %s\n", stage, commentLine(st.Topology))
		for _, p := range st.Parts {
			fmt.Fprintf(b, "%s %s %s %s\n", SpiceName(c.Ref(stage, p.Ref)),
				c.Node(stage, p.A), c.Node(stage, p.B), spiceNum(p.Value))
		}
		for _, u := range st.OpAmps {
			fmt.Fprintf(b, "%s %s %s %s %s\n", SpiceName(c.Ref(stage, u.Ref)),
				c.Node(stage, u.Plus), c.Node(stage, u.Minus), c.Node(stage, u.Out), opAmpSubckt)
		}
	}
	fmt.Fprintf(b, ".subckt %s inp inn out\n", opAmpSubckt)
	if c.Model.Ideal {
		fmt.Fprintf(b, "E1 out 0 inp inn %s\n", spiceNum(IdealOpAmpGain))
	} else {
		b.WriteString("G1 0 n1 inp inn 1\n")
		fmt.Fprintf(b, "R1 n1 0 %s\n", spiceNum(c.Model.a0()))
		fmt.Fprintf(b, "C1 n1 0 %s\n", spiceNum(1/(2*math.Pi*c.Model.GBWHz)))
		b.WriteString("E1 out 0 n1 0 1\n")
	}
	fmt.Fprintf(b, ".ends %s\n", opAmpSubckt)
	fmt.Fprintf(b, ".ac dec %d %s %s\n", ppd, spiceNum(start), spiceNum(stop))
	b.WriteString(".control\n")
	b.WriteString("set wr_singlescale\n")
	b.WriteString("set wr_vecnames\n")
	b.WriteString("set numdgt=15\n")
	b.WriteString("run\n")
	fmt.Fprintf(b, "wrdata %s v(out)\n", data)
	b.WriteString("quit\n")
	b.WriteString(".endc\n")
	b.WriteString(".end\n")
	return b.Flush()
}
