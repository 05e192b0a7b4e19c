package plotting

import (
	"bytes"
	"context"
	"encoding/xml"
	"io"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/step"
)

// Specs of the test designs.
const (
	// The 5th-order Chebyshev I lowpass of synth's example.
	lowpassSpec = `{"approximation": "chebyshev1", "passband_hz": 1000, "stopband_hz": 3000,
		"passband_ripple_db": 0.5, "stopband_atten_db": 50}`
	bandpassSpec = `{"response": "bandpass", "approximation": "elliptic", "passband_hz": [900, 1100],
		"stopband_hz": [700, 1400], "passband_ripple_db": 1, "stopband_atten_db": 40}`
	bandstopSpec = `{"response": "bandstop", "approximation": "butterworth", "passband_hz": [500, 2000],
		"stopband_hz": [800, 1250], "passband_ripple_db": 1, "stopband_atten_db": 30}`
	highpassSpec = `{"response": "highpass", "approximation": "bessel", "passband_hz": 100, "order": 6}`
)

// idealDesign synthesises spec without circuits, so that the tests depend
// on the synthesis core only, not on the part choice of synth/topology.
func idealDesign(t testing.TB, spec string) *synth.Design {
	t.Helper()
	s, err := synth.ParseSpec(strings.NewReader(spec))
	require.NoError(t, err)
	d, err := synth.SynthesizeIdeal(context.Background(), s)
	require.NoError(t, err)
	return d
}

// fakeBuilt returns a stand-in for the chain of d as built: each section
// with its pole pair's damping raised by 4 % and a single-pole op-amp at
// 150 kHz in the loop, H·1/(1 + s/ωa). It is deterministic and independent
// of synth/topology.
func fakeBuilt(d *synth.Design) circuit.Cascade {
	const wa = 2 * 3.141592653589793 * 150e3
	var out circuit.Cascade
	for _, sec := range d.Cascade() {
		st := step.FromSection(sec)
		den := make([]float64, len(st.Den)+1)
		k := st.ScaleRadPerSec / wa
		for j, c := range st.Den {
			if j == 1 {
				c *= 1.04
			}
			den[j] += c
			den[j+1] += c * k
		}
		out = append(out, circuit.Rational{Num: st.Num, Den: den, ScaleRadPerSec: st.ScaleRadPerSec, SectionOrder: sec.Order()})
	}
	return out
}

// plotFunc is one of the internal drawing functions.
type plotFunc func(io.Writer, *synth.Design, circuit.Cascade, Options) error

var plotFuncs = []struct {
	name string
	fn   plotFunc
}{
	{"bode", bode},
	{"delay", groupDelay},
	{"step", stepPlot},
	{"passband", passband},
}

// svgPath is a <path> element.
type svgPath struct {
	D     string
	Style string
}

// svgDoc is what the structural tests look at in an SVG document.
type svgDoc struct {
	Root  string
	Paths []svgPath
	Texts []string
}

// parseSVG parses b as XML and collects its paths and texts.
func parseSVG(t *testing.T, b []byte) svgDoc {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	var doc svgDoc
	var inText bool
	var text strings.Builder
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		require.NoError(t, err)
		switch el := tok.(type) {
		case xml.StartElement:
			if doc.Root == "" {
				doc.Root = el.Name.Local
			}
			switch el.Name.Local {
			case "path":
				var p svgPath
				for _, a := range el.Attr {
					switch a.Name.Local {
					case "d":
						p.D = a.Value
					case "style":
						p.Style = a.Value
					}
				}
				doc.Paths = append(doc.Paths, p)
			case "text":
				inText = true
				text.Reset()
			}
		case xml.CharData:
			if inText {
				text.Write(el)
			}
		case xml.EndElement:
			if el.Name.Local == "text" {
				inText = false
				doc.Texts = append(doc.Texts, text.String())
			}
		}
	}
	return doc
}

// count returns the number of paths whose style contains s.
func (d svgDoc) count(s string) int {
	n := 0
	for _, p := range d.Paths {
		if strings.Contains(p.Style, s) {
			n++
		}
	}
	return n
}

// The styles as vgsvg writes them.
const (
	idealStroke = "stroke:#1D4E89"
	builtStroke = "stroke:#D96C06"
	maskFillSVG = "fill:#A7313D"
)
