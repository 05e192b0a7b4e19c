package schematic

import (
	"cmp"
	"slices"

	"github.com/polewright/polewright/synth/circuit"
)

// hpart draws part j horizontally, centred at (c, y).
func (l *layout) hpart(j, c, y int) partShape {
	p := l.st.Parts[j]
	return partShape{
		ref: l.partRef[j], value: l.partVal[j], kind: p.Kind,
		a: point{c - partLen/2, y}, b: point{c + partLen/2, y},
		labels: [2]label{
			{c, y + refBase, "middle", font, l.partRef[j]},
			{c, y + valueBase, "middle", font, l.partVal[j]},
		},
	}
}

// vpart draws part j vertically from (x, top) down.
func (l *layout) vpart(j, x, top int) partShape {
	p := l.st.Parts[j]
	cy := top + partLen/2
	return partShape{
		ref: l.partRef[j], value: l.partVal[j], kind: p.Kind,
		a: point{x, top}, b: point{x, top + partLen},
		labels: [2]label{
			{x + hungDX, cy - 2, "start", font, l.partRef[j]},
			{x + hungDX, cy + 10, "start", font, l.partVal[j]},
		},
	}
}

// emit turns the placed layout into a drawing.
func (l *layout) emit(title string) *drawing {
	d := &drawing{title: title}
	nc := len(l.cols)
	wire := func(a, b point, net string) {
		if a != b {
			d.wires = append(d.wires, seg{a, b, net})
		}
	}
	for _, tr := range l.trunks {
		for i := 1; i < len(tr.ys); i++ {
			wire(point{tr.x, tr.ys[i-1]}, point{tr.x, tr.ys[i]}, tr.net)
		}
	}
	xin := l.colX[l.colsOf[0][0]]
	d.terms = append(d.terms, terminal{point{xin - termGap, 0}, l.inLabel, true})
	wire(point{xin - termGap + termR, 0}, point{xin, 0}, l.nodes[0])
	for i, g := range l.gaps {
		xl, xr := l.colX[i], l.colX[i+1]
		nl, nr := l.nodes[l.cols[i]], l.nodes[l.cols[i+1]]
		switch g.kind {
		case gapPart:
			p := l.hpart(g.idx, g.c, 0)
			d.parts = append(d.parts, p)
			wire(point{xl, 0}, p.a, nl)
			wire(p.b, point{xr, 0}, nr)
		case gapAmp:
			k := g.idx
			a := ampShape{ref: l.ref(l.st.OpAmps[k].Ref), tx: g.tx, topPlus: l.topPlus[k]}
			if w := textWidth(a.ref, ampFont); w <= ampInside {
				a.label = label{g.tx + 23, ampMidY + 3, "middle", ampFont, a.ref}
			} else {
				a.label = label{g.tx, ampTop - 4, "start", ampFont, a.ref}
			}
			d.amps = append(d.amps, a)
			wire(point{xl, 0}, point{a.px(), 0}, nl)
			wire(point{a.ox(), ampMidY}, point{xr, ampMidY}, nr)
			if l.bot[k] == botGround {
				g := point{a.px(), pinY + gndDrop}
				wire(point{a.px(), pinY}, g, circuit.Ground)
				d.grounds = append(d.grounds, g)
			}
		}
	}
	if l.termGap {
		x := l.colX[nc-1]
		d.terms = append(d.terms, terminal{point{l.termX, ampMidY}, l.outLabel, false})
		wire(point{x, ampMidY}, point{l.termX - termR, ampMidY}, l.st.Out)
	}
	for _, it := range l.items {
		if it.ends[1].trunk < 0 {
			d.terms = append(d.terms, terminal{point{l.termX, it.y}, l.outLabel, false})
		}
		a, b := point{it.x1, it.y}, point{it.x2, it.y}
		if it.part < 0 {
			wire(a, b, it.ends[0].net)
			continue
		}
		p := l.hpart(it.part, it.bodyX, it.y)
		d.parts = append(d.parts, p)
		wire(a, p.a, it.ends[0].net)
		wire(p.b, b, it.ends[1].net)
	}
	for _, tr := range l.trunks {
		for i, j := range tr.hung {
			x := tr.x + tr.offs[i]
			if i > 0 {
				wire(point{tr.x + tr.offs[i-1], l.hy}, point{x, l.hy}, tr.net)
			}
			p := l.vpart(j, x, l.hy)
			d.parts = append(d.parts, p)
			d.grounds = append(d.grounds, p.b)
		}
	}
	d.dots = junctions(d)
	d.bounds = d.extent()
	return d
}

// ports returns the points where symbols meet wires: part terminals,
// op-amp pins, ground stems and terminal circles.
func (d *drawing) ports() []point {
	var ps []point
	for _, p := range d.parts {
		ps = append(ps, p.a, p.b)
	}
	for _, a := range d.amps {
		ps = append(ps, point{a.px(), 0}, point{a.px(), pinY}, point{a.ox(), ampMidY})
	}
	ps = append(ps, d.grounds...)
	for _, t := range d.terms {
		ps = append(ps, point{t.at.x - termR, t.at.y}, point{t.at.x + termR, t.at.y})
	}
	return ps
}

// junctions returns the points where three or more wire ends and ports
// meet, sorted.
func junctions(d *drawing) []point {
	count := make(map[point]int, 2*len(d.wires))
	for _, w := range d.wires {
		count[w.a]++
		count[w.b]++
	}
	for _, p := range d.ports() {
		if count[p] > 0 {
			count[p]++
		}
	}
	var dots []point
	for p, n := range count {
		if n >= 3 {
			dots = append(dots, p)
		}
	}
	slices.SortFunc(dots, func(a, b point) int {
		return cmp.Or(cmp.Compare(a.y, b.y), cmp.Compare(a.x, b.x))
	})
	return dots
}

// extent is the bounding box of everything drawn, with a margin, and the
// title above.
func (d *drawing) extent() rect {
	r := rect{d.terms[0].at.x, 0, d.terms[0].at.x, 0}
	for _, w := range d.wires {
		r = r.union(rect{min(w.a.x, w.b.x), min(w.a.y, w.b.y), max(w.a.x, w.b.x), max(w.a.y, w.b.y)})
	}
	for _, p := range d.parts {
		r = r.union(p.symbol()).union(p.labels[0].box()).union(p.labels[1].box())
	}
	for _, a := range d.amps {
		r = r.union(a.symbol()).union(a.label.box())
	}
	for _, g := range d.grounds {
		r = r.union(groundBox(g))
	}
	for _, t := range d.terms {
		r = r.union(rect{t.at.x - termR, t.at.y - termR, t.at.x + termR, t.at.y + termR}).union(t.label().box())
	}
	r = rect{r.x0 - margin, r.y0 - margin, r.x1 + margin, r.y1 + margin}
	if d.title != "" {
		t := label{r.x0 + margin, r.y0 - 2, "start", termFont, d.title}
		d.tlabel = t
		r = r.union(t.box())
		r.y0 -= 4
		r.x1 = max(r.x1, t.box().x1+margin)
	}
	return r
}

// groundBox is the extent of a ground symbol whose stem starts at g.
func groundBox(g point) rect { return rect{g.x - 8, g.y, g.x + 8, g.y + gndH} }

// textWidth estimates the width of s set in a sans-serif face at size, from
// typical glyph advances (in thousandths of an em), rounded up.
func textWidth(s string, size int) int {
	w := 0
	for _, r := range s {
		switch {
		case r >= '0' && r <= '9', r == '?', r == 'e', r == 'n', r == 'p', r == 'o', r == 'u', r == 'a':
			w += 556
		case r == ' ', r == '.', r == ',', r == 'f', r == 't', r == '/', r == '\'', r == 'i', r == 'l', r == 'j':
			w += 278
		case r == 'm', r == 'M', r == 'W', r == 'w':
			w += 833
		case r == 'µ':
			w += 576
		case r == 'Ω':
			w += 768
		case r == '-', r == '(', r == ')':
			w += 333
		case r >= 'A' && r <= 'Z', r == '&', r == '<', r == '>', r == '+', r == '=':
			w += 722
		case r >= 'a' && r <= 'z', r == '"', r == '_':
			w += 556
		case r < 0x2E80:
			w += 650
		default: // wide scripts
			w += 1000
		}
	}
	return (w*size + 999) / 1000
}
