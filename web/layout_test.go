package web_test

import (
	"html"
	"net/http"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"
)

// TestResultReadsTopDown checks the order of the result page's parts:
// the verdict with the checks, the response plots, the stage table and
// one card per stage, the bench, the downloads, then the form that holds
// the spec.
func TestResultReadsTopDown(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	page := do(t, h, "GET", "/design?"+elliptic8Query, "").Body.String()
	order := []string{`data-testid="verdict"`, `data-testid="checks"`, `id="response"`, `data-testid="plot-bode-svg"`,
		`data-testid="stage-table"`, `data-testid="stage-card"`, `id="bench"`, `data-testid="plot-step-svg"`,
		`id="downloads"`, `data-testid="spec-form"`}
	last := -1
	for _, mark := range order {
		i := strings.Index(page, mark)
		require.Greater(t, i, last, "%s comes after the parts before it", mark)
		last = i
	}
	rows := strings.Count(page, `data-testid="stage-row"`)
	require.Positive(t, rows)
	require.Equal(t, rows, strings.Count(page, `data-testid="stage-card"`), "a card per stage")
	// Each row links to its card.
	for k := 1; k <= rows; k++ {
		require.Contains(t, page, `<a href="#stage-`+strconv.Itoa(k)+`">`)
		require.Contains(t, page, `id="stage-`+strconv.Itoa(k)+`"`)
	}
}

// TestColumnsExplained checks that every column heading of the result
// page carries a hint (its title), and that the legends say what the
// part table's Exact and Off by columns are.
func TestColumnsExplained(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	page := do(t, h, "GET", "/design?"+elliptic8Query+"&supply_positive_v=5", "").Body.String()
	heads := regexp.MustCompile(`<th scope="col"[^>]*>`).FindAllString(page, -1)
	require.Greater(t, len(heads), 20, "the stage, part, Monte Carlo, noise and swing tables")
	for _, th := range heads {
		require.Regexp(t, `title="[^"]{12,}"`, th, "every heading has a hint")
	}
	for _, col := range []string{"Exact", "Off by"} {
		re := regexp.MustCompile(`<th scope="col" title="([^"]+)"><span class="hinted">` + col + `</span></th>`)
		m := re.FindStringSubmatch(page)
		require.NotNil(t, m, col)
		require.Contains(t, html.UnescapeString(m[1]), "unrounded", col)
	}
	require.Contains(t, page, "What the columns mean")
}

// TestStageSchematicDownload checks each stage's own schematic download:
// an SVG with a title naming the stage and the spec, named after the
// design and the stage; a stage beyond the design's is a 400 naming the
// stage parameter.
func TestStageSchematicDownload(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	page := do(t, h, "GET", "/design?"+vibrationQuery, "").Body.String()
	re := regexp.MustCompile(`<a href="(/download/schematic-svg\?stage=([0-9]+)&[^"]*)" download="([^"]*)" data-kind="stage-schematic"`)
	links := re.FindAllStringSubmatch(page, -1)
	stages := strings.Count(page, `data-testid="stage-row"`)
	require.Len(t, links, stages, "a schematic download per stage")
	for i, m := range links {
		require.Equal(t, strconv.Itoa(i+1), m[2])
		require.Equal(t, "polewright-chebyshev1-6-lowpass-20kHz-stage"+strconv.Itoa(i+1)+"-schematic.svg", m[3])
		rec := do(t, h, "GET", html.UnescapeString(m[1]), "")
		require.Equal(t, http.StatusOK, rec.Code)
		require.Equal(t, "image/svg+xml", rec.Header().Get("Content-Type"))
		require.Contains(t, rec.Header().Get("Content-Disposition"), m[3])
		body := rec.Body.String()
		require.Contains(t, body, "schematic of stage "+strconv.Itoa(i+1)+"</title>")
		require.Contains(t, body, "<desc>spec: {")
		require.Contains(t, body, ">R"+strconv.Itoa(i+1)+"01<", "chain-wide designators")
		require.Equal(t, 1, strings.Count(body, `class="schematic"`), "one stage only")
	}
	query := strings.TrimPrefix(html.UnescapeString(links[0][1]), "/download/schematic-svg?stage=1&")
	for _, bad := range []string{"0", "x", strconv.Itoa(stages + 1)} {
		rec := do(t, h, "GET", "/download/schematic-svg?stage="+bad+"&"+query, "")
		require.Equal(t, http.StatusBadRequest, rec.Code, "stage=%s", bad)
		require.Contains(t, rec.Body.String(), "stage must be", "stage=%s", bad)
	}
	// stage belongs to the schematic only.
	rec := do(t, h, "GET", "/download/bom?stage=1&"+query, "")
	require.Equal(t, http.StatusBadRequest, rec.Code)
}

// TestFormResetsOnShow checks the form's attributes that keep it in
// agreement with the page after back/forward: no form restoration
// (autocomplete off) on every form, and the reset marker on the result
// page's, whose values are the spec of the design shown.
func TestFormResetsOnShow(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	home := do(t, h, "GET", "/", "").Body.String()
	result := do(t, h, "GET", "/design?"+vibrationQuery, "").Body.String()
	formTag := regexp.MustCompile(`<form class="spec"[^>]*>`)
	require.Contains(t, formTag.FindString(home), `autocomplete="off"`)
	require.NotContains(t, formTag.FindString(home), "data-reset-on-show")
	require.Contains(t, formTag.FindString(result), `autocomplete="off"`)
	require.Contains(t, formTag.FindString(result), "data-reset-on-show")
	// The form holds the page's spec.
	require.Regexp(t, `id="f-passband_hz" name="passband_hz" value="20000"`, result)
	require.Regexp(t, `id="f-stopband_hz" name="stopband_hz" value="180000"`, result)
}

// TestFormStartsFromConverter: on the start page and under a result the
// form's first panel is the converter's ("what does it need?"), before
// the response, the mask and the converter fields it fills.
func TestFormStartsFromConverter(t *testing.T) {
	t.Parallel()
	h, _ := newHandler(t)
	for _, path := range []string{"/", "/design?" + elliptic8Query} {
		page := do(t, h, "GET", path, "").Body.String()
		form := strings.Index(page, `data-testid="spec-form"`)
		require.Positive(t, form, path)
		panel := strings.Index(page[form:], `data-testid="converter-panel"`)
		require.Positive(t, panel, "%s: the converter panel is in the form", path)
		first := strings.Index(page[form:], "<fieldset")
		require.Less(t, panel-first, 40, "%s: the converter panel is the form's first fieldset", path)
		require.Contains(t, page[form+panel:], "Start from the converter")
	}
}
