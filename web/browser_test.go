package web_test

import (
	"context"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/circuit/spicerun"
)

// chromiumPath is where Debian's chromium package installs the browser.
const chromiumPath = "/usr/bin/chromium"

// screenshotPath is a fixed copy of the result page's screenshot, for a
// person to look at after a run.
const screenshotPath = "/tmp/polewright-page.png"

// requireChromium returns the browser's path; without it the test is
// skipped, except under CI=true, where it fails.
func requireChromium(t *testing.T) string {
	t.Helper()
	path := chromiumPath
	if _, err := os.Stat(path); err != nil {
		p, lerr := exec.LookPath("chromium")
		if lerr != nil {
			if os.Getenv("CI") == "true" {
				t.Fatalf("CI=true and the browser check needs chromium (apt-get install chromium): %v", err)
			}
			t.Skipf("skipping the browser check: chromium is not installed (apt-get install chromium): %v", err)
		}
		path = p
	}
	return path
}

// newBrowser starts headless chromium with an empty profile and no
// background traffic, and returns a context for one tab.
func newBrowser(t *testing.T) context.Context {
	t.Helper()
	opts := []chromedp.ExecAllocatorOption{
		chromedp.ExecPath(requireChromium(t)),
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(1280, 800),
	}
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	t.Cleanup(cancelAlloc)
	ctx, cancel := chromedp.NewContext(actx)
	t.Cleanup(cancel)
	// The first Run starts the browser; its context must not time out.
	// Every page then records the Content-Security-Policy violations it
	// meets, for cspViolations.
	require.NoError(t, chromedp.Do(ctx, chromedp.Navigate("about:blank"), chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
		_, err := cdp.Call(ctx, tg, page.AddScriptToEvaluateOnNewDocument, page.AddScriptToEvaluateOnNewDocumentParams{
			Source: `window.__csp = []; document.addEventListener("securitypolicyviolation", e => window.__csp.push(e.violatedDirective + " " + e.blockedURI));`,
		})
		return err
	})))
	return ctx
}

// setField sets the value of the control with the given id, as typing
// would, and checks that it took.
func setField(id, value string) chromedp.Action[chromedp.Void] {
	js := fmt.Sprintf(`(() => { const e = document.getElementById(%q); e.value = %q; e.dispatchEvent(new Event("input", {bubbles: true})); return e.value; })()`, id, value)
	return chromedp.Func(func(ctx context.Context, tg *chromedp.Target) error {
		got, err := chromedp.Evaluate[string](js)(ctx, tg)
		if err != nil {
			return err
		}
		if got != value {
			return fmt.Errorf("set %s to %q, reads %q", id, value, got)
		}
		return nil
	})
}

// step runs one action with a deadline.
func step[T any](t *testing.T, ctx context.Context, what string, a chromedp.Action[T]) T {
	t.Helper()
	sctx, cancel := context.WithTimeout(ctx, 30*time.Second)
	defer cancel()
	v, err := chromedp.Run(sctx, a)
	require.NoError(t, err, what)
	return v
}

// TestBrowser drives the workbench in a real browser: the anti-alias
// filter of an 18-bit vibration-monitoring converter of our own (200 kHz
// sampling, 20 kHz of signal), entered through the converter helper.
func TestBrowser(t *testing.T) {
	if testing.Short() {
		t.Skip("the browser check is not short")
	}
	ctx := newBrowser(t)
	h, _ := newHandler(t)
	srv := httptest.NewServer(h) // on 127.0.0.1
	t.Cleanup(srv.Close)

	// The form, filled as a person would, the helper doing its arithmetic.
	step(t, ctx, "open the form", chromedp.Navigate(srv.URL+"/"))
	step(t, ctx, "fill the form", chromedp.Steps(
		setField("f-approximation", "chebyshev1"),
		// The passband is left at the form's initial 1000 Hz: the helper
		// must make it the signal band, not keep it.
		setField("f-passband_ripple_db", "0.1"),
		setField("f-converter_full_scale_vpp", "4"),
		setField("f-opamp_gbw_hz", "50e6"),
		setField("f-montecarlo_trials", "300"),
		chromedp.SendKeys(chromedp.CSS("#f-adc_rate_hz"), "200000"),
		chromedp.SendKeys(chromedp.CSS("#f-adc_bits"), "18"),
		chromedp.SendKeys(chromedp.CSS("#f-adc_band_hz"), "20000"),
		chromedp.Click(chromedp.CSS("#fill")),
	))
	// fs − fb = 180 kHz; 6.02·18 + 1.76 = 110.12 dB (common practice).
	require.Equal(t, "180000", step(t, ctx, "stopband", chromedp.Value(chromedp.CSS("#f-stopband_hz"))))
	require.Equal(t, "110.12", step(t, ctx, "attenuation", chromedp.Value(chromedp.CSS("#f-stopband_atten_db"))))
	require.Equal(t, "20000", step(t, ctx, "passband", chromedp.Value(chromedp.CSS("#f-passband_hz"))))
	require.Equal(t, "200000", step(t, ctx, "converter rate", chromedp.Value(chromedp.CSS("#f-converter_sample_rate_hz"))))
	require.Equal(t, "18", step(t, ctx, "converter bits", chromedp.Value(chromedp.CSS("#f-converter_bits"))))
	require.Contains(t, step(t, ctx, "fill note", chromedp.Text(chromedp.CSS("#fill-status"))), "Filled")
	require.NotContains(t, step(t, ctx, "no round trip", chromedp.Location()), "fill=1", "the embedded script filled the form in place")
	unlabelled := step(t, ctx, "labels", chromedp.Evaluate[int](
		`[...document.querySelectorAll("input, select")].filter(e => e.labels.length === 0).length`))
	require.Zero(t, unlabelled, "every control has a label")

	// Submit; the result page loads.
	sctx, cancel := context.WithTimeout(ctx, 60*time.Second)
	r, err := chromedp.RunResponse(sctx, chromedp.Click(chromedp.CSS(`[data-testid="submit"]`)))
	cancel()
	require.NoError(t, err)
	require.Equal(t, int64(http.StatusOK), r.Status)
	step(t, ctx, "result", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
	loc := step(t, ctx, "location", chromedp.Location())
	require.Contains(t, loc, "/design?")
	require.Contains(t, loc, "stopband_hz=180000")

	require.Empty(t, step(t, ctx, "csp", chromedp.Evaluate[[]string](`window.__csp || []`)), "the page needs nothing the CSP forbids")

	// The stage table has one row per section synth designs for this spec.
	rows := step(t, ctx, "stage rows", chromedp.Evaluate[int](`document.querySelectorAll('[data-testid="stage-row"]').length`))
	want := sectionCount(t, `{"approximation":"chebyshev1","passband_hz":20000,"stopband_hz":180000,"passband_ripple_db":0.1,"stopband_atten_db":110.12,"opamp":{"gbw_hz":50e6},"montecarlo":{"trials":300}}`)
	require.Equal(t, want, rows)

	// The magnitude plot: curves and the shaded mask.
	plots := step(t, ctx, "plots", chromedp.Evaluate[int](`document.querySelectorAll('[data-testid^="plot-"] svg').length`))
	if realDeps().Plots == nil {
		t.Log("plot checks skipped: this build has no plotting package wired in")
	} else {
		require.Equal(t, 5, plots, "magnitude/phase, passband, group delay, step and the noise density")
		curves := step(t, ctx, "curves", chromedp.Evaluate[int](bodeCurvesJS))
		require.GreaterOrEqual(t, curves, 2, "ideal and as-built magnitude curves at least")
		mask := step(t, ctx, "mask", chromedp.Evaluate[int](bodeMaskJS))
		require.GreaterOrEqual(t, mask, 2, "shaded forbidden regions: passband and stopband")
	}

	// The bench panel: the yield of the 300 trials asked for, and the
	// edge-loss histograms.
	yield := step(t, ctx, "yield", chromedp.Text(chromedp.CSS(`[data-testid="fig-yield"]`)))
	require.Contains(t, yield, "of 300 trials meet the mask")
	hists := step(t, ctx, "histograms", chromedp.Evaluate[int](`document.querySelectorAll('[data-testid^="histogram-"] rect.bar').length`))
	require.Positive(t, hists, "edge-loss histograms have bars")

	// Screenshots: the result page, wide and on a phone.
	shot := step(t, ctx, "screenshot", chromedp.FullScreenshot(100))
	require.NoError(t, os.WriteFile(filepath.Join(t.TempDir(), "result.png"), shot, 0o644))
	if err := os.WriteFile(screenshotPath, shot, 0o644); err != nil {
		t.Logf("cannot save %s: %v", screenshotPath, err)
	}
	step(t, ctx, "phone", chromedp.EmulateViewport(390, 844, chromedp.EmulateMobile))
	overflow := step(t, ctx, "overflow", chromedp.Evaluate[int](`document.documentElement.scrollWidth - window.innerWidth`))
	require.LessOrEqual(t, overflow, 0, "no sideways scrolling of the page on a phone")
	phone := step(t, ctx, "phone screenshot", chromedp.FullScreenshot(100))
	require.NoError(t, os.WriteFile(filepath.Join(t.TempDir(), "phone.png"), phone, 0o644))
	_ = os.WriteFile(strings.TrimSuffix(screenshotPath, ".png")+"-phone.png", phone, 0o644)
	step(t, ctx, "wide again", chromedp.EmulateViewport(1280, 800))

	// The SPICE download is a deck that ngspice runs.
	t.Run("spice download", func(t *testing.T) {
		href := step(t, ctx, "spice link", chromedp.Evaluate[string](
			`(document.querySelector('a[data-kind="spice"]') || {getAttribute: () => ""}).getAttribute("href") || ""`))
		if href == "" {
			require.False(t, hasCircuit(t), "a design with a circuit offers its SPICE deck")
			t.Skip("no SPICE download: Design.Chain returns synth.ErrNoCircuit in this build (no circuit mapping)")
		}
		res, err := http.Get(srv.URL + href)
		require.NoError(t, err)
		defer res.Body.Close()
		require.Equal(t, http.StatusOK, res.StatusCode)
		deck, err := io.ReadAll(res.Body)
		require.NoError(t, err)
		require.Contains(t, string(deck), ".end")
		spicerun.Require(t)
		rctx, cancel := context.WithTimeout(context.Background(), time.Minute)
		defer cancel()
		freq, v, err := spicerun.Run(rctx, deck)
		require.NoError(t, err)
		require.NotEmpty(t, freq)
		require.Len(t, v, len(freq))
	})

	// A bad field: the stopband below the passband; the message sits in
	// the stopband control's block and the browser went nowhere else.
	t.Run("error beside the field", func(t *testing.T) {
		step(t, ctx, "open", chromedp.Navigate(srv.URL+"/"))
		step(t, ctx, "fill", chromedp.Steps(
			setField("f-passband_hz", "1000"),
			setField("f-stopband_hz", "800"),
		))
		sctx, cancel := context.WithTimeout(ctx, 30*time.Second)
		r, err := chromedp.RunResponse(sctx, chromedp.Click(chromedp.CSS(`[data-testid="submit"]`)))
		cancel()
		require.NoError(t, err)
		require.Equal(t, int64(http.StatusBadRequest), r.Status)
		msg := step(t, ctx, "message", chromedp.Text(chromedp.CSS(`[data-field="stopband_hz"] [data-testid="error-stopband_hz"]`)))
		require.Contains(t, msg, "must be above the passband edge")
		invalid := step(t, ctx, "aria", chromedp.Evaluate[string](`document.getElementById("f-stopband_hz").getAttribute("aria-invalid")`))
		require.Equal(t, "true", invalid)
		require.Equal(t, "800", step(t, ctx, "kept", chromedp.Value(chromedp.CSS("#f-stopband_hz"))), "the form keeps what was typed")
	})

	// A long Monte Carlo is followed on the progress stream; Cancel stops
	// it and the page stays; left alone, the page loads the permalink.
	t.Run("long run", func(t *testing.T) {
		step(t, ctx, "open", chromedp.Navigate(srv.URL+"/"))
		step(t, ctx, "fill", chromedp.Steps(
			setField("f-approximation", "chebyshev1"),
			setField("f-passband_hz", "20000"),
			setField("f-stopband_hz", "180000"),
			setField("f-passband_ripple_db", "0.1"),
			setField("f-stopband_atten_db", "110.12"),
			setField("f-montecarlo_trials", "100000"),
		))
		step(t, ctx, "submit", chromedp.Evaluate[bool](`document.querySelector('[data-testid="submit"]').click(); true`))
		// At the first progress event (the stream works under the CSP), the
		// Cancel button, in the same turn of the page's event loop.
		seen := step(t, ctx, "progress, then cancel", chromedp.Poll[string](`(() => {
			const t = document.getElementById("run-text").textContent;
			const bar = document.getElementById("run-progress");
			if (!/^Monte Carlo: \d+ of 100000 trials$/.test(t) || bar.hidden || !(bar.value > 0)) { return ""; }
			document.getElementById("run-stop").click();
			return t;
		})()`, chromedp.WithPollingTimeout(20*time.Second)))
		t.Logf("cancelled at %q", seen)
		require.Empty(t, step(t, ctx, "csp", chromedp.Evaluate[[]string](`window.__csp || []`)), "the stream needs nothing the CSP forbids")
		text := step(t, ctx, "cancelled", chromedp.Text(chromedp.CSS("#run-text")))
		require.Contains(t, text, "Cancelled")
		time.Sleep(500 * time.Millisecond)
		require.NotContains(t, step(t, ctx, "stayed", chromedp.Location()), "/design", "a cancelled run loads nothing")

		step(t, ctx, "fill", setField("f-montecarlo_trials", "30000"))
		label := step(t, ctx, "submit", chromedp.Evaluate[string](
			`document.querySelector('[data-testid="submit"]').click(); document.getElementById("run-text").textContent`))
		require.Contains(t, label, "Monte Carlo")
		step(t, ctx, "result", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
		loc := step(t, ctx, "location", chromedp.Location())
		require.Contains(t, loc, "/design?")
		require.Contains(t, loc, "montecarlo_trials=30000")
		require.NotContains(t, loc, "/progress")
	})
}

// bodeCurvesJS counts the stroked, unfilled paths of the magnitude plot
// (the curves); bodeMaskJS counts its filled shapes other than the
// background (the shaded forbidden regions).
var (
	bodeCurvesJS = fmt.Sprintf(`[...document.querySelectorAll('%s path')].filter(p => {
		const s = getComputedStyle(p); return s.fill === "none" && s.stroke !== "none" && (p.getAttribute("d") || "").length > 200;
	}).length`, `[data-testid="plot-bode-svg"] svg`)
	bodeMaskJS = fmt.Sprintf(`[...document.querySelectorAll('%s path, %s rect, %s polygon')].filter(p => {
		const s = getComputedStyle(p); return s.fill !== "none" && s.fill !== "rgb(255, 255, 255)" && s.fill !== "rgb(0, 0, 0)" && parseFloat(s.fillOpacity || "1") < 1;
	}).length`, `[data-testid="plot-bode-svg"] svg`, `[data-testid="plot-bode-svg"] svg`, `[data-testid="plot-bode-svg"] svg`)
)
