package export

import (
	"bytes"
	"encoding/json"
	"strconv"
	"strings"

	"github.com/polewright/polewright/standards/si"
	"github.com/polewright/polewright/synth"
)

// fileSuffixes are the end of each kind's file name, after the design's
// name.
var fileSuffixes = map[string]string{
	"spice":         ".cir",
	"bom":           "-bom.csv",
	"parts":         "-parts.csv",
	"json":          "-design.json",
	"bode-svg":      "-bode.svg",
	"passband-svg":  "-passband.svg",
	"delay-svg":     "-delay.svg",
	"step-svg":      "-step.svg",
	"noise-svg":     "-noise.svg",
	"schematic-svg": "-schematic.svg",
	"report":        "-report.html",
}

// kindTitles name what each SVG kind draws, for its <title>.
var kindTitles = map[string]string{
	"bode-svg":      "magnitude and phase",
	"passband-svg":  "magnitude over the passband",
	"delay-svg":     "group delay",
	"step-svg":      "step response",
	"noise-svg":     "output noise density",
	"schematic-svg": "schematic, every stage",
}

// DesignName returns the short name of d that file names carry: the
// approximation, the order, the response and the passband edge or edges,
// e.g. "elliptic-5-lowpass-20kHz" or "chebyshev1-4-bandpass-2kHz-40kHz".
// It holds only ASCII letters, digits, '.' and '-'.
func DesignName(d *synth.Design) string {
	s := d.Spec
	parts := []string{s.Approximation, strconv.Itoa(d.Order), string(s.Response)}
	for _, f := range s.PassbandHz {
		parts = append(parts, si.Format(f, "Hz", 4))
	}
	return safeName(strings.Join(parts, "-"))
}

// safeName keeps ASCII letters, digits, '.' and '-' of s, spells the
// micro sign as 'u' and drops everything else (spaces included).
func safeName(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '.', r == '-':
			b.WriteRune(r)
		case r == 'µ' || r == 'μ':
			b.WriteByte('u')
		}
	}
	return b.String()
}

// DesignFileName returns the file name a download of kind of design d is
// offered under: "polewright-" + [DesignName] + the kind's suffix, e.g.
// "polewright-elliptic-5-lowpass-20kHz-bode.svg". A nil d, or a kind not
// in [Kinds], gives [FileName].
func DesignFileName(d *synth.Design, kind string) string {
	suffix, ok := fileSuffixes[kind]
	if d == nil || !ok {
		return FileName(kind)
	}
	return "polewright-" + DesignName(d) + suffix
}

// Describe returns the one-line description of d that headers, titles and
// the report carry: approximation, response, order and passband edges,
// e.g. "elliptic lowpass, order 5, passband 20 kHz".
func Describe(d *synth.Design) string {
	s := d.Spec
	edges := make([]string, len(s.PassbandHz))
	for i, f := range s.PassbandHz {
		edges[i] = si.Format(f, "Hz", 4)
	}
	return s.Approximation + " " + string(s.Response) + ", order " + strconv.Itoa(d.Order) + ", passband " + strings.Join(edges, " to ")
}

// LabelSVG returns the SVG document svg of kind with a <title> (what is
// drawn, and of which design) and a <desc> (the spec as JSON) as the
// first children of its root element, so that a downloaded file says
// what it shows on its own. svg is returned unchanged when it has no
// <svg element.
func LabelSVG(svg []byte, d *synth.Design, kind string) []byte {
	i := bytes.Index(svg, []byte("<svg"))
	if i < 0 {
		return svg
	}
	j := bytes.IndexByte(svg[i:], '>')
	if j < 0 {
		return svg
	}
	end := i + j + 1
	var b bytes.Buffer
	b.Grow(len(svg) + 1024)
	b.Write(svg[:end])
	b.WriteString("\n<title>")
	xmlEscape(&b, "polewright: "+Describe(d)+", "+kindTitles[kind])
	b.WriteString("</title>\n<desc>")
	spec, _ := json.Marshal(d.Spec)
	xmlEscape(&b, "spec: "+string(spec))
	b.WriteString("</desc>")
	b.Write(svg[end:])
	return b.Bytes()
}

// xmlEscape writes s escaped as XML character data (<, > and &).
func xmlEscape(b *bytes.Buffer, s string) {
	for _, r := range s {
		switch r {
		case '<':
			b.WriteString("&lt;")
		case '>':
			b.WriteString("&gt;")
		case '&':
			b.WriteString("&amp;")
		default:
			b.WriteRune(r)
		}
	}
}
