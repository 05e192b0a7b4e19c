package web_test

import (
	"encoding/json"
	"fmt"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web"
)

// A 16-bit audio converter of our own: 48 kHz, 4 Vpp full scale, in front
// of a Chebyshev I anti-alias lowpass; and the same with 500 trials.
const (
	audioQuery = "response=lowpass&approximation=chebyshev1&passband_hz=10000&stopband_hz=28000&passband_ripple_db=0.5&stopband_atten_db=60" +
		"&converter_sample_rate_hz=48000&converter_bits=16&converter_full_scale_vpp=4"
	audioTrialsQuery = audioQuery + "&montecarlo_trials=500&montecarlo_seed=11"
)

// testid returns the inner text of the element with data-testid id, tags
// stripped and white space collapsed, or "" when there is none.
func testid(page, id string) string {
	i := strings.Index(page, `data-testid="`+id+`"`)
	if i < 0 {
		return ""
	}
	rest := page[i:]
	rest = rest[strings.Index(rest, ">")+1:]
	// Up to the end of the element: the figures are <div>…</div>, the
	// checks <li>…</li>; take the first closing tag of either.
	end := len(rest)
	for _, tag := range []string{"</div>", "</li>", "</p>", "</table>", "</figure>"} {
		if j := strings.Index(rest, tag); j >= 0 && j < end {
			end = j
		}
	}
	text := regexp.MustCompile(`<[^>]*>`).ReplaceAllString(rest[:end], " ")
	return strings.Join(strings.Fields(htmlUnescape(text)), " ")
}

// TestBenchPanel checks the "Will it work on the bench" panel with a
// converter and trials: yield with trial count and seed, the noise against
// LSB/√12, the settling to ±½ LSB, the spread per stage, the histograms,
// the noise plot and its contributors, and the stage-area sensitivities.
func TestBenchPanel(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	rec := do(t, h, "GET", "/design?"+audioTrialsQuery, "")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	page := rec.Body.String()

	require.Contains(t, page, `data-testid="bench"`)
	require.Regexp(t, `^[0-9.]+ % of 500 trials meet the mask \(seed 11\)`, strings.TrimPrefix(testid(page, "fig-yield"), "Yield "))
	require.Regexp(t, `^Output noise [0-9.]+ [µn]V rms`, testid(page, "fig-noise"))
	// 4 V / 2¹⁶ = 61.0 µV; /√12 = 17.6 µV (textbook).
	require.Contains(t, testid(page, "fig-quant"), "17.6 µV rms")
	require.Contains(t, testid(page, "fig-quant"), "LSB 61 µV (16 bits, 4 Vpp)")
	settle := testid(page, "fig-settling")
	require.Regexp(t, `^Settling time [0-9.]+ [mµ]s to ±½ LSB \(16 bits`, settle)
	require.Contains(t, settle, "sample periods")
	// The checks are synth's sentences (synth/checks.go), shown as they are.
	require.Contains(t, testid(page, "check-noise"), "quantisation noise 17.6 µV rms")
	require.NotEmpty(t, testid(page, "check-yield"))
	require.Contains(t, testid(page, "check-slew"), "A full-scale sine at the passband edge needs")
	require.Contains(t, testid(page, "check-built-mask"), "As built")
	require.NotEmpty(t, testid(page, "fig-overshoot"))
	require.NotEmpty(t, testid(page, "fig-rise"))
	require.Contains(t, testid(page, "mc-summary"), "500 trials, seed 11")

	// One spread row per stage, two histograms (passband and stopband
	// edges) with bars.
	stages := strings.Count(page, `data-testid="stage-row"`)
	mc := page[strings.Index(page, `data-testid="mc-stages"`):]
	mc = mc[:strings.Index(mc, "</table>")]
	require.Equal(t, stages, strings.Count(mc, "<tr>")-1)
	for _, id := range []string{"histogram-passband-edge", "histogram-stopband-edge"} {
		i := strings.Index(page, `data-testid="`+id+`"`)
		require.Positive(t, i, id)
		fig := page[i : i+strings.Index(page[i:], "</figure>")]
		require.Contains(t, fig, `<rect class="bar`)
		require.Contains(t, fig, "<title>")
	}

	// The noise plot is inlined with paths, and offered as a download.
	i := strings.Index(page, `data-testid="plot-noise-svg"`)
	require.Positive(t, i)
	noise := page[i : i+strings.Index(page[i:], "</figure>")]
	require.Contains(t, noise, "<svg")
	require.Contains(t, noise, "<path")
	require.Contains(t, page, `href="/download/noise-svg?`)
	contributors := page[strings.Index(page, `data-testid="noise-contributors"`):]
	contributors = contributors[:strings.Index(contributors, "</table>")]
	rows := strings.Count(contributors, "<tr>") - 1
	require.Positive(t, rows)
	require.LessOrEqual(t, rows, 8)

	// The stage area: the most sensitive parts and the tolerances they
	// need, per stage; the slew column and the rule of thumb.
	require.Equal(t, stages, strings.Count(page, "Most sensitive (S = ∂ln y/∂ln x):"))
	require.Equal(t, stages, strings.Count(page, "Tolerance needed for f0 within 1 %"))
	require.Contains(t, page, "Slew needed")
	require.Contains(t, page, "GBW needed (rule of thumb)")
	require.Regexp(t, `[0-9.]+ V/µs`, page)
	require.Regexp(t, `<th scope="col" title="[^"]+"><span class="hinted">S f0</span></th>`, page, "the heading carries its hint")

	// The envelope is on the magnitude plot.
	require.Contains(t, page, "Monte Carlo 1–99 %")
}

// TestBenchPanelWithout checks the panel without trials and without a
// converter: no Monte Carlo, a hint how to ask, no LSB figures.
func TestBenchPanelWithout(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	page := do(t, h, "GET", "/design?passband_hz=1000&stopband_hz=4000", "").Body.String()
	require.Contains(t, page, `data-testid="bench"`)
	require.Contains(t, testid(page, "fig-yield"), "no Monte Carlo asked")
	require.Contains(t, testid(page, "bench-hint"), "give a number of trials")
	require.NotContains(t, page, `data-testid="mc-stages"`)
	require.Contains(t, testid(page, "fig-quant"), "give a converter")
	require.NotContains(t, page, `data-testid="check-noise"`)
	require.Contains(t, testid(page, "fig-settling"), "to ±0.1 %")
	require.NotContains(t, page, "Monte Carlo 1–99 %")
}

// TestBenchFieldsRoundTrip submits the new fields as a browser would and
// checks that the spec carries them under their JSON names, and that the
// permalink and the JSON download reproduce it.
func TestBenchFieldsRoundTrip(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	form := url.Values{
		"passband_hz": {"10000"}, "stopband_hz": {"28000"}, "approximation": {"chebyshev1"}, "passband_ripple_db": {"0.5"}, "stopband_atten_db": {"60"},
		"opamp_noise_v_per_rthz": {"4n"}, "opamp_noise_a_per_rthz": {"0.5p"}, "opamp_slew_v_per_s": {"20M"},
		"tolerance_resistor_pct": {"0.5"}, "tolerance_capacitor_pct": {"2"}, "tolerance_distribution": {"gaussian"},
		"montecarlo_trials": {"200"}, "montecarlo_seed": {"42"},
		"converter_sample_rate_hz": {"48k"}, "converter_bits": {"16"}, "converter_full_scale_vpp": {"4"},
		"adc_rate_hz": {""}, "adc_bits": {""}, "adc_band_hz": {""}, "order": {""},
	}
	first := followClean(t, h, "/design?"+form.Encode())
	require.Equal(t, http.StatusOK, first.Code, first.Body.String())
	spec := specOf(t, first.Body.String())
	for _, want := range []string{
		`"noise_v_per_rthz": 4e-9`, `"noise_a_per_rthz": 5e-13`, `"slew_v_per_s": 20000000`,
		`"resistor_pct": 0.5`, `"capacitor_pct": 2`, `"distribution": "gaussian"`,
		`"trials": 200`, `"seed": 42`, `"bits": 16`, `"sample_rate_hz": 48000`, `"full_scale_vpp": 4`,
	} {
		require.Contains(t, spec, want)
	}
	permalink := permalinkOf(t, first.Body.String())
	for _, name := range []string{"opamp_noise_v_per_rthz=4n", "tolerance_distribution=gaussian", "montecarlo_trials=200", "montecarlo_seed=42", "converter_sample_rate_hz=48k", "converter_full_scale_vpp=4"} {
		require.Contains(t, permalink, name)
	}
	again := do(t, h, "GET", permalink, "")
	require.Equal(t, http.StatusOK, again.Code)
	require.JSONEq(t, spec, specOf(t, again.Body.String()))
	require.Contains(t, testid(again.Body.String(), "mc-summary"), "resistors ±0.5 %, capacitors ±2 %, gaussian")
	// The form keeps what was typed.
	require.Contains(t, again.Body.String(), `name="converter_sample_rate_hz" value="48k"`)
}

// TestBenchFieldErrors checks that a bad new field's message sits in that
// control's block, in words.
func TestBenchFieldErrors(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	const base = "passband_hz=1000&stopband_hz=4000&"
	tests := []struct {
		name, query, control, words string
	}{
		{"too many trials", "montecarlo_trials=200000", "montecarlo_trials", "at most 100000"},
		{"fractional trials", "montecarlo_trials=2.5", "montecarlo_trials", "whole number"},
		{"negative seed", "montecarlo_seed=-1", "montecarlo_seed", "whole number"},
		{"trials not a number", "montecarlo_trials=lots", "montecarlo_trials", "must be a number"},
		{"tolerance too wide", "tolerance_resistor_pct=60", "tolerance_resistor_pct", "from 0 to 50"},
		{"capacitor tolerance negative", "tolerance_capacitor_pct=-1", "tolerance_capacitor_pct", "from 0 to 50"},
		{"unknown distribution", "tolerance_distribution=triangular", "tolerance_distribution", "must be one of uniform, gaussian"},
		{"too many bits", "converter_bits=40&converter_sample_rate_hz=48000&converter_full_scale_vpp=4", "converter_bits", "from 1 to 32"},
		{"sample rate out of range", "converter_bits=16&converter_sample_rate_hz=1e12&converter_full_scale_vpp=4", "converter_sample_rate_hz", "from 2 mHz to 200 MHz"},
		{"full scale missing", "converter_bits=16&converter_sample_rate_hz=48000", "converter_full_scale_vpp", "all three"},
		{"only full scale", "converter_full_scale_vpp=4", "converter_sample_rate_hz", "all three"},
		{"slew zero", "opamp_slew_v_per_s=0", "opamp_slew_v_per_s", "above 0"},
		{"voltage noise too high", "opamp_noise_v_per_rthz=1", "opamp_noise_v_per_rthz", "must be from 0"},
		{"current noise negative", "opamp_noise_a_per_rthz=-1p", "opamp_noise_a_per_rthz", "must be from 0"},
	}
	block := func(page, control string) string {
		i := strings.Index(page, `data-field="`+control+`"`)
		if i < 0 {
			return ""
		}
		rest := page[i:]
		if j := strings.Index(rest[1:], `data-field="`); j >= 0 {
			rest = rest[:j+1]
		}
		return rest
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			rec := do(t, h, "GET", "/design?"+base+tc.query, "")
			require.Equal(t, http.StatusBadRequest, rec.Code)
			b := htmlUnescape(block(rec.Body.String(), tc.control))
			require.Contains(t, b, `data-testid="error-`+tc.control+`"`, rec.Body.String())
			require.Contains(t, b, tc.words)
			require.Contains(t, b, `aria-invalid="true"`)
			msg := regexp.MustCompile(`data-testid="error-[a-z_]+">([^<]*)<`).FindStringSubmatch(b)
			require.NotNil(t, msg)
			require.NotRegexp(t, `\b[a-z]+_[a-z_]+\b|\b[a-z]+\.[a-z_]+\b`, msg[1], "no JSON names in the message")
		})
	}
}

// TestNoiseDownload checks the page's own noise-svg download: an SVG
// attachment drawn from the query, a bad spec answered with the form, and
// no such download without a noise-drawing Plots.
func TestNoiseDownload(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	rec := do(t, h, "GET", "/download/noise-svg?"+audioQuery, "")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Equal(t, "image/svg+xml", rec.Header().Get("Content-Type"))
	require.Contains(t, rec.Header().Get("Content-Disposition"), "-noise.svg")
	body := rec.Body.String()
	require.True(t, strings.HasPrefix(body, "<?xml"))
	require.Contains(t, body, "<path")
	require.Contains(t, body, "LSB/√12 over fs/2")

	bad := do(t, h, "GET", "/download/noise-svg?passband_hz=-1", "")
	require.Equal(t, http.StatusBadRequest, bad.Code)
	require.Contains(t, bad.Body.String(), `data-testid="error-passband_hz"`)

	plain := web.New(nil, web.Deps{Plots: fakePlots{}})
	// noise-svg is an export kind: without a noise-drawing Plots the
	// download is drawn by the export, as the CLI draws it.
	rec = do(t, plain, "GET", "/download/noise-svg?"+audioQuery, "")
	require.Equal(t, http.StatusOK, rec.Code)
	require.Contains(t, rec.Body.String(), "<title>polewright: ")
	page := do(t, plain, "GET", "/design?"+audioQuery, "").Body.String()
	require.NotContains(t, page, "/download/noise-svg")
	require.Contains(t, page, `data-testid="bench"`, "the panel does not need the plot")
}

// TestBenchEscaping sends markup through the new fields.
func TestBenchEscaping(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	e := url.QueryEscape(`<script>alert(1)</script>`)
	for _, q := range []string{
		"tolerance_distribution=" + e, "montecarlo_trials=" + e, "converter_bits=" + e + "&converter_sample_rate_hz=1&converter_full_scale_vpp=1",
		"opamp_slew_v_per_s=" + e, "converter_full_scale_vpp=" + e,
	} {
		body := do(t, h, "GET", "/design?passband_hz=1000&stopband_hz=4000&"+q, "").Body.String()
		require.NotContains(t, body, "<script>alert")
		require.NotContains(t, body, "alert(1)</script>")
	}
}

// TestHelperUsesConverter checks that the converter helper takes an empty
// sample rate or resolution from the converter's fields.
func TestHelperUsesConverter(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	// 200 kHz − 20 kHz = 180 kHz; 6.02·18 + 1.76 = 110.12 dB (common practice).
	rec := do(t, h, "GET", "/?fill=1&converter_sample_rate_hz=200000&converter_bits=18&converter_full_scale_vpp=4&adc_band_hz=20000", "")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	body := strings.ReplaceAll(regexp.MustCompile(`\s+`).ReplaceAllString(rec.Body.String(), " "), `" id="f-`, `"`)
	require.Contains(t, body, `name="stopband_hz" value="180000"`)
	require.Contains(t, body, `name="stopband_atten_db" value="110.12"`)
	// The helper's own fields win.
	rec = do(t, h, "GET", "/?fill=1&converter_sample_rate_hz=200000&converter_bits=18&adc_rate_hz=48000&adc_bits=16&adc_band_hz=20000", "")
	body = strings.ReplaceAll(regexp.MustCompile(`\s+`).ReplaceAllString(rec.Body.String(), " "), `" id="f-`, `"`)
	require.Contains(t, body, `name="stopband_hz" value="28000"`)
	// Neither: the helper's field is marked.
	rec = do(t, h, "GET", "/?fill=1&adc_band_hz=20000&adc_bits=16", "")
	require.Equal(t, http.StatusBadRequest, rec.Code)
	require.Contains(t, rec.Body.String(), `data-testid="error-adc_rate_hz"`)
}

// TestExamplesBench renders the result page of every example spec of
// testdata/examples through the query (the JSON flattened as the form
// does it) and checks that the bench panel shows what the spec asks for:
// the yield with trials, the LSB figures with a converter, and the
// settling time, with no plot left out.
func TestExamplesBench(t *testing.T) {
	t.Parallel()
	files, err := filepath.Glob("../testdata/examples/*.json")
	require.NoError(t, err)
	require.NotEmpty(t, files)
	h, logs := newHandler(t)
	for _, file := range files {
		t.Run(filepath.Base(file), func(t *testing.T) {
			t.Parallel()
			data, err := os.ReadFile(file)
			require.NoError(t, err)
			var obj map[string]any
			require.NoError(t, json.Unmarshal(data, &obj))
			q := url.Values{}
			flatten(q, "", obj)
			rec := do(t, h, "GET", "/design?"+q.Encode(), "")
			require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
			page := rec.Body.String()
			require.JSONEq(t, specOfJSON(t, data), specOf(t, page), "the query carries the whole spec")
			require.NotContains(t, page, "could not be drawn")
			require.Contains(t, page, `data-testid="plot-noise-svg"`)
			require.Regexp(t, `^Settling time [0-9.]+ [mµn]?s to `, testid(page, "fig-settling"))
			if mc, ok := obj["montecarlo"].(map[string]any); ok && mc["trials"].(float64) > 0 {
				require.Contains(t, testid(page, "fig-yield"), fmt.Sprintf("of %v trials meet the mask", mc["trials"]))
				require.Contains(t, page, `data-testid="mc-stages"`)
			}
			if _, ok := obj["converter"]; ok {
				require.Contains(t, testid(page, "fig-quant"), "LSB/√12")
				require.Contains(t, testid(page, "fig-settling"), "±½ LSB")
				require.NotEmpty(t, testid(page, "check-noise"))
			}
		})
	}
	t.Cleanup(func() { require.NotContains(t, logs.String(), "level=WARN") })
}

// flatten puts the spec JSON object obj into q as the form names it:
// nested objects joined with underscores, arrays as "lo,hi".
func flatten(q url.Values, prefix string, obj map[string]any) {
	for k, v := range obj {
		name := k
		if prefix != "" {
			name = prefix + "_" + k
		}
		switch x := v.(type) {
		case map[string]any:
			flatten(q, name, x)
		case []any:
			parts := make([]string, len(x))
			for i, e := range x {
				parts[i] = fmt.Sprint(e)
			}
			q.Set(name, strings.Join(parts, ","))
		case bool:
			if x {
				q.Set(name, "1")
			} else {
				q.Set(name, "0")
			}
		default:
			q.Set(name, fmt.Sprint(x))
		}
	}
}

// specOfJSON is the spec JSON as the page shows it: parsed and indented.
func specOfJSON(t *testing.T, data []byte) string {
	t.Helper()
	s, err := synth.ParseSpecBytes(data)
	require.NoError(t, err)
	b, err := json.Marshal(s)
	require.NoError(t, err)
	return string(b)
}
