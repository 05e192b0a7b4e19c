package synth

import (
	"fmt"
	"math"
	"strings"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// maxUntakenGainDB is the largest gain error a two-integrator notch may
// leave in the chain when no other stage can take it up (our choice: the
// order of the rounding of a capacitor ratio from E12 values, and of the
// gain errors resistor ratios leave in the other stages); beyond it the
// section is built as a state-variable stage.
const maxUntakenGainDB = 0.25

// negligibleGainErrPct is the largest gain error, in per cent, that
// takeUpGains leaves alone as rounding: 1e-9 relative (about 1e-8 dB), the
// bound below which the two-integrator notch's reason does not mention its
// gain either.
const negligibleGainErrPct = 1e-7

// takeUpGains keeps the chain's gain where the sections put it when a
// two-integrator-notch stage's gain is the capacitor ratio C3/C1 rather
// than its section's. For a stage i whose gain is off by a factor x
// (Result.GainErrPct), another stage j is re-realised, with the same
// topology, at its section's gain divided by x, and both sections' gains
// move with their stages. j is the nearest stage before i when x > 1 and
// the nearest after i when x < 1, so that the stages between run lower
// than the gain distribution chose, never higher. A stage that can take
// it up is any but another two-integrator notch and an all-pass stage;
// one-op-amp notches come last (auto judged their tolerance residual at
// their own gain, and their search is the costliest). When only the other
// side has such a stage, stage i is first re-realised with its gain on
// that side of the section's (topology.Options.TwoIntegratorGainShift);
// where nothing fits, it becomes a state-variable stage (gain set by
// resistors, four op-amps). Without any such stage a gain error within
// maxUntakenGainDB stays, and the stage's reason says so; a larger one
// makes it a state-variable stage too. It changes ordered, results and
// d.Sections in place and returns, for each stage that took up a gain,
// the clause its reason ends with (the caller adds it after the polarity
// rule, which may re-realise that stage, and counts the inverting stages
// afterwards).
func (d *Design) takeUpGains(ordered []section.Section, results []topology.Result, opt topology.Options) map[int]string {
	notes := map[int]string{}
	// takers returns the stages before and after i, nearest first, that
	// can take up its gain: plain ones (0) and one-op-amp notches (1).
	takers := func(i int) (b0, a0, b1, a1 []int) {
		add := func(j int, plain, one *[]int) {
			switch top := results[j].Stage.Topology; {
			case top == topology.OneAmpNotch:
				*one = append(*one, j)
			case top != topology.TwoIntegratorNotch && !ordered[j].IsAllpass():
				*plain = append(*plain, j)
			}
		}
		for j := i - 1; j >= 0; j-- {
			add(j, &b0, &b1)
		}
		for j := i + 1; j < len(results); j++ {
			add(j, &a0, &a1)
		}
		return b0, a0, b1, a1
	}
	// take re-realises the first of order that fits with its gain
	// divided by x and moves the gains; it reports whether one did.
	take := func(i int, x float64, order []int) bool {
		for _, j := range order {
			sec := ordered[j]
			sec.Gain /= x
			top := results[j].Stage.Topology
			rj, err := topology.Realize(sec, top, opt)
			if err != nil || rj.Inverting != results[j].Inverting {
				continue
			}
			rj.Reason = results[j].Reason
			notes[j] += fmt.Sprintf("; its gain is %.3g dB lower to take up stage %d's (a two-integrator notch, whose gain is a capacitor ratio)", 20*math.Log10(x), i+1)
			results[j] = rj
			ordered[j] = sec
			ordered[i].Gain *= x
			d.Sections[j].sec, d.Sections[i].sec = ordered[j], ordered[i]
			d.Sections[j].GainDB = 20 * math.Log10(ordered[j].ReferenceGain())
			d.Sections[i].GainDB = 20 * math.Log10(ordered[i].ReferenceGain())
			// The stages from the earlier of the two up to the later one
			// (not included) carry less gain.
			for k := min(i, j); k < max(i, j); k++ {
				d.Sections[k].PeakGainDB -= math.Abs(20 * math.Log10(x))
			}
			results[i].Reason += fmt.Sprintf("; stage %d takes up the difference", j+1)
			return true
		}
		return false
	}
	// flip re-realises stage i with its gain on the side dir (+1 above
	// the section's, −1 below) and returns its new factor.
	flip := func(i, dir int) (float64, bool) {
		o := opt
		o.TwoIntegratorGainShift = dir
		r, err := topology.Realize(ordered[i], topology.TwoIntegratorNotch, o)
		if err != nil {
			return 0, false
		}
		r.Reason = results[i].Reason
		results[i] = r
		return 1 + r.GainErrPct/100, true
	}
	for i, r := range results {
		// A gain error of rounding size (exact values: the capacitor
		// ratio is the gain to about 1e-15) is none: taking it up only
		// wrote "−5.8e-15 dB lower" into a reason, or not, as an ulp fell.
		if r.Stage.Topology != topology.TwoIntegratorNotch || math.Abs(r.GainErrPct) <= negligibleGainErrPct {
			continue
		}
		b0, a0, b1, a1 := takers(i)
		x := 1 + r.GainErrPct/100
		// The side whose stages keep the levels (before for x > 1), its
		// other, and the gain side (for flip) that suits each.
		right0, other0, right1, other1, otherDir := b0, a0, b1, a1, -1
		if x < 1 {
			right0, other0, right1, other1, otherDir = a0, b0, a1, b1, 1
		}
		done := false
		switch {
		case len(right0) > 0:
			done = take(i, x, right0)
		case len(other0) > 0:
			if nx, ok := flip(i, otherDir); ok {
				done = nx == 1 || take(i, nx, other0)
			}
		}
		if nx := 1 + results[i].GainErrPct/100; !done && len(right1) > 0 && (nx-1)*(x-1) > 0 {
			done = take(i, nx, right1)
		}
		if !done && len(other1) > 0 && len(right1) == 0 {
			if nx, ok := flip(i, otherDir); ok {
				done = nx == 1 || take(i, nx, other1)
			}
		}
		if done {
			continue
		}
		if len(b0)+len(a0)+len(b1)+len(a1) == 0 && math.Abs(20*math.Log10(x)) <= maxUntakenGainDB {
			results[i].Reason += "; no other stage can take up the difference, so the chain's gain is off by as much"
			continue
		}
		sv, err := topology.Realize(ordered[i], topology.StateVariable, opt)
		if err != nil {
			results[i].Reason += fmt.Sprintf("; no stage can take up the difference where it keeps the levels, nor does the state-variable stage fit (%v), so the chain's gain is off by as much", err)
			continue
		}
		sv.Reason = fmt.Sprintf("%s; but no stage can take up its gain, a capacitor ratio %.3g dB off, where it keeps the levels: state-variable (four op-amps) sets its gain by resistors: %s",
			r.Reason, 20*math.Log10(x), strings.TrimPrefix(sv.Reason, topology.StateVariable+" as asked: "))
		results[i] = sv
	}
	return notes
}
