package schematic

import (
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/stretchr/testify/require"
)

// svgDoc is what the tests read back from an SVG.
type svgDoc struct {
	root      xml.StartElement
	viewBox   [4]int
	elements  []string // every element name
	wires     []seg
	parts     []svgPart
	amps      []svgAmp
	grounds   [][][]point // subpaths of each ground symbol
	terminals []svgTerm
	title     string
	texts     []string
}

type svgPart struct {
	ref, class string
	subpaths   [][]point
	texts      []string
}

type svgAmp struct {
	ref      string
	polygons [][]point
	leads    [][]point
	signs    [][]point
	texts    []string
}

type svgTerm struct {
	name   string
	cx, cy int
	r      int
	text   string
}

func attr(e xml.StartElement, name string) string {
	for _, a := range e.Attr {
		if a.Name.Local == name {
			return a.Value
		}
	}
	return ""
}

// parsePath reads the M and L commands that the package writes.
func parsePath(d string) ([][]point, error) {
	var subs [][]point
	f := strings.Fields(d)
	if len(f)%2 != 0 {
		return nil, fmt.Errorf("odd number of fields in %q", d)
	}
	for i := 0; i < len(f); i += 2 {
		cmd, xs := f[i][:1], f[i][1:]
		x, err1 := strconv.Atoi(xs)
		y, err2 := strconv.Atoi(f[i+1])
		if err1 != nil || err2 != nil {
			return nil, fmt.Errorf("bad point %q %q", f[i], f[i+1])
		}
		switch cmd {
		case "M":
			subs = append(subs, []point{{x, y}})
		case "L":
			if len(subs) == 0 {
				return nil, fmt.Errorf("L before M in %q", d)
			}
			subs[len(subs)-1] = append(subs[len(subs)-1], point{x, y})
		default:
			return nil, fmt.Errorf("command %q in %q", cmd, d)
		}
	}
	return subs, nil
}

func parsePoints(s string) ([]point, error) {
	var ps []point
	for _, f := range strings.Fields(s) {
		xs, ys, ok := strings.Cut(f, ",")
		x, err1 := strconv.Atoi(xs)
		y, err2 := strconv.Atoi(ys)
		if !ok || err1 != nil || err2 != nil {
			return nil, fmt.Errorf("bad point %q", f)
		}
		ps = append(ps, point{x, y})
	}
	return ps, nil
}

// parseSVG decodes the SVG strictly and collects its drawing.
func parseSVG(data []byte) (*svgDoc, error) {
	doc := &svgDoc{}
	dec := xml.NewDecoder(bytes.NewReader(data))
	var stack []xml.StartElement
	var part *svgPart
	var amp *svgAmp
	var term *svgTerm
	var text *strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			stack = append(stack, t)
			doc.elements = append(doc.elements, t.Name.Local)
			class := attr(t, "class")
			switch t.Name.Local {
			case "svg":
				doc.root = t
				f := strings.Fields(attr(t, "viewBox"))
				if len(f) != 4 {
					return nil, fmt.Errorf("viewBox %q", attr(t, "viewBox"))
				}
				for i := range f {
					if doc.viewBox[i], err = strconv.Atoi(f[i]); err != nil {
						return nil, err
					}
				}
			case "g":
				switch {
				case strings.HasPrefix(class, "part "):
					doc.parts = append(doc.parts, svgPart{ref: attr(t, "data-ref"), class: class})
					part = &doc.parts[len(doc.parts)-1]
				case class == "opamp":
					doc.amps = append(doc.amps, svgAmp{ref: attr(t, "data-ref")})
					amp = &doc.amps[len(doc.amps)-1]
				case class == "terminal":
					doc.terminals = append(doc.terminals, svgTerm{name: attr(t, "data-net")})
					term = &doc.terminals[len(doc.terminals)-1]
				}
			case "path":
				subs, err := parsePath(attr(t, "d"))
				if err != nil {
					return nil, err
				}
				switch {
				case class == "wire":
					for _, s := range subs {
						if len(s) != 2 {
							return nil, fmt.Errorf("wire subpath %v is not one segment", s)
						}
						doc.wires = append(doc.wires, seg{s[0], s[1], attr(t, "data-net")})
					}
				case class == "ground":
					doc.grounds = append(doc.grounds, subs)
				case part != nil:
					part.subpaths = append(part.subpaths, subs...)
				case amp != nil && class == "sign":
					amp.signs = append(amp.signs, subs...)
				case amp != nil:
					amp.leads = append(amp.leads, subs...)
				default:
					return nil, fmt.Errorf("stray path %v", t)
				}
			case "polygon":
				ps, err := parsePoints(attr(t, "points"))
				if err != nil {
					return nil, err
				}
				if amp == nil {
					return nil, fmt.Errorf("polygon outside an op-amp")
				}
				amp.polygons = append(amp.polygons, ps)
			case "circle":
				if term != nil {
					term.cx, _ = strconv.Atoi(attr(t, "cx"))
					term.cy, _ = strconv.Atoi(attr(t, "cy"))
					term.r, _ = strconv.Atoi(attr(t, "r"))
				}
			case "text", "title":
				text = &strings.Builder{}
			}
		case xml.CharData:
			if text != nil {
				text.Write(t)
			}
		case xml.EndElement:
			top := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			switch t.Name.Local {
			case "g":
				class := attr(top, "class")
				switch {
				case strings.HasPrefix(class, "part "):
					part = nil
				case class == "opamp":
					amp = nil
				case class == "terminal":
					term = nil
				}
			case "title":
				doc.title = text.String()
				text = nil
			case "text":
				s := text.String()
				text = nil
				doc.texts = append(doc.texts, s)
				switch {
				case part != nil:
					part.texts = append(part.texts, s)
				case amp != nil:
					amp.texts = append(amp.texts, s)
				case term != nil:
					term.text = s
				}
			}
		}
	}
	return doc, nil
}

func pointsBox(ps ...[]point) rect {
	r := rect{ps[0][0].x, ps[0][0].y, ps[0][0].x, ps[0][0].y}
	for _, s := range ps {
		for _, p := range s {
			r = r.union(rect{p.x, p.y, p.x, p.y})
		}
	}
	return r
}

func TestStageSVG(t *testing.T) {
	t.Parallel()
	for _, tc := range stages() {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var b bytes.Buffer
			require.NoError(t, Stage(&b, tc.st, Options{Title: tc.name, Refs: chainRefs}))
			doc, err := parseSVG(b.Bytes())
			require.NoError(t, err)

			// Self-contained: no scripts, styles, images or links.
			for _, e := range doc.elements {
				require.NotContains(t, []string{"script", "style", "image", "a", "use", "foreignObject"}, e)
			}
			require.NotContains(t, b.String(), "href")
			require.Equal(t, "sans-serif", attr(doc.root, "font-family"))
			require.Equal(t, tc.name, doc.title)
			vb := doc.viewBox
			require.Equal(t, strconv.Itoa(vb[2]), attr(doc.root, "width"))
			require.Equal(t, strconv.Itoa(vb[3]), attr(doc.root, "height"))
			view := rect{vb[0], vb[1], vb[0] + vb[2], vb[1] + vb[3]}

			// Ports: where a wire may end.
			ports := map[point]bool{}
			for _, p := range doc.parts {
				s := p.subpaths
				ports[s[0][0]] = true
				ports[s[len(s)-1][len(s[len(s)-1])-1]] = true
			}
			for _, a := range doc.amps {
				for _, l := range a.leads {
					ports[l[0]], ports[l[len(l)-1]] = true, true
				}
			}
			for _, g := range doc.grounds {
				ports[g[0][0]] = true
			}
			for _, tm := range doc.terminals {
				ports[point{tm.cx - tm.r, tm.cy}], ports[point{tm.cx + tm.r, tm.cy}] = true, true
			}
			ends := map[point]int{}
			netAt := map[point][]string{}
			for _, w := range doc.wires {
				ends[w.a]++
				ends[w.b]++
				netAt[w.a] = append(netAt[w.a], w.net)
				netAt[w.b] = append(netAt[w.b], w.net)
			}
			for _, w := range doc.wires {
				require.True(t, w.a.x == w.b.x || w.a.y == w.b.y, "wire %v is not orthogonal", w)
				for _, p := range [2]point{w.a, w.b} {
					require.True(t, ends[p] >= 2 || ports[p], "wire %v (%s) ends at %v on no node", w, w.net, p)
				}
			}

			// Op-amps: one triangle each, + and − marked, + on the Plus node.
			require.Len(t, doc.amps, len(tc.st.OpAmps))
			for _, u := range tc.st.OpAmps {
				var a *svgAmp
				for i := range doc.amps {
					if doc.amps[i].ref == chainRefs(u.Ref) {
						a = &doc.amps[i]
					}
				}
				require.NotNil(t, a, u.Ref)
				require.Len(t, a.polygons, 1)
				require.Len(t, a.polygons[0], 3)
				require.Equal(t, []string{chainRefs(u.Ref)}, a.texts)
				require.Len(t, a.signs, 3, "a plus (two strokes) and a minus")
				vert := a.signs[1] // the plus's vertical stroke
				require.Equal(t, vert[0].x, vert[1].x)
				plusY := (vert[0].y + vert[1].y) / 2
				px := a.leads[0][0].x
				at := point{px, plusY}
				if u.Plus == circuit.Ground {
					require.Equal(t, []string{circuit.Ground}, netAt[at])
				} else {
					require.Equal(t, []string{u.Plus}, netAt[at], "the + input of %s", u.Ref)
				}
			}

			// Parts: designator and value labels; terminals wired.
			require.Len(t, doc.parts, len(tc.st.Parts))
			grounds := map[point]bool{}
			for _, g := range doc.grounds {
				grounds[g[0][0]] = true
			}
			for _, p := range tc.st.Parts {
				var sp *svgPart
				for i := range doc.parts {
					if doc.parts[i].ref == chainRefs(p.Ref) {
						sp = &doc.parts[i]
					}
				}
				require.NotNil(t, sp, p.Ref)
				require.Equal(t, "part "+string(p.Kind), sp.class)
				require.Equal(t, []string{chainRefs(p.Ref), FormatValue(p.Value, p.Kind)}, sp.texts)
				s := sp.subpaths
				for _, tp := range [2]point{s[0][0], s[len(s)-1][len(s[len(s)-1])-1]} {
					require.True(t, ends[tp] > 0 || grounds[tp], "%s terminal %v is not wired", p.Ref, tp)
				}
			}

			// Terminals.
			require.Len(t, doc.terminals, 2)
			require.Equal(t, "in", doc.terminals[0].name)
			require.Equal(t, "in", doc.terminals[0].text)
			require.Equal(t, "out", doc.terminals[1].name)
			require.Equal(t, "out", doc.terminals[1].text)
			require.Equal(t, []string{tc.st.Out}, netAt[point{doc.terminals[1].cx - doc.terminals[1].r, doc.terminals[1].cy}])

			// Symbols do not overlap and stay in view.
			var boxes []rect
			for _, p := range doc.parts {
				boxes = append(boxes, pointsBox(p.subpaths...))
			}
			for _, a := range doc.amps {
				boxes = append(boxes, pointsBox(a.polygons...))
			}
			for _, g := range doc.grounds {
				boxes = append(boxes, pointsBox(g...))
			}
			for i, a := range boxes {
				require.True(t, a.x0 >= view.x0 && a.y0 >= view.y0 && a.x1 <= view.x1 && a.y1 <= view.y1, "%v outside %v", a, view)
				for _, b := range boxes[i+1:] {
					require.False(t, a.overlaps(b), "symbols %v and %v overlap", a, b)
				}
			}
		})
	}
}

func TestStageEscaping(t *testing.T) {
	t.Parallel()
	const evil = `<script>alert("x")&'</script>`
	tests := []struct {
		name string
		opt  Options
		want string // a text that must come back verbatim
	}{
		{"title", Options{Title: evil}, evil},
		{"part refs", Options{Refs: func(l string) string { return evil + l }}, evil + "R1"},
		{"both", Options{Title: evil + "&amp;", Refs: func(l string) string { return `"'&<>` + l }}, `"'&<>U1`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var b bytes.Buffer
			require.NoError(t, Stage(&b, sallenKeyLowpass(), tc.opt))
			require.NotContains(t, b.String(), "<script")
			doc, err := parseSVG(b.Bytes())
			require.NoError(t, err)
			require.NotContains(t, doc.elements, "script")
			require.Contains(t, append(doc.texts, doc.title), tc.want)
			if tc.opt.Title != "" {
				require.Equal(t, tc.opt.Title, doc.title)
				require.Equal(t, tc.opt.Title, attr(doc.root, "aria-label"))
			}
		})
	}
}

var errBoom = errors.New("boom")

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errBoom }

func TestStageInvalid(t *testing.T) {
	t.Parallel()
	good := sallenKeyLowpass()
	with := func(f func(st *circuit.Stage)) circuit.Stage {
		st := good
		st.Parts = append([]circuit.Part(nil), good.Parts...)
		st.OpAmps = append([]circuit.OpAmp(nil), good.OpAmps...)
		f(&st)
		return st
	}
	tests := []struct {
		name string
		st   circuit.Stage
	}{
		{"empty", circuit.Stage{}},
		{"no op-amp", with(func(st *circuit.Stage) { st.OpAmps = nil })},
		{"op-amp without output", with(func(st *circuit.Stage) { st.OpAmps[0].Out = "" })},
		{"output is the input", with(func(st *circuit.Stage) { st.OpAmps[0].Out = circuit.In })},
		{"out unset", with(func(st *circuit.Stage) { st.Out = "" })},
		{"out is no op-amp output", with(func(st *circuit.Stage) { st.Out = "a" })},
		{"unknown out node", with(func(st *circuit.Stage) { st.Out = "nowhere" })},
		{"floating node", with(func(st *circuit.Stage) {
			st.Parts = append(st.Parts, circuit.Part{Ref: "R9", Kind: circuit.Resistor, A: "a", B: "x", Value: 1e3})
		})},
		{"NaN value", with(func(st *circuit.Stage) { st.Parts[0].Value = math.NaN() })},
		{"zero value", with(func(st *circuit.Stage) { st.Parts[0].Value = 0 })},
		{"unknown kind", with(func(st *circuit.Stage) { st.Parts[0].Kind = "inductor" })},
		{"bad ref", with(func(st *circuit.Stage) { st.Parts[0].Ref = "<R1>" })},
		{"duplicate ref", with(func(st *circuit.Stage) { st.Parts[1].Ref = "R1" })},
		{"part shorted", with(func(st *circuit.Stage) { st.Parts[0].B = st.Parts[0].A })},
		{"bad node name", with(func(st *circuit.Stage) { st.Parts[0].B = "a<b" })},
		{"inputs tied", with(func(st *circuit.Stage) { st.OpAmps[0].Minus = "p" })},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var b bytes.Buffer
			err := Stage(&b, tc.st, Options{Title: "x"})
			require.ErrorIs(t, err, circuit.ErrInvalid)
			require.Zero(t, b.Len(), "nothing is written for an invalid stage")
		})
	}
	t.Run("writer error", func(t *testing.T) {
		t.Parallel()
		require.ErrorIs(t, Stage(failWriter{}, good, Options{}), errBoom)
	})
}
