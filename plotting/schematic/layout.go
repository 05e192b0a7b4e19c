package schematic

import (
	"slices"

	"github.com/polewright/polewright/synth/circuit"
)

// Geometry, in SVG user units. The main row (the signal path) is y = 0 and
// y grows downwards. All coordinates are integers so that the output is
// byte-stable.
const (
	partLen  = 48 // a part, terminal to terminal
	resHalf  = 12 // half the length of the zig-zag
	resAmp   = 5  // zig-zag amplitude
	capGap   = 3  // half the distance between the plates
	capHalf  = 9  // half a plate
	font     = 10 // label font size
	ampFont  = 9  // op-amp designator font size
	termFont = 11 // terminal and title font size

	pinY    = 24 // an op-amp's bottom input; its top input is on the main row
	ampMidY = 12 // an op-amp's output
	triW    = 48 // triangle width
	triHalf = 26 // half the triangle height
	lead    = 12 // op-amp pin lead
	ampTop  = ampMidY - triHalf
	ampBot  = ampMidY + triHalf

	gndH    = 12 // ground symbol height
	gndDrop = 4  // wire from a grounded op-amp input down to its ground symbol
	termR   = 3  // terminal circle radius

	minGap   = 60 // narrowest gap between two columns
	stub     = 6  // shortest wire between a trunk and a symbol
	termGap  = 24 // from the last column to the output terminal
	hungDX   = 13 // from a vertical part's axis to its labels
	hungHalf = capHalf

	// Label boxes of a horizontal part at y: the designator above
	// (baseline y − 13), the value below (baseline y + 20).
	refBase   = -13
	valueBase = 20
	labelUp   = 21 // the designator's top is y − labelUp
	labelDown = 23 // the value's bottom is y + labelDown

	// Lanes: the first above holds a part at −48 or a wire at −26; the
	// first below a part at 68 or a wire at 46.
	laneGapPart = 48
	aboveClear  = 25 // nothing of a lane comes below −aboveClear
	belowClear  = ampBot + 8
	margin      = 10
)

// point is a position in user units.
type point struct{ x, y int }

// rect is an axis-aligned box, x0 ≤ x1, y0 ≤ y1.
type rect struct{ x0, y0, x1, y1 int }

func (r rect) union(o rect) rect {
	return rect{min(r.x0, o.x0), min(r.y0, o.y0), max(r.x1, o.x1), max(r.y1, o.y1)}
}

// overlaps reports whether two boxes share interior points.
func (r rect) overlaps(o rect) bool {
	return r.x0 < o.x1 && o.x0 < r.x1 && r.y0 < o.y1 && o.y0 < r.y1
}

// seg is an orthogonal wire segment of one net.
type seg struct {
	a, b point
	net  string
}

// label is one line of text.
type label struct {
	x, y   int
	anchor string // start, middle or end
	size   int
	text   string
}

// box estimates the label's extent from its font size.
func (l label) box() rect {
	w := textWidth(l.text, l.size)
	x0 := l.x
	switch l.anchor {
	case "middle":
		x0 -= w / 2
	case "end":
		x0 -= w
	}
	return rect{x0, l.y - l.size*3/4 - 1, x0 + w, l.y + l.size/4 + 1}
}

// partShape is a drawn resistor or capacitor between terminals a and b
// (a horizontal part has a.y == b.y, a vertical one a.x == b.x).
type partShape struct {
	ref, value string
	kind       circuit.PartKind
	a, b       point
	labels     [2]label
}

func (p partShape) vertical() bool { return p.a.x == p.b.x }

// body is the symbol without its leads.
func (p partShape) body() rect {
	half, thick := resHalf, resAmp
	if p.kind == circuit.Capacitor {
		half, thick = capGap, capHalf
	}
	if p.vertical() {
		c := (p.a.y + p.b.y) / 2
		return rect{p.a.x - thick, c - half, p.a.x + thick, c + half}
	}
	c := (p.a.x + p.b.x) / 2
	return rect{c - half, p.a.y - thick, c + half, p.a.y + thick}
}

// symbol is the symbol with its leads.
func (p partShape) symbol() rect {
	b := p.body()
	return b.union(rect{min(p.a.x, p.b.x), min(p.a.y, p.b.y), max(p.a.x, p.b.x), max(p.a.y, p.b.y)})
}

// ampShape is a drawn op-amp: a triangle with its left side at tx, its top
// input on the main row, its bottom input at pinY and its output at
// ampMidY.
type ampShape struct {
	ref     string
	tx      int
	topPlus bool // the top input is the non-inverting one
	label   label
}

func (a ampShape) px() int { return a.tx - lead }
func (a ampShape) ox() int { return a.tx + triW + lead }

// symbol is the triangle with its leads.
func (a ampShape) symbol() rect { return rect{a.px(), ampTop, a.ox(), ampBot} }

// terminal is a stage input or output connection point.
type terminal struct {
	at   point // circle centre
	name string
	left bool // the label is left of the circle
}

func (t terminal) label() label {
	if t.left {
		return label{t.at.x - termR - 4, t.at.y + 4, "end", termFont, t.name}
	}
	return label{t.at.x + termR + 4, t.at.y + 4, "start", termFont, t.name}
}

// drawing is the laid-out schematic, ready to be written as SVG.
type drawing struct {
	title   string
	wires   []seg
	parts   []partShape
	amps    []ampShape
	grounds []point // top of each ground symbol's stem
	terms   []terminal
	dots    []point
	bounds  rect
	tlabel  label // the title, when there is one
	// groundLabel is printed beside each ground symbol when not empty.
	groundLabel string
}

// bottom kinds: what an op-amp's bottom input connects to.
const (
	botGround    = iota // a ground symbol at the pin
	botSelf             // the op-amp's own output, by a wire below
	botSecondary        // a node of its own, drawn below the op-amp
	botDrop             // a node drawn elsewhere, by a wire below
)

// gap kinds: what sits on the main row between two columns.
const (
	gapEmpty = iota
	gapPart
	gapAmp
)

type gap struct {
	kind, idx      int // part or op-amp index
	extraL, extraR int // widening asked for by lane bodies
	fw             int // a part's footprint width
	gL             int // left edge
	c              int // a part's centre
	tx             int // an op-amp's triangle left side
}

// end is one end of a lane item: a trunk, or the output terminal.
type end struct {
	trunk int // −1: the output terminal
	net   string
}

// laneItem is a horizontal run above or below the main row: a part (part
// ≥ 0) or a plain wire between two trunks.
type laneItem struct {
	part   int
	ends   [2]end
	above  bool
	lane   int
	y      int
	x1, x2 int // ends[0] at x1, ends[1] at x2 after ordering
	bodyX  int
	fw     int
	join   bool // a wire joining two columns of one node
}

// trunk is the vertical wire of a net at one x: a column's node, or the
// bottom input of an op-amp (its own node, or a wire to elsewhere).
type trunk struct {
	x    int
	net  string
	ys   []int
	hung []int // parts to ground hanging from it
	offs []int // their x offsets from the trunk
	foot int   // width of the hung parts and their labels right of x
}

// layout is the state of laying out one stage.
type layout struct {
	st   *circuit.Stage
	refs func(string) string
	// inLabel and outLabel are the terminals' labels ("in", "out").
	inLabel, outLabel string

	nodes   []string
	idx     map[string]int
	rank    []int
	driver  []int // per node: the op-amp driving it, or −1
	mainIn  []int // per op-amp: the node on its top input
	topPlus []bool
	bot     []int // per op-amp: bottom kind
	botNode []int // per op-amp: the bottom node (−1 for ground)
	secOf   []int // per node: the op-amp it is the secondary node of, or −1

	cols    []int   // node of each column
	colCopy []bool  // the column is a copy of its node for an op-amp input
	colsOf  [][]int // columns of each node
	ampCol  []int   // per op-amp: the column of its output
	gaps    []gap   // gaps[i] is between columns i and i+1
	termGap bool    // the output terminal follows the last column on the main row
	used    []bool  // parts placed

	trunks  []trunk // columns first, then one per op-amp
	items   []laneItem
	aboveY  []int // y of each lane above
	belowY  []int
	hy      int // hang line: top of the parts to ground
	colX    []int
	block   []int // width of the hung parts right of a column
	termX   int
	termExt int
	left    int

	partRef, partVal []string
	partW            []int // widest label of each part
}

func (l *layout) node(n string) int {
	if n == circuit.Ground {
		return -1
	}
	return l.idx[n]
}

func (l *layout) ref(local string) string {
	if l.refs == nil {
		return local
	}
	if r := l.refs(local); r != "" {
		return r
	}
	return local
}

// lay lays out a valid stage.
func lay(st *circuit.Stage, refs func(string) string, title string) *drawing {
	return layLabelled(st, refs, title, "in", "out")
}

// layLabelled is lay with the input and output terminals labelled in and
// out.
func layLabelled(st *circuit.Stage, refs func(string) string, title, in, out string) *drawing {
	l := &layout{st: st, refs: refs, idx: make(map[string]int, 16), inLabel: in, outLabel: out}
	l.indexNodes()
	l.ranks()
	l.chooseInputs()
	drop := make([]bool, len(l.nodes))
	for {
		l.buildColumns(drop)
		l.classifyParts()
		n := l.idleColumn()
		if n < 0 {
			break
		}
		drop[n] = true
	}
	l.placeX()
	l.assignLanes()
	for range len(l.items) + 4 {
		l.placeX()
		l.fillTrunks()
		if l.placeBodies() {
			break
		}
	}
	return l.emit(title)
}

// indexNodes numbers the non-ground nodes in order of appearance, In first.
func (l *layout) indexNodes() {
	add := func(n string) {
		if n == circuit.Ground {
			return
		}
		if _, ok := l.idx[n]; !ok {
			l.idx[n] = len(l.nodes)
			l.nodes = append(l.nodes, n)
		}
	}
	add(circuit.In)
	for _, p := range l.st.Parts {
		add(p.A)
		add(p.B)
	}
	for _, u := range l.st.OpAmps {
		add(u.Plus)
		add(u.Minus)
		add(u.Out)
	}
	n := len(l.nodes)
	l.driver = make([]int, n)
	for i := range l.driver {
		l.driver[i] = -1
	}
	for k, u := range l.st.OpAmps {
		l.driver[l.idx[u.Out]] = k
	}
	l.partRef = make([]string, len(l.st.Parts))
	l.partVal = make([]string, len(l.st.Parts))
	l.partW = make([]int, len(l.st.Parts))
	for i, p := range l.st.Parts {
		l.partRef[i] = l.ref(p.Ref)
		l.partVal[i] = FormatValue(p.Value, p.Kind)
		l.partW[i] = max(textWidth(l.partRef[i], font), textWidth(l.partVal[i], font))
	}
}

// ranks orders the nodes along the signal: signal edges run through parts
// (but never into an op-amp output, which only its op-amp drives) and from
// op-amp inputs to the output; a depth-first search from In drops the edges
// that close cycles (feedback), and each node's rank is its longest path
// from In over the rest. Nodes that In does not reach are ranked after, by
// further searches from the first of them.
func (l *layout) ranks() {
	n := len(l.nodes)
	adj := make([][]int, n)
	for _, p := range l.st.Parts {
		a, b := l.node(p.A), l.node(p.B)
		if a < 0 || b < 0 {
			continue
		}
		if l.driver[b] < 0 {
			adj[a] = append(adj[a], b)
		}
		if l.driver[a] < 0 {
			adj[b] = append(adj[b], a)
		}
	}
	for _, u := range l.st.OpAmps {
		o := l.idx[u.Out]
		for _, in := range [2]string{u.Plus, u.Minus} {
			if i := l.node(in); i >= 0 && i != o {
				adj[i] = append(adj[i], o)
			}
		}
	}
	const (
		fresh = iota
		open
		done
	)
	state := make([]uint8, n)
	pass := make([]int, n)
	dag := make([][]int, n)
	l.rank = make([]int, n)
	var order []int
	var visit func(u, p int)
	visit = func(u, p int) {
		state[u], pass[u] = open, p
		for _, v := range adj[u] {
			switch state[v] {
			case fresh:
				dag[u] = append(dag[u], v)
				visit(v, p)
			case done:
				if pass[v] == p {
					dag[u] = append(dag[u], v)
				}
			}
		}
		state[u] = done
		order = append(order, u)
	}
	base := 0
	for root := range n {
		if state[root] != fresh {
			continue
		}
		order = order[:0]
		visit(root, root)
		for _, u := range order {
			l.rank[u] = -1
		}
		l.rank[root] = base
		top := base
		for i := len(order) - 1; i >= 0; i-- {
			u := order[i]
			for _, v := range dag[u] {
				l.rank[v] = max(l.rank[v], l.rank[u]+1)
				top = max(top, l.rank[v])
			}
		}
		base = top + 1
	}
}

// chooseInputs puts on each op-amp's top input the input nearer In (a real
// node, not ground nor the op-amp's own output, when it has one) and
// decides how the bottom input is drawn; a bottom node becomes the op-amp's
// secondary node, drawn below it, when nothing else claims it.
func (l *layout) chooseInputs() {
	na := len(l.st.OpAmps)
	l.mainIn = make([]int, na)
	l.topPlus = make([]bool, na)
	l.bot = make([]int, na)
	l.botNode = make([]int, na)
	isMain := make([]bool, len(l.nodes))
	for k, u := range l.st.OpAmps {
		o := l.idx[u.Out]
		pl, mi := l.node(u.Plus), l.node(u.Minus)
		real := func(i int) bool { return i >= 0 && i != o }
		top := true // Plus on top
		switch {
		case real(pl) && real(mi):
			top = l.rank[pl] <= l.rank[mi]
		case real(mi):
			top = false
		case real(pl):
		default: // ground and the output itself: the output on top
			top = pl == o
		}
		t, b := pl, mi
		if !top {
			t, b = mi, pl
		}
		l.mainIn[k], l.topPlus[k], l.botNode[k] = t, top, b
		isMain[t] = true
	}
	l.secOf = make([]int, len(l.nodes))
	for i := range l.secOf {
		l.secOf[i] = -1
	}
	for k, u := range l.st.OpAmps {
		b := l.botNode[k]
		switch {
		case b < 0:
			l.bot[k] = botGround
		case b == l.idx[u.Out]:
			l.bot[k] = botSelf
		case b != 0 && l.driver[b] < 0 && !isMain[b] && l.secOf[b] < 0:
			l.bot[k] = botSecondary
			l.secOf[b] = k
		default:
			l.bot[k] = botDrop
		}
	}
}

// buildColumns puts the main-row nodes (all but the secondary ones) in
// columns by rank. Each op-amp sits in the gap left of its output's column,
// so the column left of it must be its top input: when it is not, a copy of
// that node is placed there (copies of a node are joined by a wire above).
//
// A node's own column (not a copy) is left out when drop says so: see
// idleColumn.
func (l *layout) buildColumns(drop []bool) {
	l.cols, l.colCopy, l.items = l.cols[:0], l.colCopy[:0], l.items[:0]
	order := make([]int, 0, len(l.nodes))
	for i := range l.nodes {
		if l.secOf[i] < 0 {
			order = append(order, i)
		}
	}
	slices.SortStableFunc(order, func(a, b int) int { return l.rank[a] - l.rank[b] })
	l.colsOf = make([][]int, len(l.nodes))
	l.ampCol = make([]int, len(l.st.OpAmps))
	push := func(n int, copied bool) {
		l.colsOf[n] = append(l.colsOf[n], len(l.cols))
		l.cols = append(l.cols, n)
		l.colCopy = append(l.colCopy, copied)
	}
	for _, n := range order {
		k := l.driver[n]
		if k < 0 {
			if len(l.colsOf[n]) == 0 && !drop[n] {
				push(n, false)
			}
			continue
		}
		m := l.mainIn[k]
		if len(l.cols) == 0 || l.cols[len(l.cols)-1] != m || m == n {
			push(m, true)
		}
		push(n, false)
		l.ampCol[k] = len(l.cols) - 1
	}
	nc := len(l.cols)
	l.gaps = make([]gap, max(nc-1, 0))
	for k, c := range l.ampCol {
		l.gaps[c-1] = gap{kind: gapAmp, idx: k}
	}
	l.used = make([]bool, len(l.st.Parts))
	for i := range l.gaps {
		g := &l.gaps[i]
		if g.kind == gapAmp {
			continue
		}
		a, b := l.cols[i], l.cols[i+1]
		for j, p := range l.st.Parts {
			pa, pb := l.node(p.A), l.node(p.B)
			if !l.used[j] && pa >= 0 && pb >= 0 && (pa == a && pb == b || pa == b && pb == a) {
				g.kind, g.idx, g.fw = gapPart, j, l.partW[j]+4
				l.used[j] = true
				break
			}
		}
	}
	out := l.idx[l.st.Out]
	l.termGap = l.cols[nc-1] == out
	l.trunks = make([]trunk, nc+len(l.st.OpAmps))
	for i, n := range l.cols {
		l.trunks[i].net = l.nodes[n]
	}
	for k := range l.st.OpAmps {
		if b := l.botNode[k]; b >= 0 {
			l.trunks[nc+k].net = l.nodes[b]
		}
	}
}

// nearest returns the column of node n nearest to position q (in column
// units), or the op-amp trunk of a secondary node.
func (l *layout) nearest(n int, q float64) (trunkID int, pos float64) {
	if k := l.secOf[n]; k >= 0 {
		return len(l.cols) + k, float64(l.ampCol[k]) - 0.5
	}
	best, bd := -1, 0.0
	for _, c := range l.colsOf[n] {
		d := float64(c) - q
		if d < 0 {
			d = -d
		}
		if best < 0 || d < bd {
			best, bd = c, d
		}
	}
	return best, float64(best)
}

// classifyParts hangs parts to ground from their node's trunk and turns
// the other parts, the copy joins, the op-amps' bottom wires and the
// output terminal into lane items.
func (l *layout) classifyParts() {
	nc := len(l.cols)
	for j, p := range l.st.Parts {
		if l.used[j] {
			continue
		}
		a, b := l.node(p.A), l.node(p.B)
		if a < 0 || b < 0 { // to ground: hung from the node's first column
			n := max(a, b)
			t := len(l.cols) + l.secOf[n]
			if l.secOf[n] < 0 {
				t = l.colsOf[n][0]
			}
			l.trunks[t].hung = append(l.trunks[t].hung, j)
			continue
		}
		sa, sb := l.secOf[a] >= 0, l.secOf[b] >= 0
		var ta, tb int
		switch {
		case sa && sb:
			ta, _ = l.nearest(a, 0)
			tb, _ = l.nearest(b, 0)
		case sa:
			t, q := l.nearest(a, 0)
			ta = t
			tb, _ = l.nearest(b, q)
		case sb:
			t, q := l.nearest(b, 0)
			tb = t
			ta, _ = l.nearest(a, q)
		default: // the pair of copies nearest each other
			bd := -1.0
			for _, ca := range l.colsOf[a] {
				cb, qb := l.nearest(b, float64(ca))
				d := qb - float64(ca)
				if d < 0 {
					d = -d
				}
				if bd < 0 || d < bd {
					ta, tb, bd = ca, cb, d
				}
			}
		}
		l.items = append(l.items, laneItem{
			part:  j,
			ends:  [2]end{{ta, p.A}, {tb, p.B}},
			above: ta < nc && tb < nc,
			fw:    l.partW[j] + 4,
		})
	}
	for n, cs := range l.colsOf {
		for i := 1; i < len(cs); i++ {
			l.items = append(l.items, laneItem{part: -1, ends: [2]end{{cs[i-1], l.nodes[n]}, {cs[i], l.nodes[n]}}, above: true, join: true})
		}
	}
	for k := range l.st.OpAmps {
		switch l.bot[k] {
		case botSelf, botDrop:
			b := l.botNode[k]
			t, _ := l.nearest(b, float64(l.ampCol[k])-0.5)
			if l.bot[k] == botSelf {
				t = l.ampCol[k]
			}
			l.items = append(l.items, laneItem{part: -1, ends: [2]end{{nc + k, l.nodes[b]}, {t, l.nodes[b]}}})
		}
	}
	if !l.termGap {
		out := l.idx[l.st.Out]
		cs := l.colsOf[out]
		l.items = append(l.items, laneItem{part: -1, ends: [2]end{{cs[len(cs)-1], l.st.Out}, {-1, l.st.Out}}, above: true})
	}
	for t := range l.trunks {
		tr := &l.trunks[t]
		off := 0
		for i, j := range tr.hung {
			if i > 0 {
				off += hungHalf + 6
			}
			tr.offs = append(tr.offs, off)
			off += hungDX + l.partW[j] + 4
		}
		tr.foot = off
	}
}

// idleColumn returns a node whose own column connects to nothing but its
// copies (it is drawn where it is used instead), or −1.
func (l *layout) idleColumn() int {
	nc := len(l.cols)
	busy := make([]bool, nc)
	busy[l.colsOf[0][0]] = true // the input terminal
	if l.termGap {
		busy[nc-1] = true
	}
	for i, g := range l.gaps {
		if g.kind != gapEmpty {
			busy[i], busy[i+1] = true, true
		}
	}
	for _, it := range l.items {
		for _, e := range it.ends {
			if !it.join && e.trunk >= 0 && e.trunk < nc {
				busy[e.trunk] = true
			}
		}
	}
	for c := range nc {
		if !busy[c] && len(l.trunks[c].hung) == 0 && !l.colCopy[c] && len(l.colsOf[l.cols[c]]) > 1 {
			return l.cols[c]
		}
	}
	return -1
}

// px returns the x of op-amp k's input pins (the end of their leads).
func (l *layout) px(k int) int { return l.gaps[l.ampCol[k]-1].tx - lead }

// endX returns the x of a lane item end.
func (l *layout) endX(e end) int {
	if e.trunk < 0 {
		return l.termX - termR
	}
	return l.trunks[e.trunk].x
}

// placeX computes every x from the columns, the gaps and their widening.
func (l *layout) placeX() {
	nc := len(l.cols)
	l.colX = slices.Grow(l.colX[:0], nc)[:nc]
	l.block = slices.Grow(l.block[:0], nc)[:nc]
	l.left = margin + 2*termR + 4 + textWidth(l.inLabel, termFont) + termGap
	x := l.left
	for i := range nc {
		l.colX[i] = x
		l.trunks[i].x = x
		l.block[i] = l.trunks[i].foot
		x += l.block[i]
		if i == nc-1 {
			break
		}
		g := &l.gaps[i]
		g.gL = x
		switch g.kind {
		case gapPart:
			w := max(minGap, g.fw+2*stub+4) + g.extraL + g.extraR
			g.c = x + g.extraL + (w-g.extraL-g.extraR)/2
			x += w
		case gapEmpty:
			x += minGap + g.extraL + g.extraR
		case gapAmp:
			k := g.idx
			sec := &l.trunks[nc+k]
			pad := stub
			switch {
			case len(sec.hung) > 0:
				pad = hungHalf + 2
			case l.bot[k] == botGround:
				pad = 10 // clear of a trunk at the left column
			}
			px := x + pad + g.extraL
			g.tx = px + lead
			sec.x = px
			right := g.tx + triW + lead + stub
			if len(sec.hung) > 0 {
				right = max(right, px+sec.foot+hungHalf+2)
			}
			if w := textWidth(l.ref(l.st.OpAmps[k].Ref), ampFont); w > ampInside {
				right = max(right, g.tx+w+4)
			}
			x = right + g.extraR
		}
	}
	l.termX = l.colX[nc-1] + l.block[nc-1] + termGap + l.termExt
	for i := range l.items {
		it := &l.items[i]
		x1, x2 := l.endX(it.ends[0]), l.endX(it.ends[1])
		if x1 > x2 {
			it.ends[0], it.ends[1] = it.ends[1], it.ends[0]
			x1, x2 = x2, x1
		}
		it.x1, it.x2 = x1, x2
	}
}

// ampInside is the widest op-amp designator drawn inside the triangle.
const ampInside = 28

// assignLanes stacks the lane items: shortest first, each in the lane
// nearest the main row where it overlaps nothing, so that nested runs sit
// inside the runs that span them. It then sets the lanes' y.
func (l *layout) assignLanes() {
	order := make([]int, len(l.items))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		ia, ib := &l.items[a], &l.items[b]
		return (ia.x2 - ia.x1) - (ib.x2 - ib.x1)
	})
	var above, below [][]int // items per lane
	for _, i := range order {
		it := &l.items[i]
		lanes := &below
		if it.above {
			lanes = &above
		}
		lane := -1
		for j, items := range *lanes {
			free := true
			for _, o := range items {
				if ot := &l.items[o]; it.x1 < ot.x2 && ot.x1 < it.x2 {
					free = false
					break
				}
			}
			if free {
				lane = j
				break
			}
		}
		if lane < 0 {
			lane = len(*lanes)
			*lanes = append(*lanes, nil)
		}
		(*lanes)[lane] = append((*lanes)[lane], i)
		it.lane = lane
	}
	hasPart := func(items []int) bool {
		for _, i := range items {
			if l.items[i].part >= 0 {
				return true
			}
		}
		return false
	}
	l.aboveY = l.aboveY[:0]
	prev, y := false, 0
	for j, items := range above {
		p := hasPart(items)
		switch {
		case j > 0:
			y -= abovePitch(prev, p)
		case p:
			y = -(aboveClear + labelDown)
		default:
			y = -aboveClear - 1
		}
		l.aboveY = append(l.aboveY, y)
		prev = p
	}
	l.belowY = l.belowY[:0]
	y = 0
	for j, items := range below {
		p := hasPart(items)
		switch {
		case j > 0:
			y += belowPitch(prev, p)
		case p:
			y = belowClear + labelUp + 1
		default:
			y = belowClear
		}
		l.belowY = append(l.belowY, y)
		prev = p
	}
	l.hy = belowClear
	if n := len(l.belowY); n > 0 {
		l.hy = l.belowY[n-1] + 8
		if prev {
			l.hy = l.belowY[n-1] + labelDown + 6
		}
	}
	for i := range l.items {
		it := &l.items[i]
		if it.above {
			it.y = l.aboveY[it.lane]
		} else {
			it.y = l.belowY[it.lane]
		}
	}
}

// abovePitch is the distance from a lane above the main row to the next
// one up, by whether each holds a part.
func abovePitch(lower, upper bool) int {
	switch {
	case lower && upper:
		return laneGapPart
	case lower:
		return labelUp + 5
	case upper:
		return labelDown + 5
	}
	return 10
}

// belowPitch is the distance from a lane below the main row to the next
// one down, by whether each holds a part.
func belowPitch(upper, lower bool) int {
	switch {
	case upper && lower:
		return laneGapPart
	case upper:
		return labelDown + 5
	case lower:
		return labelUp + 5
	}
	return 10
}

// fillTrunks collects the y at which each trunk meets a wire or a pin.
func (l *layout) fillTrunks() {
	nc := len(l.cols)
	for t := range l.trunks {
		l.trunks[t].ys = l.trunks[t].ys[:0]
	}
	add := func(t, y int) { l.trunks[t].ys = append(l.trunks[t].ys, y) }
	add(l.colsOf[0][0], 0) // the input terminal
	for i, g := range l.gaps {
		switch g.kind {
		case gapPart:
			add(i, 0)
			add(i+1, 0)
		case gapAmp:
			add(i, 0)
			add(i+1, ampMidY)
			if l.bot[g.idx] != botGround {
				add(nc+g.idx, pinY)
			}
		}
	}
	if l.termGap {
		add(nc-1, ampMidY)
	}
	for _, it := range l.items {
		for _, e := range it.ends {
			if e.trunk >= 0 {
				add(e.trunk, it.y)
			}
		}
	}
	for t := range l.trunks {
		tr := &l.trunks[t]
		if len(tr.hung) > 0 {
			tr.ys = append(tr.ys, l.hy)
		}
		slices.Sort(tr.ys)
		tr.ys = slices.Compact(tr.ys)
	}
}

// placeBodies puts each lane part in the free stretch of its run nearest
// the run's middle, clear of the trunks that cross the lane. When a run has
// no stretch wide enough it widens the layout after the trunk that starts
// the widest stretch and reports false; the caller lays out again.
func (l *layout) placeBodies() bool {
	ok := true
	var xs []int
	for i := range l.items {
		it := &l.items[i]
		if it.part < 0 {
			continue
		}
		xs = append(xs[:0], it.x1, it.x2)
		for t := range l.trunks {
			tr := &l.trunks[t]
			if len(tr.ys) < 2 || tr.x <= it.x1 || tr.x >= it.x2 {
				continue
			}
			if tr.ys[0] < it.y && it.y < tr.ys[len(tr.ys)-1] {
				xs = append(xs, tr.x)
			}
		}
		slices.Sort(xs)
		half := max(partLen/2+stub, (it.fw+1)/2+4)
		mid := (it.x1 + it.x2) / 2
		best, bestD := -1, 0
		wide, wideW := 0, -1
		for j := 1; j < len(xs); j++ {
			u, v := xs[j-1], xs[j]
			if v-u > wideW {
				wide, wideW = j, v-u
			}
			if v-u < 2*half {
				continue
			}
			d := (u+v)/2 - mid
			if d < 0 {
				d = -d
			}
			if best < 0 || d < bestD {
				best, bestD = j, d
			}
		}
		if best >= 0 {
			it.bodyX = (xs[best-1] + xs[best]) / 2
			continue
		}
		it.bodyX = (xs[wide-1] + xs[wide]) / 2
		if ok {
			l.widen(xs[wide-1], 2*half-wideW)
			ok = false
		}
	}
	return ok
}

// widen adds d units right after the trunk at x.
func (l *layout) widen(x, d int) {
	nc := len(l.cols)
	for i := range nc {
		if l.colX[i] != x {
			continue
		}
		if i == nc-1 {
			l.termExt += d
		} else {
			l.gaps[i].extraL += d
		}
		return
	}
	for k := range l.st.OpAmps {
		if l.trunks[nc+k].x == x && l.bot[k] != botGround {
			l.gaps[l.ampCol[k]-1].extraR += d
			return
		}
	}
	l.termExt += d // unreachable: every stretch starts at a trunk
}
