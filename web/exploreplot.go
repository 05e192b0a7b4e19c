package web

import (
	"fmt"
	"html"
	"math"
	"strings"

	"github.com/a-h/templ"

	"github.com/polewright/polewright/synth/explore"
	"github.com/polewright/polewright/web/components"
)

// scatterAxis is one axis of an exploration plot: a candidate figure
// (false when the candidate lacks it), its label and its formatting.
type scatterAxis struct {
	label  string
	value  func(c explore.Candidate) (float64, bool)
	format func(v float64) string
	log    bool
	// share keeps the axis within [0, 1] (a yield).
	share bool
}

var (
	axisOpAmps = scatterAxis{label: "op-amps", value: func(c explore.Candidate) (float64, bool) { return float64(c.OpAmps), true },
		format: func(v float64) string { return fmt.Sprintf("%.0f", v) }}
	axisYield = scatterAxis{label: "yield", value: func(c explore.Candidate) (float64, bool) { return ptrValue(c.Yield) },
		format: func(v float64) string { return fmt.Sprintf("%.0f %%", 100*v) }, share: true}
	axisNoise = scatterAxis{label: "noise at the converter (V rms)", value: func(c explore.Candidate) (float64, bool) { return ptrValue(c.SampledRMSV) },
		format: func(v float64) string { return si(v, "V", 2) }, log: true}
	axisSettling = scatterAxis{label: "settling time (s)", value: func(c explore.Candidate) (float64, bool) { return ptrValue(c.SettlingS) },
		format: func(v float64) string { return si(v, "s", 2) }, log: true}
)

func ptrValue(p *float64) (float64, bool) {
	if p == nil || math.IsNaN(*p) || math.IsInf(*p, 0) {
		return 0, false
	}
	return *p, true
}

// paretoPlots draws the exploration's plots: op-amps against yield (when
// the candidates have a Monte Carlo), and settling time against the noise
// the converter sees (when there is a converter). Every candidate is a
// point linking to its design; the Pareto set is filled, the
// recommendation ringed.
func paretoPlots(res *explore.Result) []components.Plot {
	var out []components.Plot
	for _, p := range []struct {
		x, y        scatterAxis
		id, caption string
	}{
		{axisOpAmps, axisYield, "plot-front-yield", "Op-amps against yield: the Pareto set filled, the recommendation ringed, the rest hollow. Each point links to its design."},
		{axisNoise, axisSettling, "plot-front-noise", "Noise the converter's words carry against settling time (both logarithmic), marked as above."},
	} {
		if svg, ok := scatterSVG(res, p.x, p.y); ok {
			out = append(out, components.Plot{Title: p.y.label + " against " + p.x.label, Caption: p.caption, TestID: p.id, SVG: templ.Raw(svg)})
		}
	}
	return out
}

// scatterSVG draws the candidates of res on x and y as a small SVG; ok
// is false when fewer than one candidate has both figures.
func scatterSVG(res *explore.Result, x, y scatterAxis) (string, bool) {
	const w, h, left, right, top, bottom = 480.0, 300.0, 64.0, 16.0, 16.0, 44.0
	type pt struct {
		x, y float64
		i    int
	}
	var pts []pt
	for i, c := range res.Candidates {
		vx, okx := x.value(c)
		vy, oky := y.value(c)
		if okx && oky && (!x.log || vx > 0) && (!y.log || vy > 0) {
			pts = append(pts, pt{vx, vy, i})
		}
	}
	if len(pts) == 0 {
		return "", false
	}
	scale := func(a scatterAxis, get func(pt) float64) (float64, float64, func(float64) float64) {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, p := range pts {
			v := get(p)
			if a.log {
				v = math.Log10(v)
			}
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		pad := (hi - lo) * 0.08
		if pad == 0 {
			pad = 0.5
		}
		lo, hi = lo-pad, hi+pad
		if a.share {
			lo, hi = math.Max(lo, 0), math.Min(hi, 1)
		}
		return lo, hi, func(v float64) float64 {
			if a.log {
				v = math.Log10(v)
			}
			return (v - lo) / (hi - lo)
		}
	}
	xlo, xhi, fx := scale(x, func(p pt) float64 { return p.x })
	ylo, yhi, fy := scale(y, func(p pt) float64 { return p.y })
	px := func(v float64) float64 { return left + fx(v)*(w-left-right) }
	py := func(v float64) float64 { return h - bottom - fy(v)*(h-top-bottom) }
	unlog := func(a scatterAxis, v float64) float64 {
		if a.log {
			return math.Pow(10, v)
		}
		return v
	}
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 %g %g" width="100%%" style="max-width:560px" role="img" aria-label="%s">`, w, h, html.EscapeString(y.label+" against "+x.label))
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="%g" height="%g" fill="none" stroke="#888"/>`, left, top, w-left-right, h-top-bottom)
	for k := 0; k <= 4; k++ {
		t := float64(k) / 4
		vx := unlog(x, xlo+t*(xhi-xlo))
		vy := unlog(y, ylo+t*(yhi-ylo))
		xp, yp := left+t*(w-left-right), h-bottom-t*(h-top-bottom)
		fmt.Fprintf(&b, `<line x1="%.1f" y1="%g" x2="%.1f" y2="%g" stroke="#ddd"/>`, xp, top, xp, h-bottom)
		fmt.Fprintf(&b, `<line x1="%g" y1="%.1f" x2="%g" y2="%.1f" stroke="#ddd"/>`, left, yp, w-right, yp)
		fmt.Fprintf(&b, `<text x="%.1f" y="%g" font-size="10" text-anchor="middle">%s</text>`, xp, h-bottom+14, html.EscapeString(x.format(vx)))
		fmt.Fprintf(&b, `<text x="%g" y="%.1f" font-size="10" text-anchor="end">%s</text>`, left-4, yp+3, html.EscapeString(y.format(vy)))
	}
	fmt.Fprintf(&b, `<text x="%g" y="%g" font-size="11" text-anchor="middle">%s</text>`, left+(w-left-right)/2, h-6, html.EscapeString(x.label))
	fmt.Fprintf(&b, `<text x="12" y="%g" font-size="11" text-anchor="middle" transform="rotate(-90 12 %g)">%s</text>`, top+(h-top-bottom)/2, top+(h-top-bottom)/2, html.EscapeString(y.label))
	pareto := map[int]bool{}
	for _, i := range res.Pareto {
		pareto[i] = true
	}
	// Dominated points first, so that the front is drawn over them.
	for pass := range 2 {
		for _, p := range pts {
			if pareto[p.i] != (pass == 1) {
				continue
			}
			c := res.Candidates[p.i]
			title := fmt.Sprintf("#%d %s order %d, %s, %s: %s %s, %s %s", p.i, approxNames[c.Approximation], c.Order, c.Topology, c.ResistorSeries,
				x.label, x.format(p.x), y.label, y.format(p.y))
			fill := "none"
			if pareto[p.i] {
				fill = "#1f5fa8"
			}
			fmt.Fprintf(&b, `<a href="%s"><title>%s</title><circle cx="%.1f" cy="%.1f" r="5" fill="%s" stroke="#1f5fa8" stroke-width="1.5"/>`,
				html.EscapeString(c.Permalink), html.EscapeString(title), px(p.x), py(p.y), fill)
			if p.i == res.Recommended {
				fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="9" fill="none" stroke="#c0392b" stroke-width="2"/>`, px(p.x), py(p.y))
			}
			b.WriteString(`</a>`)
		}
	}
	b.WriteString(`</svg>`)
	return b.String(), true
}
