package topology

import (
	"fmt"
	"math"
	"sort"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/synth/circuit"
)

// tieEps is the score difference within which two candidates count as
// equally accurate, so that the one with resistors nearer the middle of the
// window wins.
const tieEps = 1e-6

// winTol is the relative slack of the window bounds, so that a series value
// computed as 2.2 × 1e5 still counts as 220 kΩ.
const winTol = 1e-9

// options are validated Options with the derived quantities the search uses.
type options struct {
	rs, cs     eseries.Series
	exact      bool
	rmin, rmax float64
	cmin, cmax float64
	ctol, rtol float64
	rmid       float64   // geometric middle of the resistor window
	rbase      float64   // a resistor value near rmid: series value, or rmid when exact
	caps       []float64 // capacitor series values in the window, ascending
	rvals      []float64 // resistor series values in the window, ascending (not exact)
	rties      []float64 // tieLog of each rvals entry
	rstep      float64   // largest ratio between adjacent resistor series values
	rname      string    // Series of the resistors ("" when exact)
	maxFloor   float64   // bound of the one-amplifier notch's residual, linear (+Inf unless auto)
	noDivider  bool      // no positive-feedback divider (fully differential MFB highpass)
	tinShift   int       // Options.TwoIntegratorGainShift
}

func newOptions(opt Options) (*options, error) {
	def := DefaultOptions()
	o := &options{rs: opt.ResistorSeries, cs: opt.CapacitorSeries, exact: opt.Exact, maxFloor: math.Inf(1), tinShift: opt.TwoIntegratorGainShift}
	if o.tinShift < -1 || o.tinShift > 1 {
		return nil, fmt.Errorf("TwoIntegratorGainShift %d is not −1, 0 or 1", o.tinShift)
	}
	if o.rs.Len() == 0 {
		o.rs = def.ResistorSeries
	}
	if o.cs.Len() == 0 {
		o.cs = def.CapacitorSeries
	}
	pick := func(name string, v, d float64) (float64, error) {
		switch {
		case v == 0:
			return d, nil
		case !(v > 0) || math.IsInf(v, 1):
			return 0, fmt.Errorf("%s %v is not finite and > 0", name, v)
		}
		return v, nil
	}
	var err error
	if o.rmin, err = pick("MinOhm", opt.MinOhm, DefaultMinOhm); err != nil {
		return nil, err
	}
	if o.rmax, err = pick("MaxOhm", opt.MaxOhm, DefaultMaxOhm); err != nil {
		return nil, err
	}
	if o.cmin, err = pick("MinFarad", opt.MinFarad, DefaultMinFarad); err != nil {
		return nil, err
	}
	if o.cmax, err = pick("MaxFarad", opt.MaxFarad, DefaultMaxFarad); err != nil {
		return nil, err
	}
	if o.ctol, err = pick("CapacitorTolerancePct", opt.CapacitorTolerancePct, DefaultCapacitorTolerancePct); err != nil {
		return nil, err
	}
	if o.rmin > o.rmax {
		return nil, fmt.Errorf("MinOhm %s is above MaxOhm %s", eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
	}
	if o.cmin > o.cmax {
		return nil, fmt.Errorf("MinFarad %s is above MaxFarad %s", eng(o.cmin, "F"), eng(o.cmax, "F"))
	}
	if o.cmax/o.cmin > 1e12 {
		return nil, fmt.Errorf("capacitor window %s..%s spans more than 12 decades", eng(o.cmin, "F"), eng(o.cmax, "F"))
	}
	if o.rmax/o.rmin > 1e12 {
		return nil, fmt.Errorf("resistor window %s..%s spans more than 12 decades", eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
	}
	o.caps = o.cs.InRange(o.cmin, o.cmax)
	if len(o.caps) == 0 {
		return nil, fmt.Errorf("no %s capacitor value in %s..%s", o.cs, eng(o.cmin, "F"), eng(o.cmax, "F"))
	}
	if !o.exact {
		o.rvals = o.rs.InRange(o.rmin, o.rmax)
		if len(o.rvals) == 0 {
			return nil, fmt.Errorf("no %s resistor value in %s..%s", o.rs, eng(o.rmin, "Ω"), eng(o.rmax, "Ω"))
		}
		m := o.rs.Values()
		o.rstep = 10 / m[len(m)-1]
		for i := 1; i < len(m); i++ {
			o.rstep = max(o.rstep, m[i]/m[i-1])
		}
		o.rstep *= 1 + winTol
		o.rties = make([]float64, len(o.rvals))
	}
	o.rtol = o.rs.TolerancePct()
	o.rmid = math.Sqrt(o.rmin * o.rmax)
	for i, v := range o.rvals {
		o.rties[i] = o.tieLog(v)
	}
	o.rbase = o.rmid
	o.rname = o.rs.Name()
	if o.exact {
		o.rname = ""
	} else {
		o.rbase = o.rs.Nearest(o.rmid)
		if !o.inR(o.rbase) {
			below, above := o.rs.Neighbours(o.rmid)
			o.rbase = below
			if !o.inR(below) {
				o.rbase = above
			}
		}
	}
	return o, nil
}

// inR and inC report whether a value is within the resistor or capacitor
// window.
func (o *options) inR(v float64) bool { return v >= o.rmin*(1-winTol) && v <= o.rmax*(1+winTol) }
func (o *options) inC(v float64) bool { return v >= o.cmin*(1-winTol) && v <= o.cmax*(1+winTol) }

// nearR reports whether an exact resistor value is close enough to the
// window for one of its rounded neighbours to be inside it: the pruning
// test of the searches.
func (o *options) nearR(v float64) bool {
	return v >= o.rmin*0.8 && v <= o.rmax*1.25 && finite(v)
}

// window describes the windows for messages.
func (o *options) window() string {
	rs := o.rs.Name()
	if o.exact {
		rs = "exact"
	}
	return fmt.Sprintf("resistors %s..%s (%s), capacitors %s..%s (%s)",
		eng(o.rmin, "Ω"), eng(o.rmax, "Ω"), rs, eng(o.cmin, "F"), eng(o.cmax, "F"), o.cs)
}

// limitsMsg explains a search that found nothing, from the stage's
// time-constant scale: at ω0 an RC section needs R·C ≈ 1/ω0.
func (o *options) limitsMsg(w0 float64, what string) string {
	lo, hi := 1/(w0*o.cmax), 1/(w0*o.cmin)
	msg := fmt.Sprintf("no part values fit %s", o.window())
	switch {
	case lo > o.rmax:
		msg += fmt.Sprintf(": at f0 = %s even the largest capacitor needs about %s", fmtHz(w0), eng(lo, "Ω"))
	case hi < o.rmin:
		msg += fmt.Sprintf(": at f0 = %s even the smallest capacitor needs only about %s", fmtHz(w0), eng(hi, "Ω"))
	}
	if what != "" {
		msg += " (" + what + ")"
	}
	return msg
}

// rcands writes the resistor values to try for an exact design value x:
// x itself when exact, otherwise the nearest series value and its two
// neighbours, keeping those inside the window (x more than a series step
// outside the window has none). It returns how many.
func (o *options) rcands(x float64, out *[3]float64) int {
	var ties [3]float64
	return o.rcandsTie(x, out, &ties)
}

// rcandsTie is rcands that also writes each value's tie-break distance
// tieLog, from a table for series values.
func (o *options) rcandsTie(x float64, out, ties *[3]float64) int {
	if !finite(x) || !(x > 0) {
		return 0
	}
	if o.exact {
		if o.inR(x) {
			out[0], ties[0] = x, o.tieLog(x)
			return 1
		}
		return 0
	}
	vals := o.rvals
	if x < vals[0]/o.rstep || x > vals[len(vals)-1]*o.rstep {
		return 0
	}
	j := sort.SearchFloat64s(vals, x*(1-winTol)) // first value ≥ x
	var lo, hi int                               // candidate indices lo..hi
	switch {
	case j < len(vals) && vals[j] <= x*(1+winTol): // x is a series value
		lo, hi = j-1, j+1
	case j == 0:
		lo, hi = 0, 1
	case j == len(vals):
		lo, hi = j-2, j-1
	case vals[j]/x < x/vals[j-1]: // above is nearest: add the one past it
		lo, hi = j-1, j+1
	default:
		lo, hi = j-2, j
	}
	n := 0
	for i := max(lo, 0); i <= min(hi, len(vals)-1); i++ {
		out[n], ties[n] = vals[i], o.rties[i]
		n++
	}
	return n
}

// capsAtMost appends to dst up to n capacitor values in the window at or
// below lim, from the largest down.
func (o *options) capsAtMost(dst []float64, lim float64, n int) []float64 {
	i := sort.SearchFloat64s(o.caps, lim*(1+winTol)) - 1 // last value ≤ lim
	if i+1 < len(o.caps) && o.caps[i+1] <= lim*(1+winTol) {
		i++
	}
	for ; i >= 0 && n > 0; i-- {
		dst = append(dst, o.caps[i])
		n--
	}
	return dst
}

// capsAtLeast appends to dst up to n capacitor values in the window at or
// above lim, from the smallest up.
func (o *options) capsAtLeast(dst []float64, lim float64, n int) []float64 {
	for i := sort.SearchFloat64s(o.caps, lim*(1-winTol)); i < len(o.caps) && n > 0; i++ {
		dst = append(dst, o.caps[i])
		n--
	}
	return dst
}

// capsNear appends the window values around x: k at or below it and k
// above it.
func (o *options) capsNear(dst []float64, x float64, k int) []float64 {
	j := sort.SearchFloat64s(o.caps, x*(1+winTol)) // first value above x
	for i := max(0, j-k); i < min(len(o.caps), j+k); i++ {
		dst = append(dst, o.caps[i])
	}
	return dst
}

// positiveRoots returns the positive roots of a·x² − b·x + c = 0 for
// b > 0 and c > 0, computed without cancellation.
func positiveRoots(a, b, c float64) (r [2]float64, n int) {
	if a == 0 {
		r[0] = c / b
		return r, 1
	}
	d := b*b - 4*a*c
	if d < 0 {
		if d > -1e-12*b*b { // a double root lost to rounding
			d = 0
		} else {
			return r, 0
		}
	}
	sq := math.Sqrt(d)
	r[0] = 2 * c / (b + sq) // the root of smaller magnitude, positive
	n = 1
	if a > 0 && d > 0 {
		r[1] = (b + sq) / (2 * a)
		n = 2
	}
	return r, n
}

// sq returns x².
func sq(x float64) float64 { return x * x }

// errScore returns the squared relative error of got against want.
func errScore(got, want float64) float64 { return sq(got/want - 1) }

// tieLog returns ln²(r/rmid), the tie-break distance of one resistor from
// the middle of the window.
func (o *options) tieLog(r float64) float64 { return sq(math.Log(r / o.rmid)) }

// picker keeps the best candidate: the lowest score, and among scores within
// tieEps of the lowest seen, the lowest tie-break value.
type picker struct {
	ok       bool
	minScore float64
	score    float64
	tie      float64
}

// wants reports whether a candidate with this score could be taken; if so
// the caller computes its tie-break value and calls take.
func (p *picker) wants(score float64) bool {
	// score ≤ MaxFloat64 is false for NaN and +Inf (scores are ≥ 0).
	return score <= math.MaxFloat64 && (!p.ok || score <= p.minScore+tieEps)
}

// take reports whether the candidate replaces the current best, and records
// it if so.
func (p *picker) take(score, tie float64) bool {
	switch {
	case !p.ok || score < p.minScore-tieEps:
		p.minScore = score
	case score <= p.minScore+tieEps && tie < p.tie:
		p.minScore = min(p.minScore, score)
	default:
		p.minScore = min(p.minScore, score)
		return false
	}
	p.ok, p.score, p.tie = true, score, tie
	return true
}

// gainPair returns resistors rf, rg with 1 + rf/rg as close as the series
// allows to k > 1 (the non-inverting gain), both in the window, near its
// middle; and the exact values they were rounded from.
func (o *options) gainPair(k float64) (rf, rg, rfx, rgx float64, ok bool) {
	ratio := k - 1
	// rg must lie in [rmin, rmax] ∩ [rmin/ratio, rmax/ratio].
	lo := max(o.rmin, o.rmin/ratio)
	hi := min(o.rmax, o.rmax/ratio)
	if !(lo <= hi*(1+winTol)) {
		return 0, 0, 0, 0, false
	}
	ideal := o.rmid / math.Sqrt(ratio)
	rgx = math.Min(math.Max(ideal, lo), hi)
	if o.exact {
		return ratio * rgx, rgx, ratio * rgx, rgx, true
	}
	var p picker
	var c [3]float64
	// Search a decade either side of the ideal ground resistor.
	for g := range o.rs.Decades(max(lo, rgx/3.2), min(hi, rgx*3.2)) {
		x := ratio * g
		nc := o.rcands(x, &c)
		for _, f := range c[:nc] {
			s := errScore(1+f/g, k)
			if p.wants(s) && p.take(s, o.tieLog(f)+o.tieLog(g)) {
				rf, rg, rfx = f, g, x
			}
		}
	}
	if !p.ok {
		return 0, 0, 0, 0, false
	}
	return rf, rg, rfx, rg, true
}

// centred returns the resistance R for which R/d is nearest the middle of
// the window for every divisor d given (R itself counts, d = 1): the
// geometric middle of [rmin·max d, rmax·min d]. That range is empty when
// the ratios span more than the window, and the value is then a
// compromise that the window checks reject.
func (o *options) centred(divs ...float64) float64 {
	dmax, dmin := 1.0, 1.0
	for _, d := range divs {
		dmax, dmin = max(dmax, d), min(dmin, d)
	}
	return math.Sqrt(o.rmin * dmax * o.rmax * dmin)
}

// baseCands returns the values tried for a free base resistor centred at
// x: the series value nearest x and two neighbours on each side, those in
// the window (x alone when exact).
func (o *options) baseCands(x float64) []float64 {
	if o.exact {
		if o.inR(x) {
			return []float64{x}
		}
		return nil
	}
	out := make([]float64, 0, 5)
	below := o.rs.Nearest(x)
	for range 2 {
		below, _ = o.rs.Neighbours(below * (1 - 1e-6))
	}
	v := below
	for range 5 {
		if o.inR(v) {
			out = append(out, v)
		}
		_, v = o.rs.Neighbours(v * (1 + 1e-6))
	}
	return out
}

// ratioBase returns the lower resistor of a pair with the given ratio
// (upper/lower), placed so that the pair straddles the middle of the
// window, both inside it; a series value unless exact. ok is false when
// no such pair fits the window.
func (o *options) ratioBase(ratio float64) (float64, bool) {
	lo := max(o.rmin, o.rmin/ratio)
	hi := min(o.rmax, o.rmax/ratio)
	if !(lo <= hi*(1+winTol)) {
		return 0, false
	}
	x := math.Min(math.Max(o.rmid/math.Sqrt(ratio), lo), hi)
	if o.exact {
		return x, true
	}
	v := o.rs.Nearest(x)
	if v < lo*(1-winTol) || v > hi*(1+winTol) {
		below, above := o.rs.Neighbours(x)
		v = below
		if below < lo*(1-winTol) {
			v = above
		}
	}
	return v, o.inR(v)
}

// builder assembles a stage, numbering the parts in the order they are
// added.
type builder struct {
	o          *options
	st         circuit.Stage
	nr, nc, nu int
}

func newBuilder(o *options, top string) *builder {
	return &builder{o: o, st: circuit.Stage{Topology: top}}
}

// res adds a resistor of value v (exact design value x) between a and b.
func (b *builder) res(a, n string, v, x float64) {
	b.nr++
	b.st.Parts = append(b.st.Parts, circuit.Part{
		Ref: fmt.Sprintf("R%d", b.nr), Kind: circuit.Resistor, A: a, B: n,
		Value: v, Exact: x, Series: b.o.rname, TolerancePct: b.o.rtol,
	})
}

// capa adds a capacitor of series value v between a and b.
func (b *builder) capa(a, n string, v float64) {
	b.nc++
	b.st.Parts = append(b.st.Parts, circuit.Part{
		Ref: fmt.Sprintf("C%d", b.nc), Kind: circuit.Capacitor, A: a, B: n,
		Value: v, Exact: v, Series: b.o.cs.Name(), TolerancePct: b.o.ctol,
	})
}

// amp adds an op-amp.
func (b *builder) amp(plus, minus, out string) {
	b.nu++
	b.st.OpAmps = append(b.st.OpAmps, circuit.OpAmp{Ref: fmt.Sprintf("U%d", b.nu), Plus: plus, Minus: minus, Out: out})
}

// done sets the output node and returns the stage.
func (b *builder) done(out string) circuit.Stage {
	b.st.Out = out
	return b.st
}
