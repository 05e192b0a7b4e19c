package export_test

import (
	"bytes"
	"html"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/export"
)

// reportSpecs are designs of our own that exercise the report: a
// converter with a Monte Carlo, a band response, an ideal op-amp and a
// highpass with exact values.
var reportSpecs = []struct{ name, spec string }{
	{"anti-alias with converter and Monte Carlo", `{"approximation": "elliptic", "passband_hz": 20000, "stopband_hz": 28000, "passband_ripple_db": 0.1, "stopband_atten_db": 80,
		"converter": {"bits": 16, "sample_rate_hz": 96000, "full_scale_vpp": 4}, "montecarlo": {"trials": 200, "seed": 3}}`},
	{"bandpass", bandSpec},
	{"ideal op-amp", `{"approximation": "bessel", "order": 4, "passband_hz": 1000, "opamp": {"ideal": true}}`},
	// The workbench issue's case: a 50 Hz mains notch at 100 Vpp.
	{"mains notch at 100 Vpp", `{"response": "bandstop", "passband_hz": [40, 62], "stopband_hz": [48, 52], "passband_ripple_db": 3, "stopband_atten_db": 30,
		"gain_db": -20, "converter": {"bits": 16, "sample_rate_hz": 1000, "full_scale_vpp": 10}, "resistor_range_ohm": [1000, 10000000]}`},
	{"exact highpass", `{"response": "highpass", "approximation": "chebyshev2", "passband_hz": 300, "stopband_hz": 100, "values": "exact"}`},
	{"SAR driver", `{"approximation": "butterworth", "passband_hz": 20000, "passband_ripple_db": 0.1,
		"converter": {"bits": 16, "sample_rate_hz": 1000000, "full_scale_vpp": 4.096, "alias_atten_db": 80,
		"architecture": "sar", "sampling_capacitance_farad": 30e-12, "acquisition_time_s": 290e-9}, "opamp": {"gbw_hz": 50e6, "output_resistance_ohm": 40}}`},
}

// outside finds what would make a browser fetch something: a src, href
// or xlink:href naming an http(s) or protocol-relative address, a CSS
// url() or @import of one, and the elements that load or run things.
var outside = regexp.MustCompile(`(?i)(\b(src|href|xlink:href|action|srcset|poster|data)\s*=\s*["']?\s*(https?:)?//)|url\(\s*["']?\s*(https?:)?//|@import|<script|<link\b|<img\b|<iframe|<object|<embed|<base\b`)

// TestOutside checks the pattern TestReport looks for outside addresses
// with.
func TestOutside(t *testing.T) {
	t.Parallel()
	tests := []struct {
		text  string
		fetch bool
	}{
		{`<img src="https://example.org/a.png">`, true},
		{`<a href="http://example.org/">`, true},
		{`<use xlink:href='//cdn.example.org/s.svg#a'/>`, true},
		{`body { background: url("https://example.org/b.png") }`, true},
		{`@import "x.css";`, true},
		{`<script>1</script>`, true},
		{`<link rel="stylesheet" href="/s.css">`, true},
		{`<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink">`, false},
		{`<a href="#verdict">Verdict</a>`, false},
		{`<td>see http://example.org in the text</td>`, false},
	}
	for _, tc := range tests {
		t.Run(tc.text, func(t *testing.T) {
			t.Parallel()
			require.Equal(t, tc.fetch, outside.MatchString(tc.text))
		})
	}
}

// TestReport checks the report of each design: self-contained (no outside
// address, no script, no linked style sheet), every section present in
// reading order, every check's sentence as synth wrote it, every stage
// with its schematic, every BOM row, and the spec, which reads back to
// the design's spec.
func TestReport(t *testing.T) {
	t.Parallel()
	for _, tc := range reportSpecs {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := design(t, tc.spec)
			var b bytes.Buffer
			require.NoError(t, export.Write(&b, d, "report"))
			require.Equal(t, "text/html; charset=utf-8", export.ContentType("report"))
			page := b.String()
			require.True(t, strings.HasPrefix(page, "<!DOCTYPE html>"))
			// The one link: the icon, inline, so that a browser asks for
			// no favicon either.
			icon := regexp.MustCompile(`<link rel="icon" href="data:image/png;base64,[A-Za-z0-9+/=]+">`)
			require.Len(t, icon.FindAllString(page, -1), 1)
			require.Empty(t, outside.FindAllString(icon.ReplaceAllString(page, ""), -1), "nothing fetched from elsewhere")
			require.Contains(t, page, "<style>")
			require.Contains(t, page, "@media print")

			// Reading order: verdict, magnitude plot, stages, BOM, noise
			// and yield, cautions, spec.
			last := -1
			for _, id := range []string{`data-testid="verdict"`, `data-testid="plot-bode"`, `id="stages"`, `data-testid="bom"`, `data-testid="noise"`, `data-testid="cautions"`, `data-testid="spec"`} {
				i := strings.Index(page, id)
				require.Greater(t, i, last, "%s after the section before it", id)
				last = i
			}
			// A SAR driver: its figures and synth's reason in the stages
			// section.
			if d.Driver != nil {
				stages := page[strings.Index(page, `id="stages"`):strings.Index(page, `data-testid="bom"`)]
				require.Contains(t, stages, `data-testid="driver"`)
				require.Contains(t, html.UnescapeString(stages), d.Driver.Reason)
			} else {
				require.NotContains(t, page, `data-testid="driver"`)
			}
			cautions := page[strings.Index(page, `data-testid="cautions"`):]
			for _, c := range d.Checks {
				require.Contains(t, page, `data-testid="check-`+c.ID+`"`)
				require.Contains(t, page, html.EscapeString(c.Text), "the check's sentence from synth")
				if strings.HasPrefix(c.ID, "safety-") {
					require.Contains(t, cautions, `<p class="caution">`+html.EscapeString(c.Text)+`</p>`, "a caution in the cautions section")
				}
			}
			require.Contains(t, cautions, "local electrical codes")
			if strings.HasPrefix(tc.name, "mains notch") {
				require.Equal(t, 3, strings.Count(cautions, `<p class="caution">`), "voltage, mains and the general note")
			}

			ch, err := d.Chain()
			require.NoError(t, err)
			require.Equal(t, len(ch.Stages), strings.Count(page, `data-testid="stage"`))
			require.Equal(t, len(ch.Stages), strings.Count(page, `<svg xmlns="http://www.w3.org/2000/svg" class="schematic"`))
			var bom bytes.Buffer
			require.NoError(t, export.Write(&bom, d, "bom"))
			for _, line := range strings.Split(strings.TrimSpace(bom.String()), "\n")[1:] {
				ref := strings.SplitN(line, ",", 2)[0]
				require.Contains(t, page, "<td>"+ref+"</td>", "BOM row %s", ref)
			}
			require.Contains(t, page, `data-testid="parts"`)
			if d.Noise != nil {
				require.Contains(t, page, `data-testid="plot-noise"`)
			}
			if d.MonteCarlo != nil {
				require.Contains(t, page, "Yield (boards passing the acceptance rule)")
			}

			m := regexp.MustCompile(`(?s)<pre data-testid="spec">(.*?)</pre>`).FindStringSubmatch(page)
			require.NotNil(t, m)
			back, err := synth.ParseSpecBytes([]byte(html.UnescapeString(m[1])))
			require.NoError(t, err)
			require.Equal(t, d.Spec, back)
		})
	}
}

// TestReportEscapes checks that the report escapes the sentences synth
// writes: markup put into a check's text comes out as text.
func TestReportEscapes(t *testing.T) {
	t.Parallel()
	d := design(t, ellipticSpec)
	bad := *d
	bad.Checks = append([]synth.Check(nil), d.Checks...)
	bad.Checks[0].Text = `<script>alert(1)</script>`
	var b bytes.Buffer
	require.NoError(t, export.Write(&b, &bad, "report"))
	require.NotContains(t, b.String(), "<script>")
	require.Contains(t, b.String(), "&lt;script&gt;alert(1)&lt;/script&gt;")
}

// BenchmarkReport times the report export of designs up to elliptic-8
// (the workbench issue's bound: 50 ms), the design made beforehand.
func BenchmarkReport(b *testing.B) {
	for _, bc := range []struct{ name, spec string }{
		{"butterworth-4", `{"order": 4, "passband_hz": 1000}`},
		{"elliptic-8", `{"approximation": "elliptic", "order": 8, "passband_hz": 20000, "stopband_hz": 22000, "passband_ripple_db": 0.1, "stopband_atten_db": 80}`},
		{"elliptic-8-converter", `{"approximation": "elliptic", "order": 8, "passband_hz": 20000, "stopband_hz": 22000, "passband_ripple_db": 0.1, "stopband_atten_db": 80,
			"converter": {"bits": 16, "sample_rate_hz": 96000, "full_scale_vpp": 4}, "montecarlo": {"trials": 200, "seed": 1}}`},
		{"bandpass-chebyshev1-10", `{"response": "bandpass", "approximation": "chebyshev1", "order": 10, "passband_hz": [1000, 3000], "passband_ripple_db": 0.5}`},
	} {
		d := design(b, bc.spec)
		b.Run(bc.name, func(b *testing.B) {
			b.ReportAllocs()
			var buf bytes.Buffer
			for b.Loop() {
				buf.Reset()
				if err := export.Write(&buf, d, "report"); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(buf.Len()), "bytes/report")
		})
		// Cold: a fresh copy of the design each time, so that nothing
		// plotting remembers per design is reused.
		b.Run(bc.name+"-cold", func(b *testing.B) {
			b.ReportAllocs()
			var buf bytes.Buffer
			for b.Loop() {
				buf.Reset()
				fresh := *d
				if err := export.Write(&buf, &fresh, "report"); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
