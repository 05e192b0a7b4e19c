package synth

import (
	"fmt"
	"math"
	"strings"

	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// takeUpGains keeps the chain's gain where the sections put it when a
// two-integrator-notch stage's gain is the capacitor ratio C3/C1 rather
// than its section's. For each such stage i whose gain is off by a factor
// x (Result.GainErrPct), another stage j is re-realised, with the same
// topology, at its section's gain divided by x, and both sections' gains
// move with their stages. j is the nearest stage before i when x > 1 and
// the nearest after i when x < 1, so that the stages between run lower
// than the gain distribution chose, never higher. A stage that can take
// it up is any but another two-integrator notch and an all-pass stage;
// a one-op-amp notch only when no other can (auto judged its tolerance
// residual at its own gain). When only the other direction has such a
// stage, stage i is re-realised with its gain on that side of the
// section's (topology.Options.TwoIntegratorGainShift), and where that does
// not fit as a state-variable stage (exact gain, four op-amps). Without
// any such stage the gain error stays, and the stage's reason says so. It
// changes ordered, results and d.Sections in place and returns, for each
// stage that took up a gain, the clause its reason ends with (the caller
// adds it after the polarity rule, which may re-realise that stage, and
// counts the inverting stages afterwards).
func (d *Design) takeUpGains(ordered []section.Section, results []topology.Result, opt topology.Options) map[int]string {
	notes := map[int]string{}
	// takers returns the stages that can take up stage i's gain, before
	// and after it, nearest first, one-op-amp notches last.
	takers := func(i int) (before, after []int) {
		var b1, a1 []int
		for j := i - 1; j >= 0; j-- {
			switch top := results[j].Stage.Topology; {
			case top == topology.OneAmpNotch:
				b1 = append(b1, j)
			case top != topology.TwoIntegratorNotch && !ordered[j].IsAllpass():
				before = append(before, j)
			}
		}
		for j := i + 1; j < len(results); j++ {
			switch top := results[j].Stage.Topology; {
			case top == topology.OneAmpNotch:
				a1 = append(a1, j)
			case top != topology.TwoIntegratorNotch && !ordered[j].IsAllpass():
				after = append(after, j)
			}
		}
		return append(before, b1...), append(after, a1...)
	}
	for i, r := range results {
		if r.Stage.Topology != topology.TwoIntegratorNotch || r.GainErrPct == 0 {
			continue
		}
		before, after := takers(i)
		if len(before) == 0 && len(after) == 0 {
			results[i].Reason += "; no other stage can take up the difference, so the chain's gain is off by as much"
			continue
		}
		x := 1 + r.GainErrPct/100
		if (x > 1 && len(before) == 0) || (x < 1 && len(after) == 0) {
			o := opt
			o.TwoIntegratorGainShift = 1
			if len(before) == 0 {
				o.TwoIntegratorGainShift = -1
			}
			redo, err := topology.Realize(ordered[i], topology.TwoIntegratorNotch, o)
			if err != nil {
				sv, err2 := topology.Realize(ordered[i], topology.StateVariable, opt)
				if err2 != nil {
					results[i].Reason += fmt.Sprintf("; no stage on the side that would keep the levels can take up the difference, and neither the two-integrator notch with its gain on the other side (%v) nor the state-variable stage (%v) fits, so the chain's gain is off by as much", err, err2)
					continue
				}
				sv.Reason = fmt.Sprintf("%s; but no stage %s it can take up its gain, a capacitor ratio %.3g dB off, and with its gain on the other side it does not fit (%v): state-variable (four op-amps) sets its gain by resistors: %s",
					strings.TrimSuffix(r.Reason, "."), map[bool]string{true: "before", false: "after"}[x > 1], 20*math.Log10(x), err, strings.TrimPrefix(sv.Reason, topology.StateVariable+" as asked: "))
				results[i] = sv
				continue
			}
			redo.Reason = r.Reason
			results[i] = redo
			x = 1 + redo.GainErrPct/100
			if x == 1 {
				continue
			}
		}
		order := before
		if x < 1 {
			order = after
		}
		taken := false
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
			lo, hi := min(i, j), max(i, j)
			for k := lo; k < hi; k++ {
				d.Sections[k].PeakGainDB -= math.Abs(20 * math.Log10(x))
			}
			results[i].Reason += fmt.Sprintf("; stage %d takes up the difference", j+1)
			taken = true
			break
		}
		if !taken {
			results[i].Reason += "; no other stage can take up the difference, so the chain's gain is off by as much"
		}
	}
	return notes
}
