package export_test

import (
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"io"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/export"
)

// design synthesises the spec JSON.
func design(t testing.TB, spec string) *synth.Design {
	t.Helper()
	s, err := synth.ParseSpecBytes([]byte(spec))
	require.NoError(t, err)
	d, err := synth.Synthesize(context.Background(), s)
	require.NoError(t, err)
	return d
}

const (
	ellipticSpec = `{"approximation": "elliptic", "order": 5, "passband_hz": 20000, "stopband_hz": 25000, "passband_ripple_db": 0.5, "stopband_atten_db": 60}`
	bandSpec     = `{"response": "bandpass", "approximation": "chebyshev1", "order": 2, "passband_hz": [2000, 40000], "stopband_atten_db": 40}`
	slowSpec     = `{"response": "highpass", "order": 3, "passband_hz": 0.5, "resistor_range_ohm": [1000, 10000000]}`
)

// TestDesignFileName checks the download names: approximation, order,
// response and edges, in ASCII, and the fallback without a design.
func TestDesignFileName(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, spec, kind, want string
	}{
		{"elliptic bode", ellipticSpec, "bode-svg", "polewright-elliptic-5-lowpass-20kHz-bode.svg"},
		{"elliptic deck", ellipticSpec, "spice", "polewright-elliptic-5-lowpass-20kHz.cir"},
		{"band schematic", bandSpec, "schematic-svg", "polewright-chebyshev1-2-bandpass-2kHz-40kHz-schematic.svg"},
		{"milli-hertz edge", slowSpec, "bom", "polewright-butterworth-3-highpass-500mHz-bom.csv"},
		{"unknown kind", ellipticSpec, "nope", "polewright-nope.svg"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := design(t, tc.spec)
			got := export.DesignFileName(d, tc.kind)
			require.Equal(t, tc.want, got)
			require.Regexp(t, `^[A-Za-z0-9.-]+$`, got)
		})
	}
	require.Equal(t, "polewright.cir", export.DesignFileName(nil, "spice"))
}

// svgDoc is what the tests read back from an SVG export.
type svgDoc struct {
	XMLName xml.Name `xml:"svg"`
	Title   string   `xml:"title"`
	Desc    string   `xml:"desc"`
}

// TestSVGExports checks every SVG kind: well-formed XML whose root's
// first children are a <title> naming the design and a <desc> carrying
// the spec, which parses back to the design's spec.
func TestSVGExports(t *testing.T) {
	t.Parallel()
	for _, spec := range []string{ellipticSpec, bandSpec} {
		d := design(t, spec)
		for _, kind := range export.Kinds {
			if !export.IsSVG(kind) {
				continue
			}
			t.Run(export.DesignFileName(d, kind), func(t *testing.T) {
				t.Parallel()
				var b bytes.Buffer
				require.NoError(t, export.Write(&b, d, kind))
				require.Equal(t, "image/svg+xml", export.ContentType(kind))
				// Well-formed: the decoder reads to the end.
				dec := xml.NewDecoder(bytes.NewReader(b.Bytes()))
				for {
					_, err := dec.Token()
					if errors.Is(err, io.EOF) {
						break
					}
					require.NoError(t, err)
				}
				var doc svgDoc
				require.NoError(t, xml.Unmarshal(b.Bytes(), &doc))
				require.Contains(t, doc.Title, export.Describe(d))
				require.Regexp(t, `, [a-z][a-z ,]+$`, doc.Title, "the title names what is drawn")
				require.True(t, strings.HasPrefix(doc.Desc, "spec: "), doc.Desc)
				back, err := synth.ParseSpecBytes([]byte(strings.TrimPrefix(doc.Desc, "spec: ")))
				require.NoError(t, err)
				require.Equal(t, d.Spec, back, "the <desc> carries the spec")
			})
		}
	}
}

// TestSchematicSVG checks the combined schematic: one nested drawing per
// stage of the chain, stacked without overlap, and every part of the
// chain labelled with the designator the BOM uses.
func TestSchematicSVG(t *testing.T) {
	t.Parallel()
	for _, spec := range []string{ellipticSpec, bandSpec, slowSpec} {
		d := design(t, spec)
		t.Run(export.DesignName(d), func(t *testing.T) {
			t.Parallel()
			ch, err := d.Chain()
			require.NoError(t, err)
			var b bytes.Buffer
			require.NoError(t, export.Write(&b, d, "schematic-svg"))
			s := b.String()
			stages := regexp.MustCompile(`<g class="stage" data-stage="(\d+)" transform="translate\(0 (\d+)\)">`).FindAllStringSubmatch(s, -1)
			require.Len(t, stages, len(ch.Stages))
			require.Equal(t, "0", stages[0][2], "the first stage at the top")
			var bom bytes.Buffer
			require.NoError(t, export.Write(&bom, d, "bom"))
			for _, line := range strings.Split(strings.TrimSpace(bom.String()), "\n")[1:] {
				ref := strings.SplitN(line, ",", 2)[0]
				require.Contains(t, s, `data-ref="`+ref+`"`, "BOM part %s in the schematic", ref)
			}
		})
	}
}

// TestNoiseWithoutAnalysis checks that noise-svg of a design without a
// noise analysis is ErrNoNoise and writes nothing.
func TestNoiseWithoutAnalysis(t *testing.T) {
	t.Parallel()
	d := design(t, ellipticSpec)
	bare := *d
	bare.Noise = nil
	var b bytes.Buffer
	require.ErrorIs(t, export.Write(&b, &bare, "noise-svg"), export.ErrNoNoise)
	require.Zero(t, b.Len())
}
