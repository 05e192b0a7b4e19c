package schematic

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"strconv"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
)

// Options are the optional settings of [Stage].
type Options struct {
	// Title, when not empty, is drawn above the schematic and is the SVG's
	// accessible name.
	Title string
	// Refs maps a stage-local designator ("R3", "U1") to the one to print,
	// typically a chain-wide one from [circuit.Chain.Ref]:
	//
	//	opt.Refs = func(local string) string { return chain.Ref(k, local) }
	//
	// nil prints the local designators; a result of "" falls back to the
	// local designator.
	Refs func(local string) string
	// GroundLabel, when not empty, is printed beside every ground symbol:
	// "ref" on a single-supply board, where the filter's ground
	// connections all go to the reference.
	GroundLabel string
}

// Stage writes an SVG schematic of st to w: op-amps as triangles with their
// + and − inputs marked, resistors as zig-zags, capacitors as two plates,
// ground symbols, the input and output terminals labelled "in" and "out",
// and every part labelled with its designator and its value in engineering
// notation ([FormatValue]). Wires are orthogonal; a dot marks every
// junction of three or more wires.
//
// The drawing is sized by its content (viewBox, width and height in user
// units, about one pixel each); every stroke and fill is currentColor, so a
// page themes it with the CSS color property, and text is in the generic
// sans-serif family. The SVG references nothing outside itself and holds no
// script and no style sheet. Elements carry classes (wire, part, opamp,
// ground, terminal, dots, label, title) and data-ref and data-net
// attributes for pages that want to style or highlight them. Every title,
// designator and net name is XML-escaped.
//
// A differential stage (a fully differential op-amp's two matched
// halves) is drawn as its two half-circuits, one above the other, each
// an inverting stage whose op-amp's other input is shown at the
// reference (see the drawing's captions).
//
// Stage validates st first ([circuit.Stage.Validate]) and returns that
// error, which wraps [circuit.ErrInvalid], for an invalid stage; it then
// returns only w's error. It does not panic for any stage (but Refs is the
// caller's code).
func Stage(w io.Writer, st circuit.Stage, opt Options) error {
	if err := st.Validate(); err != nil {
		return fmt.Errorf("schematic: %w", err)
	}
	if st.Differential() {
		return differential(w, st, opt)
	}
	d := lay(&st, opt.Refs, opt.Title)
	// Written in place when w is a buffer (a page's pooled one), else
	// into one of its own and copied.
	b, direct := w.(*bytes.Buffer)
	if !direct {
		b = new(bytes.Buffer)
	}
	b.Grow(4096 + 600*len(st.Parts))
	name := opt.Title
	if name == "" {
		article := "a "
		if st.Topology != "" && strings.ContainsRune("aeiou", rune(st.Topology[0])) {
			article = "an " // an allpass stage
		}
		name = "schematic of " + article + st.Topology + " stage"
		if st.Topology == "" {
			name = "schematic of a filter stage"
		}
	}
	if d.groundLabel = opt.GroundLabel; d.groundLabel != "" {
		for _, g := range d.grounds {
			d.bounds = d.bounds.union(rect{g.x + 8, g.y + 4, g.x + 12 + 6*len(d.groundLabel), g.y + 16})
		}
	}
	d.writeSVG(b, name)
	if direct {
		return nil
	}
	_, err := w.Write(b.Bytes())
	return err
}

// svgw appends SVG text to a buffer.
type svgw struct{ b *bytes.Buffer }

// errNotDrawable is returned for a differential stage that is not one
// fully differential op-amp with two halves of parts.
var errNotDrawable = fmt.Errorf("schematic: %w: a differential stage must be one fully differential op-amp with two matched halves", circuit.ErrInvalid)

func (w svgw) s(s string) { w.b.WriteString(s) }

func (w svgw) n(v int) { w.b.Write(strconv.AppendInt(w.b.AvailableBuffer(), int64(v), 10)) }

// esc writes s XML-escaped (also quotes, so it is safe in attributes).
func (w svgw) esc(s string) { _ = xml.EscapeText(w.b, []byte(s)) }

// pt writes "x y".
func (w svgw) pt(p point) {
	w.n(p.x)
	w.s(" ")
	w.n(p.y)
}

// line writes the path commands of a segment from a to b.
func (w svgw) line(a, b point) {
	w.s("M")
	w.pt(a)
	w.s(" L")
	w.pt(b)
}

// text writes a text element.
func (w svgw) text(l label, extra string) {
	w.s(`<text x="`)
	w.n(l.x)
	w.s(`" y="`)
	w.n(l.y)
	w.s(`"`)
	if l.anchor != "start" {
		w.s(` text-anchor="`)
		w.s(l.anchor)
		w.s(`"`)
	}
	if l.size != font {
		w.s(` font-size="`)
		w.n(l.size)
		w.s(`"`)
	}
	w.s(extra)
	w.s(">")
	w.esc(l.text)
	w.s("</text>")
}

const labelGroup = `<g class="label" fill="currentColor" stroke="none">`

// writeSVG writes the drawing as a standalone SVG document named name.
func (d *drawing) writeSVG(b *bytes.Buffer, name string) {
	w := svgw{b}
	r := d.bounds
	w.s(`<svg xmlns="http://www.w3.org/2000/svg" class="schematic" viewBox="`)
	w.n(r.x0)
	w.s(" ")
	w.n(r.y0)
	w.s(" ")
	w.n(r.x1 - r.x0)
	w.s(" ")
	w.n(r.y1 - r.y0)
	w.s(`" width="`)
	w.n(r.x1 - r.x0)
	w.s(`" height="`)
	w.n(r.y1 - r.y0)
	w.s(`" font-family="sans-serif" font-size="`)
	w.n(font)
	w.s(`" role="img" aria-label="`)
	w.esc(name)
	w.s("\">\n<title>")
	w.esc(name)
	w.s("</title>\n")
	w.s(`<g fill="none" stroke="currentColor" stroke-width="1.5" stroke-linecap="round" stroke-linejoin="round">` + "\n")

	// Wires, one path per net in order of first appearance.
	var nets []string
	for _, s := range d.wires {
		if !containsStr(nets, s.net) {
			nets = append(nets, s.net)
		}
	}
	for _, net := range nets {
		w.s(`<path class="wire" data-net="`)
		w.esc(net)
		w.s(`" d="`)
		first := true
		for _, s := range d.wires {
			if s.net != net {
				continue
			}
			if !first {
				w.s(" ")
			}
			first = false
			w.line(s.a, s.b)
		}
		w.s("\"/>\n")
	}

	for _, p := range d.parts {
		w.s(`<g class="part `)
		w.esc(string(p.kind))
		w.s(`" data-ref="`)
		w.esc(p.ref)
		w.s(`"><path d="`)
		p.path(w)
		w.s(`"/>`)
		w.s(labelGroup)
		w.text(p.labels[0], "")
		w.text(p.labels[1], "")
		w.s("</g></g>\n")
	}

	for _, a := range d.amps {
		t := a.tx
		w.s(`<g class="opamp" data-ref="`)
		w.esc(a.ref)
		w.s(`"><polygon points="`)
		for i, p := range [3]point{{t, ampTop}, {t, ampBot}, {t + triW, ampMidY}} {
			if i > 0 {
				w.s(" ")
			}
			w.n(p.x)
			w.s(",")
			w.n(p.y)
		}
		w.s(`"/><path d="`)
		w.line(point{a.px(), 0}, point{t, 0})
		w.s(" ")
		w.line(point{a.px(), pinY}, point{t, pinY})
		w.s(" ")
		w.line(point{t + triW, ampMidY}, point{a.ox(), ampMidY})
		w.s(`"/><path class="sign" d="`)
		plusY, minusY := 0, pinY
		if !a.topPlus {
			plusY, minusY = pinY, 0
		}
		w.line(point{t + 4, plusY}, point{t + 10, plusY})
		w.s(" ")
		w.line(point{t + 7, plusY - 3}, point{t + 7, plusY + 3})
		w.s(" ")
		w.line(point{t + 4, minusY}, point{t + 10, minusY})
		w.s(`"/>`)
		w.s(labelGroup)
		w.text(a.label, "")
		w.s("</g></g>\n")
	}

	for _, g := range d.grounds {
		w.s(`<path class="ground" d="`)
		w.line(g, point{g.x, g.y + 6})
		for i, half := range [3]int{8, 5, 2} {
			y := g.y + 6 + 3*i
			w.s(" ")
			w.line(point{g.x - half, y}, point{g.x + half, y})
		}
		w.s("\"/>\n")
		if d.groundLabel != "" {
			// Filled, not stroked: the text sits inside the wires' group,
			// whose 1.5-unit stroke would blur it.
			w.s(`<text class="label ground-label" fill="currentColor" stroke="none" font-size="10" x="`)
			w.n(g.x + 10)
			w.s(`" y="`)
			w.n(g.y + 14)
			w.s(`">`)
			w.esc(d.groundLabel)
			w.s("</text>\n")
		}
	}

	for _, t := range d.terms {
		w.s(`<g class="terminal" data-net="`)
		w.esc(t.name)
		w.s(`"><circle cx="`)
		w.n(t.at.x)
		w.s(`" cy="`)
		w.n(t.at.y)
		w.s(`" r="`)
		w.n(termR)
		w.s(`"/>`)
		w.s(labelGroup)
		w.text(t.label(), "")
		w.s("</g></g>\n")
	}

	if len(d.dots) > 0 {
		w.s(`<g class="dots" fill="currentColor" stroke="none">`)
		for _, p := range d.dots {
			w.s(`<circle cx="`)
			w.n(p.x)
			w.s(`" cy="`)
			w.n(p.y)
			w.s(`" r="2.5"/>`)
		}
		w.s("</g>\n")
	}

	if d.title != "" {
		w.text(d.tlabel, ` class="title" font-weight="bold" fill="currentColor" stroke="none"`)
		w.s("\n")
	}
	w.s("</g>\n</svg>\n")
}

// path writes the symbol of a part with its leads: terminal a is the first
// point of the path and terminal b the last.
func (p partShape) path(w svgw) {
	v := p.vertical()
	// at maps (along, across) offsets from the centre to a point.
	c := point{(p.a.x + p.b.x) / 2, (p.a.y + p.b.y) / 2}
	at := func(along, across int) point {
		if v {
			return point{c.x + across, c.y + along}
		}
		return point{c.x + along, c.y + across}
	}
	if p.kind == circuit.Capacitor {
		w.line(p.a, at(-capGap, 0))
		w.s(" ")
		w.line(at(-capGap, -capHalf), at(-capGap, capHalf))
		w.s(" ")
		w.line(at(capGap, -capHalf), at(capGap, capHalf))
		w.s(" ")
		w.line(at(capGap, 0), p.b)
		return
	}
	w.s("M")
	w.pt(p.a)
	w.s(" L")
	w.pt(at(-resHalf, 0))
	for i := range 6 {
		side := resAmp
		if i%2 == 1 {
			side = -resAmp
		}
		w.s(" L")
		w.pt(at(-resHalf+2+4*i, -side))
	}
	w.s(" L")
	w.pt(at(resHalf, 0))
	w.s(" L")
	w.pt(p.b)
}

func containsStr(ss []string, s string) bool {
	for _, x := range ss {
		if x == s {
			return true
		}
	}
	return false
}
