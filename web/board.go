package web

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/components"
)

// boardColumns are the headings of the swing table, with their hints.
var boardColumns = []components.Column{
	{Label: "Stage", Hint: "the stage, input first"},
	{Label: "Op-amp", Hint: "the op-amp's designator, as on the schematic"},
	{Label: "Node", Hint: "the node's name in the SPICE deck"},
	{Label: "Pin", Hint: "the op-amp's output or its non-inverting (+) input"},
	{Label: "Lowest", Hint: "the lowest voltage the node reaches for the largest input (V, against 0 V)"},
	{Label: "Highest", Hint: "the highest voltage the node reaches for the largest input (V)"},
	{Label: "Largest gain", Hint: "the node's largest gain from the input (V/V) and the frequency where it peaks"},
	{Label: "Allowed", Hint: "the range the node may swing in: the rails less the output or input headroom (V)"},
	{Label: "Room", Hint: "how far the extremes stay inside the allowed range (V); negative: the node clips"},
}

// boardView lays out the design's board figures (synth's Section.Swing and
// Design.DC) as the "On its rails" panel; nil before verification. The
// verdicts on them are synth's checks, shown with the others.
func boardView(d *synth.Design) *components.BoardView {
	if d.DC == nil {
		return nil
	}
	s := d.Spec
	b := &components.BoardView{
		Columns: boardColumns,
	}
	supply := "none given: signals around 0 V, no rail checks"
	if p := s.Supply; p != nil {
		supply = fmt.Sprintf("%s and %s, reference %s", si(p.PositiveV, "V", 4), si(p.NegativeV, "V", 4), si(p.ReferenceV, "V", 4))
	}
	b.Figures = append(b.Figures,
		components.Figure{Label: "Supply", Value: supply, TestID: "board-supply"},
		components.Figure{Label: "Largest input", Value: si(s.SignalVppV(), "Vpp", 3), Detail: "a sine at every frequency and a step of this size", TestID: "board-signal"},
	)
	dc := si(d.DC.OutputOffsetV, "V", 3)
	detail := "v(out) − reference with the input at the reference"
	if d.DC.OutputOffsetLSB != nil {
		dc += fmt.Sprintf(" (%.3g LSB)", *d.DC.OutputOffsetLSB)
	}
	if len(d.DC.Contributors) > 0 && d.DC.OutputOffsetV != 0 {
		c := d.DC.Contributors[0]
		detail = fmt.Sprintf("largest share: %s, %.0f %% (offset %s, bias %s)", c.Ref, 100*c.Share, si(c.OffsetV, "V", 3), si(c.BiasV, "V", 3))
	}
	b.Figures = append(b.Figures, components.Figure{Label: "DC error at the output", Value: dc, Detail: detail, TestID: "board-dc"})
	for _, bal := range d.DC.Balance {
		b.Notes = append(b.Notes, fmt.Sprintf("%s in series with %s's %s input would cancel its bias currents' share (for matched bias currents): the output's DC error would be %s.",
			si(bal.ResistorOhm, "Ω", 3), bal.Ref, bal.Pin, si(bal.OutputOffsetV, "V", 3)))
	}
	for i, sec := range d.Sections {
		if sec.Swing == nil {
			continue
		}
		for _, n := range sec.Swing.Nodes {
			allowed, room := "—", "—"
			bad := false
			if n.LimitV != nil {
				allowed = si(n.LimitV[0], "V", 4) + " to " + si(n.LimitV[1], "V", 4)
			}
			if n.HeadroomV != nil {
				room = si(*n.HeadroomV, "V", 3)
				bad = *n.HeadroomV < 0
			}
			pin := "output"
			if n.Pin == synth.PinInput {
				pin = "+ input"
			}
			b.Rows = append(b.Rows, components.BoardRow{Bad: bad, Cells: []string{
				fmt.Sprint(i + 1), n.Ref, n.Node, pin, si(n.PeakV[0], "V", 4), si(n.PeakV[1], "V", 4),
				fmt.Sprintf("%.4g V/V at %s", n.GainMax, si(n.PeakHz, "Hz", 3)), allowed, room,
			}})
		}
	}
	b.Notes = append(b.Notes, "Lowest and highest are the extremes of a full-size sine at every frequency and of the step, at each op-amp output and non-inverting input "+
		"(an input tied to the reference is left out), around the reference plus the node's DC error. Outputs are allowed the rails less the output headroom, inputs the rails less the input headroom. "+
		"Every ground connection of the filter goes to the reference.")
	if s.OpAmp.InputCapacitanceFarad > 0 || s.OpAmp.OutputResistanceOhm > 0 {
		b.Notes = append(b.Notes, fmt.Sprintf("The response, noise, Monte Carlo and deck include the op-amp's input capacitance (%s at each input) and open-loop output resistance (%s).",
			si(s.OpAmp.InputCapacitanceFarad, "F", 3), si(s.OpAmp.OutputResistanceOhm, "Ω", 3)))
	}
	if math.IsNaN(d.DC.OutputOffsetV) {
		return nil
	}
	return b
}
