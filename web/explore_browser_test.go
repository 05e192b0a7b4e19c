package web_test

import (
	"net/http/httptest"
	"slices"
	"testing"

	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/require"
)

// TestBrowserExplore drives the exploration in a real browser: the form's
// "Explore alternatives" follows the run on the progress stream and loads
// the page, whose table sorts by a column's heading (ascending, then
// descending), with nothing the CSP forbids.
func TestBrowserExplore(t *testing.T) {
	if testing.Short() {
		t.Skip("the browser check is not short")
	}
	ctx := newBrowser(t)
	h, _ := newHandler(t)
	srv := httptest.NewServer(h)
	t.Cleanup(srv.Close)

	step(t, ctx, "open the form", chromedp.Navigate(srv.URL+"/?"+exploreQuery))
	step(t, ctx, "explore", chromedp.Evaluate[bool](`document.querySelector('[data-testid="explore-submit"]').click(); true`))
	step(t, ctx, "the page", chromedp.WaitVisible(chromedp.CSS(`[data-testid="candidates"]`)))
	require.Contains(t, step(t, ctx, "location", chromedp.Location()), "/explore?")
	require.Empty(t, step(t, ctx, "csp", chromedp.Evaluate[[]string](`window.__csp || []`)), "the page needs nothing the CSP forbids")

	const sortByYield = `(() => {
		const th = document.querySelector('th[data-key="yield"]');
		th.click();
		const col = Array.from(th.parentNode.cells).indexOf(th);
		return Array.from(document.querySelectorAll('table.sortable tbody tr')).map(r => Number(r.cells[col].getAttribute('data-sort')));
	})()`
	up := step(t, ctx, "sort", chromedp.Evaluate[[]float64](sortByYield))
	require.Len(t, up, 18)
	require.True(t, slices.IsSorted(up), "%v", up)
	down := step(t, ctx, "sort again", chromedp.Evaluate[[]float64](sortByYield))
	slices.Reverse(down)
	require.True(t, slices.IsSorted(down), "%v", down)
}
