package explore

import (
	"encoding/json"
	"fmt"
	"math"
	"net/url"
	"slices"
	"strings"

	"github.com/polewright/polewright/synth"
)

// openBandFactor is how far an open passband is taken for the group
// delay's spread: up to 100 × its edge, as the acceptance rule judges it.
const openBandFactor = 100

// Figures returns the candidate figures of design d, each read from the
// design as its JSON carries it; Permalink and TargetReached are left for
// the caller.
func Figures(d *synth.Design) Candidate {
	s := d.Spec
	c := Candidate{
		Approximation: s.Approximation, Order: d.Order, Topology: s.Topology, ResistorSeries: s.ResistorSeries,
		DesignMargin: s.DesignMargin, MeetsMask: d.MeetsMask,
	}
	if d.Built != nil {
		c.BuiltMeetsMask = d.Built.MeetsMask
	}
	if d.MonteCarlo != nil {
		y := d.MonteCarlo.Yield
		c.Yield = &y
	}
	var gbw, slew *float64
	for _, sec := range d.Sections {
		c.OpAmps += len(sec.OpAmps)
		c.PassiveParts += len(sec.Components)
		if n := sec.OpAmpNeeds; n != nil {
			gbw = maxPtr(gbw, n.GBWHz)
			slew = maxPtr(slew, &n.SlewVPerS)
		}
	}
	c.GBWNeededHz, c.SlewNeededVPerS = gbw, slew
	if d.Noise != nil && d.Noise.SampledRMSV != nil {
		v := *d.Noise.SampledRMSV
		c.SampledRMSV = &v
	}
	if d.Step != nil && d.Step.SettlingS != nil {
		v := *d.Step.SettlingS
		c.SettlingS = &v
	}
	c.GroupDelaySpreadS = GroupDelaySpreadS(d)
	return c
}

func maxPtr(a, b *float64) *float64 {
	if b == nil || math.IsNaN(*b) {
		return a
	}
	if a == nil || *b > *a {
		v := *b
		return &v
	}
	return a
}

// GroupDelaySpreadS returns the largest minus the smallest group delay of
// d's ideal response (response.group_delay_s) at the grid points inside
// the passband: a lowpass's from the grid's start (near 0 Hz), an open
// band up to 100 × its edge. Nil when no grid point lies in the passband.
func GroupDelaySpreadS(d *synth.Design) *float64 {
	s := d.Spec
	p := s.PassbandHz
	in := func(f float64) bool {
		switch s.Response {
		case synth.Highpass:
			return f >= p[0] && f <= openBandFactor*p[0]
		case synth.Bandpass:
			return f >= p[0] && f <= p[1]
		case synth.Bandstop:
			return f <= p[0] || (f >= p[1] && f <= openBandFactor*p[1])
		}
		return f <= p[0]
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, f := range d.Response.FreqHz {
		if in(f) {
			g := d.Response.GroupDelayS[i]
			lo, hi = math.Min(lo, g), math.Max(hi, g)
		}
	}
	if lo > hi {
		return nil
	}
	v := hi - lo
	return &v
}

// Query writes the spec JSON object raw (as decoded with UseNumber) as a
// page query: every field by its name, a nested object's fields joined to
// it with "_" (design_margin_passband_db, opamp_gbw_hz), band edges as
// "lo,hi", true and false as 1 and 0; names sorted.
func Query(raw map[string]any) string {
	vals := map[string]string{}
	flatten(vals, "", raw)
	names := make([]string, 0, len(vals))
	for k := range vals {
		names = append(names, k)
	}
	slices.Sort(names)
	var b strings.Builder
	for _, k := range names {
		if b.Len() > 0 {
			b.WriteByte('&')
		}
		b.WriteString(url.QueryEscape(k))
		b.WriteByte('=')
		b.WriteString(strings.ReplaceAll(url.QueryEscape(vals[k]), "%2C", ","))
	}
	return b.String()
}

func flatten(dst map[string]string, prefix string, obj map[string]any) {
	for k, v := range obj {
		name := k
		if prefix != "" {
			name = prefix + "_" + k
		}
		switch v := v.(type) {
		case map[string]any:
			flatten(dst, name, v)
		case nil:
		default:
			dst[name] = text(v)
		}
	}
}

func text(v any) string {
	switch v := v.(type) {
	case bool:
		if v {
			return "1"
		}
		return "0"
	case []any:
		parts := make([]string, len(v))
		for i, e := range v {
			parts[i] = text(e)
		}
		return strings.Join(parts, ",")
	case json.Number:
		return v.String()
	case string:
		return v
	}
	return fmt.Sprint(v)
}

// value returns c's figure named field as a number (true: 1, false: 0)
// and whether it is there.
func value(c Candidate, field string) (float64, bool) {
	ptr := func(p *float64) (float64, bool) {
		if p == nil {
			return 0, false
		}
		return *p, true
	}
	b := func(v bool) float64 {
		if v {
			return 1
		}
		return 0
	}
	switch field {
	case "meets_mask":
		return b(c.MeetsMask), true
	case "built_meets_mask":
		return b(c.BuiltMeetsMask), true
	case "yield":
		return ptr(c.Yield)
	case "opamps":
		return float64(c.OpAmps), true
	case "passive_parts":
		return float64(c.PassiveParts), true
	case "order":
		return float64(c.Order), true
	case "gbw_needed_hz":
		return ptr(c.GBWNeededHz)
	case "slew_needed_v_per_s":
		return ptr(c.SlewNeededVPerS)
	case "sampled_rms_v":
		return ptr(c.SampledRMSV)
	case "group_delay_spread_s":
		return ptr(c.GroupDelaySpreadS)
	case "settling_s":
		return ptr(c.SettlingS)
	}
	panic("explore: unknown objective field " + field)
}

// compare returns +1 when a is better than b under o, −1 when worse and
// 0 when equal; a null figure is the worst (two nulls are equal).
func compare(a, b Candidate, o Objective) int {
	va, oka := value(a, o.Field)
	vb, okb := value(b, o.Field)
	switch {
	case !oka && !okb:
		return 0
	case !oka:
		return -1
	case !okb:
		return 1
	case va == vb:
		return 0
	case (va < vb) == (o.Goal == "min"):
		return 1
	}
	return -1
}

// Dominates reports whether a dominates b under objs: no worse in any
// objective and better in at least one.
func Dominates(a, b Candidate, objs []Objective) bool {
	better := false
	for _, o := range objs {
		switch compare(a, b, o) {
		case -1:
			return false
		case 1:
			better = true
		}
	}
	return better
}

// ParetoSet returns the indices, ascending, of the candidates no other
// candidate dominates under objs. It panics on an objective whose field
// is not a candidate figure.
func ParetoSet(cs []Candidate, objs []Objective) []int {
	out := []int{}
	for i := range cs {
		dominated := false
		for j := range cs {
			if j != i && Dominates(cs[j], cs[i], objs) {
				dominated = true
				break
			}
		}
		if !dominated {
			out = append(out, i)
		}
	}
	return out
}

// recommend picks from the Pareto set by, in turn: the board as built
// meets the mask; with a target, the yield reaches it; the fewest
// op-amps; the highest yield; the fewest passive parts; the lowest GBW
// needed; the first listed. It returns the index and a sentence saying
// why.
func recommend(cs []Candidate, pareto []int, target *float64) (int, string) {
	reaches := func(c Candidate) bool { return target != nil && c.Yield != nil && *c.Yield >= *target }
	rules := []struct {
		better func(a, b Candidate) bool
	}{
		{func(a, b Candidate) bool { return a.BuiltMeetsMask && !b.BuiltMeetsMask }},
		{func(a, b Candidate) bool { return reaches(a) && !reaches(b) }},
		{func(a, b Candidate) bool { return a.OpAmps < b.OpAmps }},
		{func(a, b Candidate) bool { return compare(a, b, Objective{"yield", "max"}) > 0 }},
		{func(a, b Candidate) bool { return a.PassiveParts < b.PassiveParts }},
		{func(a, b Candidate) bool { return compare(a, b, Objective{"gbw_needed_hz", "min"}) > 0 }},
	}
	best := pareto[0]
	for _, i := range pareto[1:] {
		for _, r := range rules {
			if r.better(cs[i], cs[best]) {
				best = i
				break
			}
			if r.better(cs[best], cs[i]) {
				break
			}
		}
	}
	c := cs[best]
	var why []string
	if c.BuiltMeetsMask {
		why = append(why, "its board as built meets the mask")
	} else {
		why = append(why, "no candidate on the front meets the mask as built (a design_margin, a target_yield, tighter parts or a faster op-amp may change that), so it is the best of those that do not")
	}
	if target != nil {
		if reaches(c) {
			why = append(why, fmt.Sprintf("its yield %.3g reaches the target %.3g with a design margin of %.4g dB (passband) and %.4g dB (stopband)",
				*c.Yield, *target, c.DesignMargin.PassbandDB, c.DesignMargin.StopbandDB))
		} else {
			why = append(why, fmt.Sprintf("no candidate on the front reaches the target yield %.3g", *target))
		}
	}
	fewest := 0
	for _, i := range pareto {
		o := cs[i]
		if o.BuiltMeetsMask == c.BuiltMeetsMask && reaches(o) == reaches(c) && o.OpAmps == c.OpAmps {
			fewest++
		}
	}
	why = append(why, fmt.Sprintf("of those it takes the fewest op-amps (%d)", c.OpAmps))
	if fewest > 1 {
		y := "no yield figure"
		if c.Yield != nil {
			y = fmt.Sprintf("yield %.3g", *c.Yield)
		}
		why = append(why, fmt.Sprintf("among the %d with that many, the highest yield (%s), then the fewest passive parts (%d) decide", fewest, y, c.PassiveParts))
	}
	reason := fmt.Sprintf("%s %s order %d, %s, %s resistors: of the %d candidates on the Pareto front, %s.",
		approxName(c.Approximation), "", c.Order, c.Topology, c.ResistorSeries, len(pareto), strings.Join(why, "; "))
	return best, strings.Join(strings.Fields(reason), " ")
}

// approxName is the approximation's name as a sentence starts it.
func approxName(a string) string {
	switch a {
	case "butterworth":
		return "Butterworth"
	case "chebyshev1":
		return "Chebyshev I"
	case "chebyshev2":
		return "Chebyshev II"
	case "bessel":
		return "Bessel"
	case "elliptic":
		return "Elliptic"
	}
	return a
}
