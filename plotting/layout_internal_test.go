package plotting

import (
	"bytes"
	"encoding/xml"
	"io"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
)

// svgText is a <text> element as vgsvg writes it, in canvas coordinates
// (y up, as the paths): vgsvg writes y negated under scale(1, −1).
type svgText struct {
	x, y, sizePt float64
	rotated      bool // inside a rotated group (a vertical axis label)
	s            string
}

// rect is an axis-aligned box in canvas coordinates.
type rect struct{ x0, y0, x1, y1 float64 }

func (r rect) overlaps(o rect) bool {
	return r.x0 < o.x1 && o.x0 < r.x1 && r.y0 < o.y1 && o.y0 < r.y1
}

func (r rect) contains(x, y float64) bool {
	return x > r.x0 && x < r.x1 && y > r.y0 && y < r.y1
}

// layoutDoc is what the layout tests read from an SVG: its viewBox width,
// its texts, and its paths as point lists with their style.
type layoutDoc struct {
	width float64
	texts []svgText
	paths []struct {
		style string
		pts   [][2]float64
	}
}

var (
	fontSize = regexp.MustCompile(`font-size:([0-9.]+)px`)
	number   = regexp.MustCompile(`-?[0-9]+(\.[0-9]+)?(e[-+]?[0-9]+)?`)
)

func parseLayout(t *testing.T, b []byte) layoutDoc {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	var doc layoutDoc
	var rotated []bool // per open <g>
	var cur *svgText
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		require.NoError(t, err)
		switch el := tok.(type) {
		case xml.StartElement:
			attr := map[string]string{}
			for _, a := range el.Attr {
				attr[a.Name.Local] = a.Value
			}
			switch el.Name.Local {
			case "svg":
				if doc.width == 0 {
					f := strings.Fields(attr["viewBox"])
					require.Len(t, f, 4, "the root has a viewBox")
					doc.width, err = strconv.ParseFloat(f[2], 64)
					require.NoError(t, err)
				}
			case "g":
				rotated = append(rotated, strings.Contains(attr["transform"], "rotate"))
			case "text":
				x, _ := strconv.ParseFloat(attr["x"], 64)
				y, _ := strconv.ParseFloat(attr["y"], 64)
				m := fontSize.FindStringSubmatch(attr["style"])
				require.NotNil(t, m, "every text has a size: %s", attr["style"])
				size, _ := strconv.ParseFloat(m[1], 64)
				cur = &svgText{x: x, y: -y, sizePt: size}
				for _, r := range rotated {
					cur.rotated = cur.rotated || r
				}
			case "path":
				var pts [][2]float64
				nums := number.FindAllString(attr["d"], -1)
				for i := 0; i+1 < len(nums); i += 2 {
					x, _ := strconv.ParseFloat(nums[i], 64)
					y, _ := strconv.ParseFloat(nums[i+1], 64)
					pts = append(pts, [2]float64{x, y})
				}
				doc.paths = append(doc.paths, struct {
					style string
					pts   [][2]float64
				}{attr["style"], pts})
			}
		case xml.CharData:
			if cur != nil {
				cur.s += string(el)
			}
		case xml.EndElement:
			switch el.Name.Local {
			case "g":
				rotated = rotated[:len(rotated)-1]
			case "text":
				doc.texts = append(doc.texts, *cur)
				cur = nil
			}
		}
	}
	return doc
}

// frameStrokeSVG is the data area's border as vgsvg writes it.
const frameStrokeSVG = "stroke:#404040"

// dataAreas returns the boxes of the frames (the data areas) of doc.
func (d layoutDoc) dataAreas() []rect {
	var out []rect
	for _, p := range d.paths {
		if !strings.Contains(p.style, frameStrokeSVG) || len(p.pts) != 5 {
			continue
		}
		r := rect{p.pts[0][0], p.pts[0][1], p.pts[0][0], p.pts[0][1]}
		for _, pt := range p.pts {
			r.x0, r.x1 = min(r.x0, pt[0]), max(r.x1, pt[0])
			r.y0, r.y1 = min(r.y0, pt[1]), max(r.y1, pt[1])
		}
		out = append(out, r)
	}
	return out
}

// legendNames reports whether s is a legend name of some plot.
func legendName(s string) bool {
	switch s {
	case idealName, builtName, maskName, envelopeOuterName, envelopeInnerName, noiseName, quantName, tolLowName:
		return true
	}
	return strings.HasPrefix(s, "settled to ")
}

// legendBoxes returns the box of each legend entry of doc: its name's
// text, measured as render measures it, and its sample to the left.
func (d layoutDoc) legendBoxes() []rect {
	var out []rect
	for _, tx := range d.texts {
		if tx.rotated || !legendName(tx.s) {
			continue
		}
		w := float64(legendText.Width(tx.s))
		// The name's ascent above and descent below its baseline are under
		// its size and a third of it.
		out = append(out, rect{tx.x - legendThumbPt - legendGapPt, tx.y - tx.sizePt/3, tx.x + w, tx.y + tx.sizePt})
	}
	return out
}

// layoutCases are every kind of figure: the four frequency and step
// plots of three designs with the stand-in circuit, and the public plots
// of a design with a converter, Monte Carlo trials, a settling panel and
// a noise analysis, with and without a gain tolerance.
func layoutCases(t *testing.T) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	for _, spec := range []struct{ name, json string }{
		{"lowpass", lowpassSpec}, {"bandpass", bandpassSpec}, {"bandstop", bandstopSpec},
	} {
		d := idealDesign(t, spec.json)
		for _, pf := range plotFuncs {
			var buf bytes.Buffer
			require.NoError(t, pf.fn(&buf, d, fakeBuilt(d), Options{}))
			out[spec.name+"/"+pf.name] = buf.Bytes()
		}
	}
	tolSpec := strings.Replace(benchSpec, `"passband_ripple_db": 0.5,`, `"passband_ripple_db": 0.5, "gain_tolerance_db": 0.2,`, 1)
	for _, spec := range []struct{ name, json string }{{"converter", benchSpec}, {"tolerance", tolSpec}} {
		d := builtDesign(t, spec.json)
		for _, pf := range []struct {
			name string
			fn   func(io.Writer, *synth.Design, Options) error
		}{{"bode", Bode}, {"passband", Passband}, {"delay", GroupDelay}, {"step", Step}, {"noise", Noise}} {
			var buf bytes.Buffer
			require.NoError(t, pf.fn(&buf, d, Options{}))
			out[spec.name+"/"+pf.name] = buf.Bytes()
		}
	}
	return out
}

// TestLegendOutsideData checks, in the SVG's own coordinates, that no
// legend entry (name and sample) overlaps a data area, and that no point
// of anything drawn in a data area (curves, bands, the mask, the settling
// marks, the grid) lies inside a legend entry.
func TestLegendOutsideData(t *testing.T) {
	t.Parallel()
	for name, svg := range layoutCases(t) {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			doc := parseLayout(t, svg)
			areas := doc.dataAreas()
			require.NotEmpty(t, areas)
			boxes := doc.legendBoxes()
			require.NotEmpty(t, boxes, "the figure has a legend")
			for _, b := range boxes {
				for _, a := range areas {
					require.False(t, b.overlaps(a), "legend entry %v overlaps the data area %v", b, a)
				}
			}
			drawn := 0
			for _, p := range doc.paths {
				inData := false
				for _, pt := range p.pts {
					for _, a := range areas {
						inData = inData || a.contains(pt[0], pt[1])
					}
				}
				if !inData {
					continue // a legend sample, the background, a tick
				}
				drawn++
				for _, pt := range p.pts {
					for _, b := range boxes {
						require.False(t, b.contains(pt[0], pt[1]), "point %v of %q lies in legend entry %v", pt, p.style, b)
					}
				}
			}
			require.Positive(t, drawn, "a curve in a data area")
		})
	}
}

// TestTextSize checks the readability rule on every text of every figure
// at its default size: the page shows a figure PageFigureWidthPx CSS px
// wide (a 1440 px window's content column), so a text of size s user units
// in a viewBox w units wide is drawn s × PageFigureWidthPx / w px high,
// which must be at least MinTextPx; and MinFigureWidthPx is the narrowest
// width at which that still holds.
func TestTextSize(t *testing.T) {
	t.Parallel()
	// 11 pt × 1100 px / 720 pt = 16.8 px.
	require.GreaterOrEqual(t, float64(TickFontPt)*PageFigureWidthPx/DefaultWidthPt, float64(MinTextPx))
	for name, svg := range layoutCases(t) {
		t.Run(name, func(t *testing.T) {
			t.Parallel()
			doc := parseLayout(t, svg)
			require.Equal(t, float64(DefaultWidthPt), doc.width)
			require.NotEmpty(t, doc.texts)
			for _, tx := range doc.texts {
				px := tx.sizePt * PageFigureWidthPx / doc.width
				require.GreaterOrEqual(t, px, float64(MinTextPx), "%q is %.3g px at %d px", tx.s, px, PageFigureWidthPx)
				require.GreaterOrEqual(t, tx.sizePt*MinFigureWidthPx/doc.width, float64(MinTextPx)-1e-9,
					"%q at the narrowest width", tx.s)
			}
		})
	}
}

// TestEnvelopeUnderMask checks the drawing order (the SVG's z-order) of
// the magnitude and passband plots of a design with Monte Carlo trials:
// within the data area, every band of the envelope comes before (under)
// every shaded region of the mask, so that the forbidden regions keep
// their colour where a band crosses them.
func TestEnvelopeUnderMask(t *testing.T) {
	t.Parallel()
	d := builtDesign(t, benchSpec)
	require.NotNil(t, d.MonteCarlo)
	for _, pf := range []struct {
		name string
		fn   func(io.Writer, *synth.Design, Options) error
	}{{"bode", Bode}, {"passband", Passband}} {
		t.Run(pf.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			require.NoError(t, pf.fn(&buf, d, Options{}))
			doc := parseLayout(t, buf.Bytes())
			areas := doc.dataAreas()
			lastBand, firstMask := -1, len(doc.paths)
			for i, p := range doc.paths {
				inData := false
				for _, pt := range p.pts {
					for _, a := range areas {
						inData = inData || a.contains(pt[0], pt[1])
					}
				}
				switch {
				case !inData:
				case strings.Contains(p.style, envelopeFillSVG):
					lastBand = i
				case strings.Contains(p.style, maskFillSVG):
					firstMask = min(firstMask, i)
				}
			}
			require.GreaterOrEqual(t, lastBand, 0, "the envelope is drawn")
			require.Less(t, firstMask, len(doc.paths), "the mask is drawn")
			require.Less(t, lastBand, firstMask, "bands under the mask")
		})
	}
}

// At the smallest size, a legend of many names wraps onto rows that take
// most of the height; the plots are still drawn, with finite coordinates.
func TestSmallestSize(t *testing.T) {
	t.Parallel()
	tolSpec := strings.Replace(benchSpec, `"passband_ripple_db": 0.5,`, `"passband_ripple_db": 0.5, "gain_tolerance_db": 0.2,`, 1)
	d := builtDesign(t, tolSpec)
	for _, pf := range []struct {
		name string
		fn   func(io.Writer, *synth.Design, Options) error
	}{{"bode", Bode}, {"passband", Passband}, {"delay", GroupDelay}, {"step", Step}, {"noise", Noise}} {
		t.Run(pf.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			require.NotPanics(t, func() { require.NoError(t, pf.fn(&buf, d, Options{WidthPt: MinSizePt, HeightPt: MinSizePt})) })
			require.NotContains(t, buf.String(), "NaN")
			require.NotContains(t, buf.String(), "Inf")
			parseLayout(t, buf.Bytes())
		})
	}
}
