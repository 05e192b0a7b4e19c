package web_test

import (
	"context"
	"net/http"
	"net/http/httptest"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/require"
)

// TestReportBrowser loads the report download in headless chromium: it
// fetches nothing (the server sees the report's one request and the
// page's Resource Timing lists no resource), every plot and schematic is
// drawn inline, and chromium's own --print-to-pdf prints it to a PDF of
// several pages.
func TestReportBrowser(t *testing.T) {
	if testing.Short() {
		t.Skip("the browser check is not short")
	}
	ctx := newBrowser(t)
	h, _ := newHandler(t)

	// The report as the page's download link serves it.
	query := "approximation=elliptic&passband_hz=20000&stopband_hz=28000&passband_ripple_db=0.1&stopband_atten_db=80" +
		"&converter_bits=16&converter_sample_rate_hz=96000&converter_full_scale_vpp=4&montecarlo_trials=100"
	rec := do(t, h, "GET", "/download/report?"+query, "")
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	require.Equal(t, "text/html; charset=utf-8", rec.Header().Get("Content-Type"))
	require.Contains(t, rec.Header().Get("Content-Disposition"), "polewright-elliptic-")
	report := rec.Body.Bytes()

	// A server that answers only the report and records every request.
	var mu sync.Mutex
	var paths []string
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		mu.Lock()
		paths = append(paths, r.URL.Path)
		mu.Unlock()
		if r.URL.Path != "/report.html" {
			http.NotFound(w, r)
			return
		}
		w.Header().Set("Content-Type", "text/html; charset=utf-8")
		_, _ = w.Write(report)
	}))
	t.Cleanup(srv.Close)

	step(t, ctx, "open the report", chromedp.Navigate(srv.URL+"/report.html"))
	step(t, ctx, "loaded", chromedp.WaitVisible(chromedp.CSS(`[data-testid="verdict"]`)))
	resources := step(t, ctx, "resources", chromedp.Evaluate[[]string](`performance.getEntriesByType("resource").map(e => e.name)`))
	require.Empty(t, resources, "the report loads nothing besides itself")
	svgs := step(t, ctx, "drawings", chromedp.Evaluate[int](`[...document.querySelectorAll("svg")].filter(s => s.getBoundingClientRect().width > 100).length`))
	stages := step(t, ctx, "stages", chromedp.Evaluate[int](`document.querySelectorAll('[data-testid="stage"]').length`))
	require.Positive(t, stages)
	require.Equal(t, 5+stages, svgs, "five plots and one schematic per stage, drawn")
	step(t, ctx, "phone", chromedp.EmulateViewport(390, 844, chromedp.EmulateMobile))
	// Against the device's width: a mobile viewport widens itself to
	// content that overflows it.
	width := step(t, ctx, "width", chromedp.Evaluate[float64](`document.documentElement.scrollWidth`))
	require.LessOrEqual(t, width, 390.0, "no sideways scrolling of the report on a phone")
	// In print, on an A4 page's width (186 mm between the margins, about
	// 700 CSS px), no table or drawing runs past the page's content box.
	step(t, ctx, "print media", chromedp.Steps(
		chromedp.EmulateViewport(700, 1000),
		chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
			_, err := cdp.Call(ctx, tg, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"})
			return err
		}),
	))
	cut := step(t, ctx, "print widths", chromedp.Evaluate[[]string](`(() => {
		const right = document.body.getBoundingClientRect().right + 0.5;
		return [...document.querySelectorAll("table, svg, pre")].filter(e => e.getBoundingClientRect().right > right)
			.map(e => e.tagName + "." + (e.getAttribute("class") || "") + " " + Math.round(e.getBoundingClientRect().width));
	})()`))
	require.Empty(t, cut, "everything fits the printed page's width")
	mu.Lock()
	for _, p := range paths {
		if p != "/favicon.ico" { // the browser's own habit, not the report's
			require.Equal(t, "/report.html", p, "the report asked for nothing else")
		}
	}
	mu.Unlock()

	// Printing: chromium's --print-to-pdf, with the network switched off
	// by loading the file itself.
	dir := t.TempDir()
	file := filepath.Join(dir, "report.html")
	require.NoError(t, os.WriteFile(file, report, 0o644))
	pdf := filepath.Join(dir, "report.pdf")
	pctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	cmd := exec.CommandContext(pctx, requireChromium(t), "--headless", "--no-sandbox", "--disable-gpu",
		"--disable-background-networking", "--no-first-run", "--user-data-dir="+filepath.Join(dir, "profile"),
		"--no-pdf-header-footer", "--print-to-pdf="+pdf, "file://"+file)
	out, err := cmd.CombinedOutput()
	require.NoError(t, err, string(out))
	b, err := os.ReadFile(pdf)
	require.NoError(t, err)
	require.True(t, strings.HasPrefix(string(b), "%PDF-"), "a PDF")
	pages := strings.Count(string(b), "/Type /Page") - strings.Count(string(b), "/Type /Pages")
	if pages <= 0 { // compact writers spell it without the space
		pages = strings.Count(string(b), "/Type/Page") - strings.Count(string(b), "/Type/Pages")
	}
	t.Logf("report: %d bytes of HTML, %d-byte PDF of %d pages", len(report), len(b), pages)
	require.Greater(t, pages, 1, "the report prints on several pages")
}
