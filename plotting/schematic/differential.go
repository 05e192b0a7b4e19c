package schematic

import (
	"bytes"
	"io"
	"slices"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
)

// halfGap is the vertical space between the two halves' drawings.
const halfGap = 16

// differential writes a fully differential stage (one FDA, two matched
// halves) as its two half-circuits, one above the other, in one SVG:
// each half is drawn as an inverting stage around the FDA, its input
// pin's partner shown at the reference (by symmetry the FDA's inputs carry
// no differential signal between them: the half-circuit of the bisection
// theorem). Half A runs from the positive input to the FDA's − input and
// +out, half B from the negative input (or, on a stage that converts a
// single-ended source, from the reference) to its + input and −out. The
// terminals are labelled in+/in− (or in/ref) and out+/out−, the outputs
// following the stage's own Out and OutN (which may be crossed).
//
// A single-ended section followed by its conversion to differential
// ([circuit.Stage.WithConversion]) is drawn as the section, its output
// labelled as the conversion's input, above the conversion's two halves.
func differential(w io.Writer, st circuit.Stage, opt Options) error {
	name := opt.Title
	if name == "" {
		name = "schematic of a " + st.Topology + " stage"
	}
	var drawings []*drawing
	var captions []string
	conv, fromSection := st, ""
	if se, c, ok := st.SplitConversion(); ok {
		title := "single-ended section"
		if opt.Title != "" {
			title = opt.Title + " — " + title
		}
		d := layLabelled(&se, opt.Refs, title, "in", "to conversion")
		fromSection = "from section"
		drawings, captions = append(drawings, d), append(captions, name+", the single-ended section")
		conv = c
		opt.Title = "conversion to differential"
	}
	halves, err := fdaHalves(conv, opt, fromSection)
	if err != nil {
		return err
	}
	drawings = append(drawings, halves[0], halves[1])
	captions = append(captions, name+", half A", name+", half B")
	for _, d := range drawings {
		if d.groundLabel = opt.GroundLabel; d.groundLabel != "" {
			for _, g := range d.grounds {
				d.bounds = d.bounds.union(rect{g.x + 8, g.y + 4, g.x + 12 + 6*len(d.groundLabel), g.y + 16})
			}
		}
	}
	return stacked(w, name, drawings, captions)
}

// fdaHalves lays out the two half-circuits of a stage of one FDA with
// two matched halves; inA, when set, labels half A's input terminal.
func fdaHalves(st circuit.Stage, opt Options, inA string) ([2]*drawing, error) {
	var halves [2]*drawing
	if len(st.OpAmps) != 1 || !st.OpAmps[0].FullyDifferential() {
		return halves, errNotDrawable
	}
	u := st.OpAmps[0]
	for i, half := range []string{circuit.HalfA, circuit.HalfB} {
		hs, in, out := halfStage(st, half)
		if half == circuit.HalfA && inA != "" {
			in = inA
		}
		title := "half A: " + in + " to " + out + " through " + u.Ref + "'s − input (its + input, half B's, drawn at the reference)"
		if half == circuit.HalfB {
			title = "half B, the mirror: " + in + " to " + out + " through " + u.Ref + "'s + input, drawn as − (toward out− it inverts)"
		}
		if opt.Refs != nil {
			title = strings.ReplaceAll(title, u.Ref+"'s", opt.Refs(u.Ref)+"'s")
		}
		if i == 0 && opt.Title != "" {
			title = opt.Title + " — " + title
		}
		if err := hs.Validate(); err != nil {
			return halves, errNotDrawable
		}
		halves[i] = layLabelled(&hs, opt.Refs, title, in, out)
	}
	return halves, nil
}

// stacked writes drawings one above the other in one SVG named name,
// each as a nested svg named by its caption.
func stacked(w io.Writer, name string, drawings []*drawing, captions []string) error {
	var b bytes.Buffer
	width, height := 0, 0
	for _, d := range drawings {
		width = max(width, d.bounds.x1-d.bounds.x0)
		height += d.bounds.y1 - d.bounds.y0
	}
	height += halfGap * (len(drawings) - 1)
	sw := svgw{&b}
	sw.s(`<svg xmlns="http://www.w3.org/2000/svg" class="schematic differential" viewBox="0 0 `)
	sw.n(width)
	sw.s(" ")
	sw.n(height)
	sw.s(`" width="`)
	sw.n(width)
	sw.s(`" height="`)
	sw.n(height)
	sw.s(`" role="img" aria-label="`)
	sw.esc(name)
	sw.s("\">\n<title>")
	sw.esc(name)
	sw.s("</title>\n")
	y := 0
	for i, d := range drawings {
		var inner bytes.Buffer
		d.writeSVG(&inner, captions[i])
		// The drawing's own root element, placed at y by the x and y
		// attributes of a nested svg.
		s := inner.String()
		s = strings.Replace(s, `<svg xmlns="http://www.w3.org/2000/svg" class="schematic"`, `<svg class="schematic-half" x="0" y="`+itoa(y)+`"`, 1)
		sw.s(s)
		y += d.bounds.y1 - d.bounds.y0 + halfGap
	}
	sw.s("</svg>\n")
	_, err := w.Write(b.Bytes())
	return err
}

// halfStage returns one half of a fully differential stage as an
// inverting single-op-amp stage for the layout (its op-amp's + input at
// ground: the half-circuit), with the labels of its input and output
// terminals.
func halfStage(st circuit.Stage, half string) (hs circuit.Stage, in, out string) {
	u := st.OpAmps[0]
	minus, outNode := u.Minus, u.Out
	if half == circuit.HalfB {
		minus, outNode = u.Plus, u.OutN
	}
	// The B half's input: InN, or, on a conversion stage, the Ground end
	// of each B part whose A twin touches In.
	twinOnIn := map[string]bool{}
	for _, p := range st.Parts {
		if circuit.HalfOf(p.Ref) == circuit.HalfA && (p.A == circuit.In || p.B == circuit.In) {
			twinOnIn[strings.TrimSuffix(p.Ref, circuit.HalfA)] = true
		}
	}
	hs = circuit.Stage{Topology: st.Topology}
	for _, p := range st.Parts {
		if circuit.HalfOf(p.Ref) != half || p.Parasitic {
			continue
		}
		q := p
		if half == circuit.HalfB {
			base := strings.TrimSuffix(p.Ref, circuit.HalfB)
			for _, end := range []*string{&q.A, &q.B} {
				switch {
				case *end == circuit.InN:
					*end = circuit.In
				case !st.DiffIn && *end == circuit.Ground && twinOnIn[base] && !slices.Contains([]string{q.A, q.B}, circuit.In):
					*end = circuit.In
				}
			}
		}
		hs.Parts = append(hs.Parts, q)
	}
	hs.OpAmps = []circuit.OpAmp{{Ref: u.Ref, Plus: circuit.Ground, Minus: minus, Out: outNode}}
	hs.Out = outNode
	out = "out+"
	if outNode == st.OutN {
		out = "out−"
	}
	switch {
	case half == circuit.HalfA && st.DiffIn:
		in = "in+"
	case half == circuit.HalfA:
		in = "in"
	case st.DiffIn:
		in = "in−"
	default:
		in = "ref"
	}
	return hs, in, out
}

func itoa(v int) string {
	var b bytes.Buffer
	svgw{&b}.n(v)
	return b.String()
}
