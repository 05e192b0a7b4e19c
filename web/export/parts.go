package export

import (
	"cmp"
	"encoding/csv"
	"io"
	"slices"
	"strconv"
	"strings"

	"github.com/polewright/polewright/standards/si"
	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// PartsHeader is the header row of the grouped part list (export kind
// parts).
const PartsHeader = "quantity,kind,value,unit,display,series,tolerance,dielectric,refs,gbw_needed_hz,slew_needed_v_per_s,noise_assumed_v_per_rthz"

// CapacitorDielectric is the dielectric the part list names for every
// capacitor: class 1 ceramic, whose value hardly moves with voltage,
// temperature or time (common practice for filter capacitors; film, PP or
// PPS, is the usual choice where C0G is not made at the value).
const CapacitorDielectric = "C0G/NP0"

// partGroup is one row of the part list: the parts that share kind,
// value, series and tolerance.
type partGroup struct {
	kind          circuit.PartKind
	valueUnit     float64
	series, tol   string
	refs          []string
	tolerancePct  float64
	unit, display string
}

// writeParts writes the grouped part list of d as CSV: [PartsHeader], one
// row per kind, value, series and tolerance with its quantity and
// designators (resistors, then capacitors, each by value), then one row
// for the op-amps and one for the fully differential op-amps (kind fda),
// each when there are any: their count, the GBW of the spec's model, the largest
// gain-bandwidth and slew rate any stage needs (Section.OpAmpNeeds; empty
// when some stage needs more than 1 THz) and the input noise density the
// design's noise figures assume (the spec's opamp.noise_v_per_rthz).
// Values are plain decimals, never with an exponent, as in the BOM.
func writeParts(w io.Writer, d *synth.Design) error {
	ch, err := d.Chain()
	if err != nil {
		return err
	}
	var groups []*partGroup
	opamps := 0
	for k, st := range ch.Stages {
		opamps += len(st.OpAmps)
		for _, p := range st.Parts {
			series := p.Series
			if series == "" {
				series = "exact"
			}
			var g *partGroup
			for _, h := range groups {
				if h.kind == p.Kind && h.valueUnit == p.Value && h.series == series && h.tolerancePct == p.TolerancePct {
					g = h
				}
			}
			if g == nil {
				g = &partGroup{kind: p.Kind, valueUnit: p.Value, series: series, tolerancePct: p.TolerancePct, unit: "Ohm", display: si.Format(p.Value, "Ω", circuit.DisplayDigits)}
				if p.Kind == circuit.Capacitor {
					g.unit, g.display = "F", si.Format(p.Value, "F", circuit.DisplayDigits)
				}
				if p.TolerancePct != 0 {
					g.tol = strconv.FormatFloat(p.TolerancePct, 'f', -1, 64) + "%"
				}
				groups = append(groups, g)
			}
			g.refs = append(g.refs, ch.Ref(k+1, p.Ref))
		}
	}
	slices.SortStableFunc(groups, func(a, b *partGroup) int {
		return cmp.Or(cmp.Compare(kindRank(a.kind), kindRank(b.kind)), cmp.Compare(a.valueUnit, b.valueUnit),
			strings.Compare(a.series, b.series), cmp.Compare(a.tolerancePct, b.tolerancePct))
	})

	cw := csv.NewWriter(w)
	if err := cw.Write(strings.Split(PartsHeader, ",")); err != nil {
		return err
	}
	for _, g := range groups {
		diel := ""
		if g.kind == circuit.Capacitor {
			diel = CapacitorDielectric
		}
		if err := cw.Write([]string{strconv.Itoa(len(g.refs)), string(g.kind), plainDecimal(g.valueUnit), g.unit, g.display,
			g.series, g.tol, diel, strings.Join(g.refs, " "), "", "", ""}); err != nil {
			return err
		}
	}
	if opamps > 0 {
		// Single-ended op-amps and fully differential ones are bought
		// apart: one row per kind.
		refsOf := map[string][]string{}
		for k, st := range ch.Stages {
			for _, u := range st.OpAmps {
				kind := circuit.KindOpAmp
				if u.FullyDifferential() {
					kind = circuit.KindFDA
				}
				refsOf[kind] = append(refsOf[kind], ch.Ref(k+1, u.Ref))
			}
		}
		value, unit, display := "", "", "ideal"
		if !ch.Model.Ideal {
			value, unit, display = plainDecimal(ch.Model.GBWHz), "Hz", si.Format(ch.Model.GBWHz, "Hz", circuit.DisplayDigits)+" GBW"
		}
		gbw, slew := opAmpNeeds(d)
		for _, kind := range []string{circuit.KindOpAmp, circuit.KindFDA} {
			refs := refsOf[kind]
			if len(refs) == 0 {
				continue
			}
			if err := cw.Write([]string{strconv.Itoa(len(refs)), kind, value, unit, display, "", "", "", strings.Join(refs, " "),
				gbw, slew, plainDecimal(d.Spec.OpAmp.NoiseVPerRtHz)}); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// opAmpNeeds returns the largest gain-bandwidth and slew rate any section
// asks of its op-amps, as plain decimals; the GBW is empty when a section
// needs more than any gain-bandwidth up to 1 THz (OpAmpNeeds.GBWHz nil),
// either is empty when no section says.
func opAmpNeeds(d *synth.Design) (gbw, slew string) {
	maxGBW, maxSlew := 0.0, 0.0
	unmet, said := false, false
	for _, s := range d.Sections {
		n := s.OpAmpNeeds
		if n == nil {
			continue
		}
		said = true
		if n.GBWHz == nil {
			unmet = true
		} else {
			maxGBW = max(maxGBW, *n.GBWHz)
		}
		maxSlew = max(maxSlew, n.SlewVPerS)
	}
	if !said {
		return "", ""
	}
	if !unmet {
		gbw = plainDecimal(maxGBW)
	}
	return gbw, plainDecimal(maxSlew)
}

// kindRank orders the part list: resistors, capacitors, anything else.
func kindRank(k circuit.PartKind) int {
	switch k {
	case circuit.Resistor:
		return 0
	case circuit.Capacitor:
		return 1
	}
	return 2
}

// plainDecimal writes v exactly, as the shortest plain decimal that reads
// back as v, never with an exponent.
func plainDecimal(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
