package schematic

import (
	"fmt"
	"slices"
)

// checkDrawing returns the first broken layout rule of d, or nil: wires are
// orthogonal and every wire end lands on another wire end or a symbol's
// port; every port is wired; wires of different nets only cross; no wire
// runs through a part body, an op-amp or a label; no two symbols and no two
// labels overlap; everything is inside the bounds.
func checkDrawing(d *drawing) error {
	ends := make(map[point]int)
	for _, w := range d.wires {
		if w.a == w.b || (w.a.x != w.b.x && w.a.y != w.b.y) {
			return fmt.Errorf("wire %v of net %q is not orthogonal or is empty", w, w.net)
		}
		ends[w.a]++
		ends[w.b]++
	}
	ports := make(map[point]bool)
	for _, p := range d.ports() {
		ports[p] = true
	}
	for _, w := range d.wires {
		for _, p := range [2]point{w.a, w.b} {
			if ends[p] < 2 && !ports[p] {
				return fmt.Errorf("wire %v of net %q ends at %v, which is no junction or port", w, w.net, p)
			}
		}
	}
	grounds := make(map[point]bool)
	for _, g := range d.grounds {
		grounds[g] = true
		if ends[g] == 0 && !isPartEnd(d, g) {
			return fmt.Errorf("ground symbol at %v is not connected", g)
		}
	}
	for _, p := range d.parts {
		for _, t := range [2]point{p.a, p.b} {
			if ends[t] == 0 && !grounds[t] {
				return fmt.Errorf("part %s terminal %v is not connected", p.ref, t)
			}
		}
	}
	for _, a := range d.amps {
		for _, t := range [3]point{{a.px(), 0}, {a.px(), pinY}, {a.ox(), ampMidY}} {
			if ends[t] == 0 {
				return fmt.Errorf("op-amp %s pin %v is not connected", a.ref, t)
			}
		}
	}
	for _, t := range d.terms {
		if ends[point{t.at.x - termR, t.at.y}]+ends[point{t.at.x + termR, t.at.y}] == 0 {
			return fmt.Errorf("terminal %s is not connected", t.name)
		}
	}
	for i, w := range d.wires {
		for _, v := range d.wires[i+1:] {
			if w.net != v.net && touches(w, v) {
				return fmt.Errorf("wires %v (%q) and %v (%q) touch", w, w.net, v, v.net)
			}
		}
	}

	type thing struct {
		name string
		r    rect
	}
	var symbols, labels, bodies []thing
	for _, p := range d.parts {
		symbols = append(symbols, thing{"part " + p.ref, p.symbol()})
		bodies = append(bodies, thing{"body of " + p.ref, grow(p.body(), 1)})
		for _, l := range p.labels {
			labels = append(labels, thing{"label " + l.text + " of " + p.ref, l.box()})
		}
	}
	for _, a := range d.amps {
		tri := rect{a.tx, ampTop, a.tx + triW, ampBot}
		symbols = append(symbols, thing{"op-amp " + a.ref, tri})
		if a.label.y < ampTop { // outside the triangle
			labels = append(labels, thing{"label of " + a.ref, a.label.box()})
		}
	}
	for _, g := range d.grounds {
		symbols = append(symbols, thing{fmt.Sprint("ground at ", g), groundBox(g)})
	}
	for _, t := range d.terms {
		symbols = append(symbols, thing{"terminal " + t.name, rect{t.at.x - termR, t.at.y - termR, t.at.x + termR, t.at.y + termR}})
		labels = append(labels, thing{"label of terminal " + t.name, t.label().box()})
	}
	if d.title != "" {
		labels = append(labels, thing{"title", d.tlabel.box()})
	}
	for i, a := range symbols {
		for _, b := range symbols[i+1:] {
			if a.r.overlaps(b.r) {
				return fmt.Errorf("%s %v overlaps %s %v", a.name, a.r, b.name, b.r)
			}
		}
	}
	for i, a := range labels {
		for _, b := range labels[i+1:] {
			if a.r.overlaps(b.r) {
				return fmt.Errorf("%s %v overlaps %s %v", a.name, a.r, b.name, b.r)
			}
		}
		for _, b := range symbols {
			if a.r.overlaps(b.r) {
				return fmt.Errorf("%s %v overlaps %s %v", a.name, a.r, b.name, b.r)
			}
		}
	}
	wires := slices.Clone(d.wires)
	for _, a := range d.amps { // the leads
		wires = append(wires, seg{point{a.px(), 0}, point{a.tx, 0}, "lead"}, seg{point{a.px(), pinY}, point{a.tx, pinY}, "lead"},
			seg{point{a.tx + triW, ampMidY}, point{a.ox(), ampMidY}, "lead"})
	}
	for _, w := range wires {
		for _, b := range append(append(bodies, labels...), symbols...) {
			if crosses(w, b.r) {
				return fmt.Errorf("wire %v (%q) runs through %s %v", w, w.net, b.name, b.r)
			}
		}
	}
	all := append(append(symbols, labels...), bodies...)
	for _, w := range d.wires {
		all = append(all, thing{"wire", rect{min(w.a.x, w.b.x), min(w.a.y, w.b.y), max(w.a.x, w.b.x), max(w.a.y, w.b.y)}})
	}
	for _, t := range all {
		b := d.bounds
		if t.r.x0 < b.x0 || t.r.y0 < b.y0 || t.r.x1 > b.x1 || t.r.y1 > b.y1 {
			return fmt.Errorf("%s %v is outside the bounds %v", t.name, t.r, b)
		}
	}
	return nil
}

func isPartEnd(d *drawing, p point) bool {
	for _, q := range d.parts {
		if q.a == p || q.b == p {
			return true
		}
	}
	return false
}

func grow(r rect, d int) rect { return rect{r.x0 - d, r.y0 - d, r.x1 + d, r.y1 + d} }

// touches reports whether two orthogonal segments share a point other than
// a crossing of their interiors.
func touches(a, b seg) bool {
	ah, bh := a.a.y == a.b.y, b.a.y == b.b.y
	ax0, ax1 := min(a.a.x, a.b.x), max(a.a.x, a.b.x)
	ay0, ay1 := min(a.a.y, a.b.y), max(a.a.y, a.b.y)
	bx0, bx1 := min(b.a.x, b.b.x), max(b.a.x, b.b.x)
	by0, by1 := min(b.a.y, b.b.y), max(b.a.y, b.b.y)
	if ax1 < bx0 || bx1 < ax0 || ay1 < by0 || by1 < ay0 {
		return false // disjoint boxes
	}
	if ah == bh {
		return true // parallel and sharing a point: collinear
	}
	// Perpendicular: they meet at one point; it must be inside both.
	if ah {
		return !(ax0 < bx0 && bx0 < ax1 && by0 < ay0 && ay0 < by1)
	}
	return !(bx0 < ax0 && ax0 < bx1 && ay0 < by0 && by0 < ay1)
}

// crosses reports whether segment w enters the open box r.
func crosses(w seg, r rect) bool {
	x0, x1 := min(w.a.x, w.b.x), max(w.a.x, w.b.x)
	y0, y1 := min(w.a.y, w.b.y), max(w.a.y, w.b.y)
	if y0 == y1 {
		return r.y0 < y0 && y0 < r.y1 && x0 < r.x1 && x1 > r.x0
	}
	return r.x0 < x0 && x0 < r.x1 && y0 < r.y1 && y1 > r.y0
}
