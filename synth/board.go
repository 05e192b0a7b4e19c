package synth

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/standards/eseries"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/step"
)

// The board around the filter: the signal's extremes at every op-amp
// against the rails (Section.Swing), and the DC error at the output
// (Design.DC). Both read the one circuit model: the stages as built with
// the spec's op-amp, its parasitics included.
//
// Every ground connection of the filter is the reference on a board with
// a supply (the deck's node ref), so the circuit is linear around it: a
// node's voltage is the reference plus its DC error (the op-amps' offsets
// and bias currents, SwingNode.DCV) plus its small-signal voltage.

// Pin kinds of a SwingNode.
const (
	PinOutput = "output"
	PinInput  = "input"
)

// Swing is one section's signal extremes at its op-amps.
type Swing struct {
	// Nodes are the op-amp outputs and non-inverting inputs of the stage
	// (an input tied to the reference is left out), in the op-amps' order.
	Nodes []SwingNode `json:"nodes"`
	// HeadroomV is the least distance of any of them from its limit, in V,
	// negative when one passes it; nil without a supply.
	HeadroomV *float64 `json:"headroom_v"`
}

// SwingNode is the extremes of one node.
type SwingNode struct {
	// Node is the deck's node name ("s2_out"; the filter's output is
	// "out").
	Node string `json:"node"`
	// Ref is the op-amp the node belongs to, as on the BOM ("U201").
	Ref string `json:"ref"`
	// Pin is "output" (judged against the rails less the output headroom)
	// or "input" (the non-inverting input, against the rails less the
	// input headroom).
	Pin string `json:"pin"`
	// PeakV is [lowest, highest] voltage over SineV and StepV.
	PeakV [2]float64 `json:"peak_v"`
	// SineV is the extremes of a signal_vpp sine at the filter's input at
	// the frequency where this node's response peaks (GainMax).
	SineV [2]float64 `json:"sine_v"`
	// StepV is the extremes of the response to a step from reference −
	// signal_vpp/2 to reference + signal_vpp/2 (nil when the board as
	// built is unstable).
	StepV *[2]float64 `json:"step_v"`
	// DCV is the node's DC error from the op-amps' offsets and bias
	// currents (as Design.DC computes the output's): the sine and the step
	// swing around the reference plus DCV.
	DCV float64 `json:"dc_v"`
	// GainMax is the largest |V(node)/V(in)| over frequency, at PeakHz.
	GainMax float64 `json:"gain_max"`
	PeakHz  float64 `json:"peak_hz"`
	// LimitV is [lowest, highest] voltage the pin may reach; nil without a
	// supply.
	LimitV *[2]float64 `json:"limit_v"`
	// HeadroomV is the distance of PeakV inside LimitV (negative: beyond);
	// nil without a supply.
	HeadroomV *float64 `json:"headroom_v"`
}

// DCReport is the output's DC error: v(out) − reference with the source
// at the reference, from each op-amp's offset voltage and bias currents
// through the DC gains of the chain.
type DCReport struct {
	// OutputOffsetV is the signed error at the output, in V.
	OutputOffsetV float64 `json:"output_offset_v"`
	// OutputOffsetLSB is OutputOffsetV in LSB of the converter; nil
	// without one.
	OutputOffsetLSB *float64 `json:"output_offset_lsb"`
	// BudgetLSB is the dc-error check's limit: ½ LSB (there is no spec
	// field for it; a design that calibrates its offset out reads the
	// check as a warning, which it is); nil without a converter.
	BudgetLSB *float64 `json:"budget_lsb"`
	// Contributors are the op-amps' parts of OutputOffsetV, largest first.
	Contributors []DCContributor `json:"contributors"`
	// Balance suggests, where bias currents give most of the error, the
	// resistor that would cancel an op-amp's share.
	Balance []BalanceSuggestion `json:"balance"`
}

// DCContributor is one op-amp's part of the output's DC error.
type DCContributor struct {
	// Ref is the op-amp, as on the BOM.
	Ref string `json:"ref"`
	// Share is |V| over the sum of every contributor's |V|.
	Share float64 `json:"share"`
	// V is its signed part of DCReport.OutputOffsetV, OffsetV from its
	// offset voltage and BiasV from its bias currents.
	V       float64 `json:"v"`
	OffsetV float64 `json:"offset_v"`
	BiasV   float64 `json:"bias_v"`
}

// BalanceSuggestion is a bias-current balancing resistor for one op-amp:
// in series with its non-inverting input, it makes the bias current into
// that input cancel the other's effect at the output (for matched bias
// currents; the offset current between the two inputs, which the spec does
// not give, remains).
type BalanceSuggestion struct {
	// Ref is the op-amp.
	Ref string `json:"ref"`
	// ResistorOhm is the suggested value from the spec's resistor series;
	// ExactOhm the value that cancels exactly.
	ResistorOhm float64 `json:"resistor_ohm"`
	ExactOhm    float64 `json:"exact_ohm"`
	// Pin is the input the resistor goes in series with: "non-inverting"
	// or "inverting".
	Pin string `json:"pin"`
	// OutputOffsetV is the output's DC error with ResistorOhm in place.
	OutputOffsetV float64 `json:"output_offset_v"`
}

// dcBudgetLSB is the dc-error check's budget: ½ LSB.
const dcBudgetLSB = 0.5

// board fills every section's Swing and the design's DC report. It needs
// the as-built stages' transfer functions tfs, the same with each stage's
// output loaded by the next stage's input for the step (stepTFs:
// circuit.Loading.FirstOrder) and the step report's time grid (d.Step).
func (d *Design) board(ch circuit.Chain, tfs, stepTFs circuit.Cascade) error {
	if err := d.dcReport(ch); err != nil {
		return err
	}
	return d.swing(ch, tfs, stepTFs)
}

// pinAt is a node the swing lists: its stage-local name, its kind and
// the op-amp it belongs to.
type pinAt struct {
	local, pin, ref string
}

// swingPins lists a stage's op-amp non-inverting inputs (but those on the
// reference) and outputs (both of a fully differential op-amp), in the
// op-amps' order, and the stage's output
// when it is not an op-amp's (the converter's driver R–C after the last
// op-amp), under the op-amp that drives it: out is always listed.
func swingPins(st circuit.Stage) []pinAt {
	var pins []pinAt
	for _, u := range st.OpAmps {
		if u.Plus != circuit.Ground {
			pins = append(pins, pinAt{u.Plus, PinInput, u.Ref})
		}
		pins = append(pins, pinAt{u.Out, PinOutput, u.Ref})
		if u.FullyDifferential() {
			pins = append(pins, pinAt{u.OutN, PinOutput, u.Ref})
		}
	}
	// (A differential stage's Out is one of its FDA's outputs, its OutN
	// when the outputs are taken crossed.)
	if !slices.ContainsFunc(st.OpAmps, func(u circuit.OpAmp) bool { return u.Out == st.Out || u.FullyDifferential() && u.OutN == st.Out }) {
		ref := ""
		for _, part := range st.Parts {
			other := part.A
			if other == st.Out {
				other = part.B
			} else if part.B != st.Out {
				continue
			}
			for _, u := range st.OpAmps {
				if u.Out == other {
					ref = u.Ref
				}
			}
		}
		pins = append(pins, pinAt{st.Out, PinOutput, ref})
	}
	return pins
}

// reference returns the signal's zero, in V.
func (d *Design) reference() float64 {
	if p := d.Spec.Supply; p != nil {
		return p.ReferenceV
	}
	return 0
}

// swing computes each section's Swing: the gains from tfs and the
// loading, the step extremes from stepTFs (see board).
func (d *Design) swing(ch circuit.Chain, tfs, stepTFs circuit.Cascade) error {
	s := d.Spec
	ref := d.reference()
	amp := s.SignalVppV() / 2
	freq := d.Response.FreqHz
	var t []float64
	if d.Step != nil {
		t = d.Step.TimeS
	}
	// The gains are read at DC and on the response grid, each stage's
	// output loaded by the stages after it (circuit.Loading: exact), which
	// with an op-amp output resistance moves a node's gain by up to a
	// percent or two where the op-amps' loop gain runs out. The step
	// extremes take stepTFs: a single-ended stage's output as loaded by
	// the next stage's input where that matters (see verifyDesign), its
	// other nodes with its output open.
	load, err := ch.Loading()
	if err != nil {
		return fmt.Errorf("synth: swing: %w", err)
	}
	grid := append([]float64{0}, freq...)
	yl, fac := load.Sweep(grid)
	// up2[i] is the squared magnitude at grid[i] of the stages before the
	// current one, as loaded.
	up2 := make([]float64, len(grid))
	for i := range up2 {
		up2[i] = 1
	}
	var mag2 []float64      // scratch: one rational's |H|² on the grid
	var loaded2 [][]float64 // scratch: the loaded nodes' |V/V(In)|²
	var port []complex128   // scratch: a loaded output port's voltage
	var outMag2 []float64   // scratch: its |·|² at a single-ended Out
	var upSteps []step.Stage
	// The partial fractions of the stages before the current one, each
	// factored once (nil when one cannot be: the exact state space then).
	modal, _ := step.NewModal(nil)
	dcUp := 1.0
	// stable: no stage so far has a pole in the right half-plane (the
	// op-amps' gain-bandwidth can put one there). Past an unstable stage
	// the step grows without bound: its extremes are left out (StepV
	// nil), as the settling and built-mask checks already say why.
	stable := true
	for k, st := range ch.Stages {
		stage := k + 1
		for _, p := range stepTFs[k].Poles() {
			if !(real(p) < 0) {
				stable = false
			}
		}
		sw := &Swing{Nodes: []SwingNode{}}
		// The stage's listed nodes, and their transfers from its input in
		// one nodal interpolation (the output's is tfs[k]).
		pins := swingPins(st)
		var others []string
		// A differential stage's output transfer is V(Out) − V(OutN):
		// its output nodes take their own.
		for _, p := range pins {
			if (p.local != st.Out || st.Differential()) && !slices.Contains(others, p.local) {
				others = append(others, p.local)
			}
		}
		nodeTF := map[string]circuit.Rational{}
		nodeMag2 := map[string][]float64{}
		if !st.Differential() {
			nodeTF[st.Out] = tfs[k]
		}
		if load.Loaded(k) {
			// The output port's voltage as loaded, per unit input: a
			// single-ended stage's Out is that (its |·|² is the stage's
			// share of up2 below); the other nodes from their
			// transimpedances.
			if cap(port) < len(grid) {
				port = make([]complex128, len(grid))
			}
			port = port[:len(grid)]
			half := complex(1, 0)
			if st.Differential() {
				half = 0.5
			}
			for i, f := range grid {
				port[i] = tfs[k].AtHz(f) * fac[k][i] * half
			}
			m2, rs, err := st.LoadedNodeMag2(ch.Model, others, grid, yl[k], port, loaded2)
			if err == nil {
				loaded2 = m2
				for i, n := range others {
					nodeTF[n], nodeMag2[n] = rs[i], m2[i]
				}
				if !st.Differential() {
					outMag2 = outMag2[:0]
					for _, v := range port {
						outMag2 = append(outMag2, real(v)*real(v)+imag(v)*imag(v))
					}
					nodeMag2[st.Out] = outMag2
				}
				others = nil
			}
		}
		if len(others) > 0 {
			rs, err := st.NodeTransferFunctions(ch.Model, others)
			if err != nil {
				return fmt.Errorf("synth: swing at stage %d: %w", stage, err)
			}
			for i, n := range others {
				nodeTF[n] = rs[i]
			}
		}
		for _, p := range pins {
			r := nodeTF[p.local]
			n := SwingNode{Node: ch.Node(stage, p.local), Ref: ch.Ref(stage, p.ref), Pin: p.pin}
			// At DC first: the response grid starts above it.
			m2 := nodeMag2[p.local]
			if m2 == nil {
				mag2 = r.Mag2Hz(mag2, grid)
				m2 = mag2
			}
			g2 := up2[0] * m2[0]
			for i := 1; i < len(grid); i++ {
				if v := up2[i] * m2[i]; v > g2 {
					g2, n.PeakHz = v, grid[i]
				}
			}
			n.GainMax = math.Sqrt(g2)
			n.DCV = d.nodeDC[n.Node]
			mid := ref + n.DCV // the node's DC level: the reference and its offset
			n.SineV = [2]float64{mid - amp*n.GainMax, mid + amp*n.GainMax}
			n.PeakV = n.SineV
			if len(t) > 1 && stable {
				// A single-ended stage's output takes the stage as loaded
				// by the next one's input (circuit.Loading.FirstOrder);
				// its other nodes the stage with its output open.
				rs := r
				if p.local == st.Out && !st.Differential() {
					rs = stepTFs[k]
				}
				last := step.FromRational(rs)
				respond := func(ts []float64) ([]float64, error) {
					err := errors.New("no modal model")
					var y []float64
					if modal != nil {
						y, err = modal.With(last, ts)
					}
					if err != nil {
						// Exact where partial fractions are not.
						y, err = step.Response(append(slices.Clone(upSteps), last), ts)
					}
					if err == nil && !allFinite(y) {
						err = errors.New("not finite")
					}
					return y, err
				}
				// The finer searches take the partial fractions only: where
				// they are ill-conditioned (early times in a long chain) the
				// exact state space would cost more than the whole grid did,
				// and the grid's extremes stand.
				refine := func(ts []float64) ([]float64, error) {
					if modal == nil {
						return nil, errors.New("no modal model")
					}
					y, err := modal.With(last, ts)
					if err == nil && !allFinite(y) {
						err = errors.New("not finite")
					}
					return y, err
				}
				ymin, ymax, err := stepExtremes(respond, refine, t)
				if err == nil {
					h0 := dcUp * real(rs.At(0))
					lo, hi := mid-amp*h0, mid-amp*h0
					lo = math.Min(lo, mid-amp*h0+2*amp*ymin)
					hi = math.Max(hi, mid-amp*h0+2*amp*ymax)
					if isFinite(lo) && isFinite(hi) {
						n.StepV = &[2]float64{lo, hi}
						n.PeakV = [2]float64{math.Min(n.PeakV[0], lo), math.Max(n.PeakV[1], hi)}
					}
				}
			}
			if p := s.Supply; p != nil {
				hd := s.OpAmp.OutputHeadroomV
				if n.Pin == PinInput {
					hd = s.OpAmp.InputHeadroomV
				}
				lim := [2]float64{p.NegativeV + hd, p.PositiveV - hd}
				room := math.Min(lim[1]-n.PeakV[1], n.PeakV[0]-lim[0])
				n.LimitV, n.HeadroomV = &lim, &room
				if sw.HeadroomV == nil || room < *sw.HeadroomV {
					sw.HeadroomV = &room
				}
			}
			sw.Nodes = append(sw.Nodes, n)
		}
		d.Sections[k].Swing = sw
		mag2 = tfs[k].Mag2Hz(mag2, grid)
		for i := range up2 {
			up2[i] *= mag2[i]
			if fac != nil {
				f := fac[k][i]
				up2[i] *= real(f)*real(f) + imag(f)*imag(f)
			}
		}
		upSteps = append(upSteps, step.FromRational(stepTFs[k]))
		if modal != nil && modal.Extend(upSteps[k]) != nil {
			modal = nil
		}
		dcUp *= real(stepTFs[k].At(0))
	}
	return nil
}

// stepExtremes returns the least and greatest values of a step response
// that respond evaluates at non-decreasing times, from the grid t, then
// searched finer, through refine (a cheaper evaluation that may decline:
// the extremes found so far then stand), round the grid's extremes: the
// grid spans the settling, and a bandpass's step rings at its centre
// frequency, a period of some ten grid points, where the grid alone read
// a peak 1.8 % low. Where the response has already moved within the
// grid's first interval (by more than stepEarlyMove of its span on the
// grid) it also searches that first interval on a logarithmic grid from
// t[1]·1e-5: behind a highpass, a step's edge reaches the op-amps' own
// fast response, which peaks within about 1/GBW, long before the grid's
// first point. A response that has barely moved by t[1] (a lowpass's) has
// no such peak there; that test is a rule of this program, not a bound.
func stepExtremes(respond, refine func([]float64) ([]float64, error), t []float64) (ymin, ymax float64, err error) {
	y, err := respond(t)
	if err != nil {
		return 0, 0, err
	}
	kmin, kmax := argExtremes(y)
	ymin, ymax = y[kmin], y[kmax]
	early := math.Abs(y[1]-y[0]) > stepEarlyMove*(ymax-ymin)
	// search evaluates ts and widens the extremes; when refine declines,
	// the extremes so far stand. It returns the times of the extremes found.
	search := func(ts []float64) (tmin, tmax float64, ok bool) {
		slices.Sort(ts)
		ye, err := refine(ts)
		if err != nil {
			return 0, 0, false
		}
		jmin, jmax := argExtremes(ye)
		ymin, ymax = math.Min(ymin, ye[jmin]), math.Max(ymax, ye[jmax])
		return ts[jmin], ts[jmax], true
	}
	// linear appends stepFinePoints times evenly from a to b.
	linear := func(ts []float64, a, b float64) []float64 {
		for i := range stepFinePoints {
			ts = append(ts, a+(b-a)*float64(i)/(stepFinePoints-1))
		}
		return ts
	}
	// Round the grid's extremes (t = 0 is exact: the step has not begun).
	fine := make([]float64, 0, 2*stepFinePoints)
	for _, k := range []int{kmin, kmax} {
		if k > 0 {
			fine = linear(fine, t[k-1], t[min(k+1, len(t)-1)])
		}
	}
	if len(fine) > 0 {
		search(fine)
	}
	if !early {
		// Not moved by the grid's first point: no fast peak before it.
		return ymin, ymax, nil
	}
	// The first interval, t[1]·1e-5 … t[1] on a logarithmic grid, then
	// once more between the neighbours of what was found there.
	fine = fine[:0]
	for i := range 2 * stepFinePoints {
		fine = append(fine, t[1]*math.Pow(10, -5+5*float64(i)/(2*stepFinePoints-1)))
	}
	if tmin, tmax, ok := search(fine); ok {
		r := math.Pow(10, 5.0/(2*stepFinePoints-1))
		fine = linear(fine[:0], tmin/r, math.Min(tmin*r, t[1]))
		fine = linear(fine, tmax/r, math.Min(tmax*r, t[1]))
		search(fine)
	}
	return ymin, ymax, nil
}

// argExtremes returns the indices of the first least and the first
// greatest value of y (0, 0 for an empty y).
func argExtremes(y []float64) (kmin, kmax int) {
	for i, v := range y {
		if v < y[kmin] {
			kmin = i
		}
		if v > y[kmax] {
			kmax = i
		}
	}
	return kmin, kmax
}

// stepFinePoints is the number of times of each finer search of the step's
// extremes (twice that on the logarithmic grid of the first interval).
const stepFinePoints = 24

// stepEarlyMove is the share of its span on the grid by which a step
// response must have moved within the grid's first interval for that
// interval to be searched finer (a rule of this program).
const stepEarlyMove = 1e-3

func allFinite(y []float64) bool {
	for _, v := range y {
		if !isFinite(v) {
			return false
		}
	}
	return true
}

// dcReport computes d.DC: each op-amp's offset (a source in series with
// its non-inverting input) and bias currents (from each input that is not
// ground, into the op-amp) reach its stage's output through the stage's
// DC source transfers, then the output through the DC gains of the later
// stages.
func (d *Design) dcReport(ch circuit.Chain) error {
	m := ch.Model
	rep := &DCReport{Contributors: []DCContributor{}, Balance: []BalanceSuggestion{}}
	type amp struct {
		ref     string
		offsetV float64 // at the output
		biasV   float64
		plusV   float64 // output per volt at the + input
	}
	var amps []amp
	// The stages' DC gains, by a direct solve at s = 0.
	dcGains := make([]float64, len(ch.Stages))
	for k, st := range ch.Stages {
		g, err := st.SolveAt(m, 0)
		if err != nil {
			return fmt.Errorf("synth: DC gain of stage %d: %w", k+1, err)
		}
		dcGains[k] = real(g)
	}
	for k, st := range ch.Stages {
		later := 1.0
		for _, later1 := range dcGains[k+1:] {
			later *= later1
		}
		var srcs []circuit.Source
		for q, u := range st.OpAmps {
			srcs = append(srcs, circuit.Source{OpAmp: q + 1})
			for _, node := range []string{u.Plus, u.Minus} {
				if node != circuit.Ground {
					srcs = append(srcs, circuit.Source{To: circuit.Ground, From: node})
				}
			}
		}
		tr, err := st.DCSourceTransfers(m, srcs)
		if err != nil {
			return fmt.Errorf("synth: DC error, stage %d: %w", k+1, err)
		}
		dc := func(i int) float64 { return tr[i] }
		i := 0
		for _, u := range st.OpAmps {
			a := amp{ref: ch.Ref(k+1, u.Ref)}
			a.plusV = dc(i) * later
			a.offsetV = m.OffsetV * a.plusV
			i++
			for _, node := range []string{u.Plus, u.Minus} {
				if node != circuit.Ground {
					a.biasV += m.BiasA * dc(i) * later
					i++
				}
			}
			amps = append(amps, a)
		}
	}
	var sumAbs float64
	for _, a := range amps {
		v := a.offsetV + a.biasV
		rep.OutputOffsetV += v
		sumAbs += math.Abs(v)
		rep.Contributors = append(rep.Contributors, DCContributor{Ref: a.ref, V: finiteOr(v, 0), OffsetV: finiteOr(a.offsetV, 0), BiasV: finiteOr(a.biasV, 0)})
	}
	if !isFinite(rep.OutputOffsetV) {
		return fmt.Errorf("synth: DC error: a stage has no DC solution (a node without a DC path)")
	}
	for i := range rep.Contributors {
		if sumAbs > 0 {
			rep.Contributors[i].Share = math.Abs(rep.Contributors[i].V) / sumAbs
		}
	}
	slices.SortStableFunc(rep.Contributors, func(x, y DCContributor) int { return cmp.Compare(y.Share, x.Share) })
	// Balancing: where an op-amp's bias currents give at least half of
	// the error, the resistor R in series with its + input that cancels
	// them: the bias current into + through R lowers V(+) by Ib·R.
	series, _ := eseries.Lookup(d.Spec.ResistorSeries)
	for _, a := range amps {
		if m.BiasA == 0 || sumAbs == 0 || math.Abs(a.biasV) < 0.5*sumAbs || a.plusV == 0 {
			continue
		}
		// In series with +, R lowers V(+) by Ib·R; in series with −, it
		// lowers V(−) by Ib·R, which the output sees as +Ib·R at +.
		exact, pin := a.biasV/(m.BiasA*a.plusV), "non-inverting"
		if exact < 0 {
			exact, pin = -exact, "inverting"
		}
		if !(exact > 0) || exact > d.Spec.ResistorRangeOhm[1] {
			continue
		}
		r := exact
		if series.Len() > 0 {
			r = series.Nearest(exact)
		}
		sign := 1.0
		if pin == "inverting" {
			sign = -1
		}
		rep.Balance = append(rep.Balance, BalanceSuggestion{Ref: a.ref, ResistorOhm: r, ExactOhm: exact, Pin: pin,
			OutputOffsetV: rep.OutputOffsetV - sign*m.BiasA*r*a.plusV})
	}
	if c := d.Spec.Converter; c != nil {
		lsb := c.FullScaleVpp / math.Exp2(float64(c.Bits))
		rep.OutputOffsetLSB = finitePtr(rep.OutputOffsetV / lsb)
		b := float64(dcBudgetLSB)
		rep.BudgetLSB = &b
	}
	d.DC = rep
	return d.nodeOffsets(ch)
}

// nodeOffsets fills d.nodeDC: the DC error of every node the swing lists,
// stage by stage, from the stage input's (the previous output's) through
// the node's DC gain and the stage's own sources, by one factorization of
// each stage's nodal matrix at s = 0.
func (d *Design) nodeOffsets(ch circuit.Chain) error {
	m := ch.Model
	d.nodeDC = map[string]float64{}
	offIn := 0.0
	for k, st := range ch.Stages {
		var srcs []circuit.Source
		var vals []float64
		for q, u := range st.OpAmps {
			srcs = append(srcs, circuit.Source{OpAmp: q + 1})
			vals = append(vals, m.OffsetV)
			for _, node := range []string{u.Plus, u.Minus} {
				if node != circuit.Ground {
					srcs = append(srcs, circuit.Source{To: circuit.Ground, From: node})
					vals = append(vals, m.BiasA)
				}
			}
		}
		// The next stage's input: Out, or a differential stage's
		// V(Out) − V(OutN) (its first node here, not a node of the chain).
		nodes := []string{st.Out}
		if st.Differential() {
			nodes[0] = circuit.DiffOut
		}
		for _, p := range swingPins(st) {
			if !slices.Contains(nodes, p.local) {
				nodes = append(nodes, p.local)
			}
		}
		fromIn, per, err := st.DCNodeTransfers(m, srcs, nodes)
		if err != nil {
			return fmt.Errorf("synth: DC error, stage %d: %w", k+1, err)
		}
		var next float64
		for i, node := range nodes {
			v := fromIn[i] * offIn
			for j, x := range vals {
				v += per[i][j] * x
			}
			if i == 0 {
				next = finiteOr(v, 0)
			}
			if node != circuit.DiffOut {
				d.nodeDC[ch.Node(k+1, node)] = finiteOr(v, 0)
			}
		}
		offIn = next
	}
	return nil
}
