package web_test

import (
	"context"
	"fmt"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strconv"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/web"
)

// layoutQuery is the page the layout checks read: the vibration
// converter's anti-alias filter with every panel (Monte Carlo, noise,
// the rails of a 5 V single supply).
const layoutQuery = vibrationQuery + "&converter_sample_rate_hz=200000&converter_bits=18&converter_full_scale_vpp=4" +
	"&opamp_gbw_hz=50e6&montecarlo_trials=300&supply_positive_v=5&supply_negative_v=0"

// wideQuery is a page with the widest schematics: an elliptic lowpass
// on state-variable stages (notches: four op-amps) in front of a SAR
// converter, whose driver sits on the last stage.
const wideQuery = "approximation=elliptic&passband_hz=20000&order=6&stopband_atten_db=80&topology=state-variable" +
	"&converter_sample_rate_hz=1000000&converter_bits=16&converter_full_scale_vpp=4&converter_architecture=sar" +
	"&converter_sampling_capacitance_farad=30p&converter_acquisition_time_s=290n"

// overflowJS lists every table that is wider than the box it sits in,
// and every table container whose content overflows it, as
// "what: width > room" (empty: everything fits).
const overflowJS = `(() => {
	const out = [];
	for (const t of document.querySelectorAll("table")) {
		const room = t.parentElement.clientWidth;
		const w = t.getBoundingClientRect().width;
		const id = t.getAttribute("data-testid") || t.className || "table";
		if (w > room + 0.5) { out.push(id + ": " + w.toFixed(1) + " > " + room); }
		if (t.parentElement.scrollWidth > t.parentElement.clientWidth) {
			out.push(id + " container: " + t.parentElement.scrollWidth + " > " + t.parentElement.clientWidth);
		}
		const panel = t.closest(".panel").getBoundingClientRect();
		const r = t.getBoundingClientRect();
		if (r.left < panel.left - 0.5 || r.right > panel.right + 0.5) { out.push(id + ": outside its panel"); }
	}
	return out;
})()`

// schematicTextJS measures the text of every schematic on the page: the
// smallest height of a text node's bounding box and the smallest size
// its font is drawn at (font size × the SVG's scale on screen), in CSS
// pixels, and how many text nodes were measured.
const schematicTextJS = `(() => {
	let box = Infinity, font = Infinity, n = 0;
	for (const svg of document.querySelectorAll('[data-testid="schematic"] svg')) {
		const scale = svg.getScreenCTM().a;
		for (const t of svg.querySelectorAll("text")) {
			if (t.textContent.trim() === "") { continue; }
			const r = t.getBoundingClientRect();
			box = Math.min(box, r.height);
			font = Math.min(font, parseFloat(getComputedStyle(t).fontSize) * scale);
			n++;
		}
	}
	return [box, font, n];
})()`

// plotTextJS measures the text of every plot on the page as the
// schematicTextJS does the schematics': the least height of a text box, the
// least drawn font size and the number of text nodes.
const plotTextJS = `(() => {
	let box = Infinity, font = Infinity, n = 0;
	for (const svg of document.querySelectorAll('[data-testid^="plot-"] svg')) {
		const scale = svg.getScreenCTM().a;
		for (const t of svg.querySelectorAll("text")) {
			if (t.textContent.trim() === "") { continue; }
			const r = t.getBoundingClientRect();
			if (r.width === 0 && r.height === 0) { continue; } // folded away
			box = Math.min(box, r.height);
			font = Math.min(font, parseFloat(getComputedStyle(t).fontSize) * scale);
			n++;
		}
	}
	return [box, font, n];
})()`

// formAgreesJS compares the spec form with the page it is on: every
// control holds the value the server rendered (its default), and every
// spec parameter of the page's address is in its control. It returns the
// disagreements (empty: none).
const formAgreesJS = `(() => {
	const form = document.querySelector('[data-testid="spec-form"]');
	const out = [];
	for (const e of form.elements) {
		if (!e.name || e.tagName === "BUTTON") { continue; }
		if (e.type === "checkbox") {
			if (e.checked !== e.defaultChecked) { out.push(e.name + " checked " + e.checked); }
		} else if (e.tagName === "SELECT") {
			const o = e.options[e.selectedIndex];
			if (!o.defaultSelected && [...e.options].some(x => x.defaultSelected)) { out.push(e.name + " = " + e.value); }
		} else if (e.value !== e.defaultValue) {
			out.push(e.name + " = " + e.value + ", rendered " + e.defaultValue);
		}
	}
	for (const [k, v] of new URLSearchParams(location.search)) {
		const e = form.elements.namedItem(k);
		if (!e) { out.push(k + ": no control"); continue; }
		const got = e.type === "checkbox" ? (e.checked ? "1" : "") : e.value;
		if (got !== v) { out.push(k + " = " + got + " on a page of " + v); }
	}
	return out;
})()`

// TestBrowserLayout drives the result page in headless chromium at a
// desktop width (1440 px) and a phone's (390 px): every table fits its
// container, the page never scrolls sideways, the plots are drawn at
// FigureWidthPx, the plots' and the schematics' text is at least 11 px on
// the desktop,
// and after back and forward the form agrees with the page shown. With
// POLEWRIGHT_SCREENSHOTS=1 it writes the README's screenshots to
// testdata.
func TestBrowserLayout(t *testing.T) {
	if testing.Short() {
		t.Skip("the browser check is not short")
	}
	ctx := newBrowser(t)
	h, _ := newHandler(t)
	srv := httptest.NewServer(h)
	t.Cleanup(srv.Close)

	desktop := chromedp.EmulateViewport(1440, 900)
	phone := chromedp.EmulateViewport(390, 844, chromedp.EmulateMobile)
	step(t, ctx, "desktop", desktop)
	step(t, ctx, "open the result", chromedp.Navigate(srv.URL+"/design?"+layoutQuery))
	step(t, ctx, "result", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
	for _, id := range []string{"stage-table", "mc-stages", "noise-contributors", "swing-table"} {
		n := step(t, ctx, id, chromedp.Evaluate[int](`document.querySelectorAll('[data-testid="`+id+`"]').length`))
		require.Equal(t, 1, n, "the page has the table %s", id)
	}

	t.Run("1440 px", func(t *testing.T) {
		require.Empty(t, step(t, ctx, "tables", chromedp.Evaluate[[]string](overflowJS)), "every table fits its container")
		width := step(t, ctx, "page width", chromedp.Evaluate[float64](`document.scrollingElement.scrollWidth`))
		require.LessOrEqual(t, width, 1440.0, "no sideways scrolling")
		if realDeps().Plots != nil {
			plot := step(t, ctx, "plot width", chromedp.Evaluate[float64](
				`document.querySelector('[data-testid="plot-bode-svg"] svg').getBoundingClientRect().width`))
			require.InDelta(t, float64(web.FigureWidthPx), plot, 0.5, "the plots are drawn at FigureWidthPx")
			css := step(t, ctx, "--figure-width", chromedp.Evaluate[string](
				`getComputedStyle(document.documentElement).getPropertyValue("--figure-width").trim()`))
			require.Equal(t, strconv.Itoa(web.FigureWidthPx)+"px", css, "the style sheet says FigureWidthPx")
			pm := step(t, ctx, "plot text", chromedp.Evaluate[[]float64](plotTextJS))
			require.Positive(t, pm[2], "plots with text")
			t.Logf("plot text at 1440 px: %.0f nodes, boxes at least %.1f px high, fonts at least %.1f px", pm[2], pm[0], pm[1])
			require.GreaterOrEqual(t, pm[0], 11.0, "every plot text box is at least 11 px high")
			require.GreaterOrEqual(t, pm[1], 11.0, "every plot font is drawn at 11 px or more")
		}
		m := step(t, ctx, "schematic text", chromedp.Evaluate[[]float64](schematicTextJS))
		require.Positive(t, m[2], "schematics with text")
		t.Logf("schematic text at 1440 px: %.0f nodes, boxes at least %.1f px high, fonts at least %.1f px", m[2], m[0], m[1])
		require.GreaterOrEqual(t, m[0], 11.0, "every schematic text box is at least 11 px high")
		require.GreaterOrEqual(t, m[1], 11.0, "every schematic font is drawn at 11 px or more")
	})

	t.Run("enlarge", func(t *testing.T) {
		// The schematic's target lays it over the page, larger; its
		// close link brings the card back.
		step(t, ctx, "enlarge", chromedp.Click(chromedp.CSS(`#stage-1-schematic a.enlarge`)))
		got := step(t, ctx, "enlarged", chromedp.Evaluate[[]float64](`(() => {
			const f = document.getElementById("stage-1-schematic");
			const s = f.querySelector("svg").getBoundingClientRect();
			return [getComputedStyle(f).position === "fixed" ? 1 : 0, s.width, f.querySelector("svg").getScreenCTM().a];
		})()`))
		require.Equal(t, 1.0, got[0], "the target is laid over the page")
		require.Greater(t, got[2], 1.5, "and drawn larger than in the card")
		step(t, ctx, "close", chromedp.Click(chromedp.CSS(`#stage-1-schematic a.close`)))
		pos := step(t, ctx, "closed", chromedp.Evaluate[string](`getComputedStyle(document.getElementById("stage-1-schematic")).position`))
		require.Equal(t, "static", pos)
	})

	t.Run("wide schematics and every column", func(t *testing.T) {
		// State-variable notch stages (four op-amps) and a SAR driver on
		// the last: the widest schematics; notches add the stage table's
		// "Zero at" column.
		for _, v := range []struct {
			name string
			vp   chromedp.Action[chromedp.Void]
			px   float64
		}{{"1440", desktop, 1440}, {"390", phone, 390}} {
			step(t, ctx, "viewport "+v.name, v.vp)
			step(t, ctx, "open", chromedp.Navigate(srv.URL+"/design?"+wideQuery))
			step(t, ctx, "result", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
			require.Empty(t, step(t, ctx, "tables", chromedp.Evaluate[[]string](overflowJS)), "every table fits its container at %s px", v.name)
			width := step(t, ctx, "page width", chromedp.Evaluate[float64](`document.scrollingElement.scrollWidth`))
			require.LessOrEqual(t, width, v.px, "no sideways scrolling at %s px", v.name)
			if v.name == "1440" {
				zero := step(t, ctx, "zero column", chromedp.Evaluate[bool](`[...document.querySelectorAll('[data-testid="stage-table"] th')].some(th => th.textContent === "Zero at")`))
				require.True(t, zero, "the notches' column is there")
				m := step(t, ctx, "schematic text", chromedp.Evaluate[[]float64](schematicTextJS))
				t.Logf("widest schematics at 1440 px: %.0f text nodes, boxes at least %.1f px high, fonts at least %.1f px", m[2], m[0], m[1])
				require.GreaterOrEqual(t, m[0], 11.0)
				require.GreaterOrEqual(t, m[1], 11.0)
			}
		}
		step(t, ctx, "desktop", desktop)
	})

	if os.Getenv("POLEWRIGHT_SCREENSHOTS") == "1" {
		shot(t, ctx, srv.URL, desktop, "workbench-1440.png")
	}

	t.Run("390 px", func(t *testing.T) {
		step(t, ctx, "phone", phone)
		step(t, ctx, "reload", chromedp.Navigate(srv.URL+"/design?"+layoutQuery))
		step(t, ctx, "result", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
		// Against the device's width: a mobile viewport widens itself to
		// content that overflows it.
		width := step(t, ctx, "page width", chromedp.Evaluate[float64](`document.scrollingElement.scrollWidth`))
		require.LessOrEqual(t, width, 390.0, "no sideways scrolling of the page on a phone")
		inner := step(t, ctx, "window", chromedp.Evaluate[float64](`window.innerWidth`))
		require.LessOrEqual(t, inner, 390.0, "the viewport stayed at the phone's width")
		require.Empty(t, step(t, ctx, "tables", chromedp.Evaluate[[]string](overflowJS)), "every table fits its container")
		if realDeps().Plots != nil {
			// A tap lays the plot over the page at 900 px, scrolled in its
			// own box; the page itself still does not scroll sideways.
			step(t, ctx, "enlarge the plot", chromedp.Click(chromedp.CSS(`#plot-bode-svg a.enlarge`)))
			got := step(t, ctx, "enlarged", chromedp.Evaluate[[]float64](`(() => {
				const f = document.getElementById("plot-bode-svg");
				return [getComputedStyle(f).position === "fixed" ? 1 : 0, f.querySelector("svg").getBoundingClientRect().width,
					document.scrollingElement.scrollWidth];
			})()`))
			require.Equal(t, 1.0, got[0], "the plot is laid over the page")
			require.GreaterOrEqual(t, got[1], 900.0, "at a readable width")
			require.LessOrEqual(t, got[2], 390.0, "the page does not scroll sideways")
			step(t, ctx, "close", chromedp.Click(chromedp.CSS(`#plot-bode-svg a.close`)))
			pos := step(t, ctx, "closed", chromedp.Evaluate[string](`getComputedStyle(document.getElementById("plot-bode-svg")).position`))
			require.Equal(t, "static", pos)
		}
		if os.Getenv("POLEWRIGHT_SCREENSHOTS") == "1" {
			shot(t, ctx, srv.URL, phone, "workbench-390.png")
		}
		step(t, ctx, "desktop", desktop)
	})

	t.Run("converter panel, 100 kHz band", func(t *testing.T) {
		// A 1 MHz, 16-bit converter with a 100 kHz signal band: the
		// helper fills every field, the passband included (it must not
		// keep the form's initial 1000 Hz).
		step(t, ctx, "form", chromedp.Navigate(srv.URL+"/"))
		step(t, ctx, "helper", chromedp.Steps(
			setField("f-adc_rate_hz", "1000000"),
			setField("f-adc_bits", "16"),
			setField("f-adc_band_hz", "100000"),
			chromedp.Click(chromedp.CSS("#fill")),
		))
		// fs − fb = 900 kHz; 6.02·16 + 1.76 = 98.08 dB (common practice).
		for id, want := range map[string]string{
			"f-passband_hz": "100000", "f-stopband_hz": "900000", "f-stopband_atten_db": "98.08",
			"f-converter_sample_rate_hz": "1000000", "f-converter_bits": "16",
		} {
			require.Equal(t, want, step(t, ctx, id, chromedp.Value(chromedp.CSS("#"+id))), id)
		}
	})

	t.Run("back and forward", func(t *testing.T) {
		const other = "/design?response=lowpass&approximation=bessel&passband_hz=5000&order=4"
		step(t, ctx, "page A", chromedp.Navigate(srv.URL+"/design?"+layoutQuery))
		step(t, ctx, "result A", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
		require.Empty(t, step(t, ctx, "agrees on load", chromedp.Evaluate[[]string](formAgreesJS)))
		// Edits that are not submitted: text, a choice and a box.
		step(t, ctx, "edit", chromedp.Steps(
			setField("f-passband_hz", "12345"),
			setField("f-approximation", "butterworth"),
			chromedp.Click(chromedp.CSS("#f-opamp_ideal")),
		))
		require.NotEmpty(t, step(t, ctx, "edited", chromedp.Evaluate[[]string](formAgreesJS)), "the check sees edits")
		step(t, ctx, "page B", chromedp.Navigate(srv.URL+other))
		step(t, ctx, "result B", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
		step(t, ctx, "edit B", setField("f-passband_hz", "777"))
		step(t, ctx, "mark B", chromedp.Evaluate[bool](`window.__left = true`))

		// history.back() rather than chromedp.NavigateBack, which waits for
		// a load event: a page restored from the back/forward cache fires
		// only pageshow.
		step(t, ctx, "back", chromedp.Evaluate[bool](`setTimeout(() => history.back(), 0); true`))
		waitLoaded(t, ctx, "passband_hz=20000")
		require.Empty(t, step(t, ctx, "A after back", chromedp.Evaluate[[]string](formAgreesJS)), "the form agrees with page A")
		step(t, ctx, "forward", chromedp.Evaluate[bool](`setTimeout(() => history.forward(), 0); true`))
		waitLoaded(t, ctx, "bessel")
		cached := step(t, ctx, "how", chromedp.Evaluate[bool](`window.__left === true`))
		t.Logf("page B restored from the back/forward cache (its script state kept): %v", cached)
		require.Empty(t, step(t, ctx, "B after forward", chromedp.Evaluate[[]string](formAgreesJS)), "the form agrees with page B")
	})
}

// waitLoaded waits until the tab shows a result page whose address
// contains want, loaded (readyState complete).
func waitLoaded(t *testing.T, ctx context.Context, want string) {
	t.Helper()
	// A navigation replaces the page's execution context under a poll, so
	// each try is its own evaluation, and an error (no context yet) is a
	// try that failed.
	js := fmt.Sprintf(`location.search.includes(%q) && document.readyState === "complete" && !!document.querySelector('[data-testid="result"]')`, want)
	deadline := time.Now().Add(20 * time.Second)
	for {
		sctx, cancel := context.WithTimeout(ctx, 2*time.Second)
		ok, err := chromedp.Run(sctx, chromedp.Evaluate[bool](js))
		cancel()
		if err == nil && ok {
			break
		}
		require.True(t, time.Now().Before(deadline), "the page %s did not load (last error: %v)", want, err)
		time.Sleep(50 * time.Millisecond)
	}
	// pageshow has run by the time the page is complete; one more turn of
	// the event loop for its handlers.
	step(t, ctx, "settle", chromedp.Evaluate[bool](`new Promise(r => setTimeout(() => r(true), 50))`, chromedp.EvalAwaitPromise))
}

// shot writes a full-page screenshot of the layout page at viewport v to
// testdata/name.
func shot(t *testing.T, ctx context.Context, base string, v chromedp.Action[chromedp.Void], name string) {
	t.Helper()
	step(t, ctx, "viewport", v)
	step(t, ctx, "open", chromedp.Navigate(base+"/design?"+layoutQuery))
	step(t, ctx, "result", chromedp.WaitVisible(chromedp.CSS(`[data-testid="result"]`)))
	b := step(t, ctx, "screenshot", chromedp.FullScreenshot(100))
	require.NoError(t, os.WriteFile(filepath.Join("..", "testdata", name), b, 0o644))
	t.Logf("wrote testdata/%s (%d bytes)", name, len(b))
}
