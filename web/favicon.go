package web

import (
	"net/http"
	"strconv"

	"github.com/polewright/polewright/web/static"
)

// favicon serves the workbench's icon ([static.FaviconICO]) at
// /favicon.ico, where browsers look for it; it may be cached for a day.
func favicon(w http.ResponseWriter, _ *http.Request) {
	ico := static.FaviconICO()
	h := w.Header()
	h.Set("Content-Type", "image/x-icon")
	h.Set("Content-Length", strconv.Itoa(len(ico)))
	h.Set("Cache-Control", "public, max-age=86400")
	_, _ = w.Write(ico)
}
