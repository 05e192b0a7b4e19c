package web

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"strings"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/export"
)

// apiDesign answers POST /api/v1/design: spec JSON in, design JSON out.
func (h *handler) apiDesign(w http.ResponseWriter, r *http.Request) {
	d, ok := h.apiSynthesize(w, r)
	if !ok {
		return
	}
	// Encoded into a pooled buffer: json.Marshal's result and the newline
	// appended to it were two more copies of a 130 KB document. Encode
	// writes what Marshal does (HTML escaped) and the newline.
	buf := getBuffer()
	defer putBuffer(buf)
	if err := json.NewEncoder(buf).Encode(d); err != nil {
		h.internal(w, r, err)
		return
	}
	w.Header().Set("Content-Type", "application/json")
	w.Header().Set("Cache-Control", "no-store")
	_, _ = w.Write(buf.Bytes())
}

// apiExport answers POST /api/v1/export?as=KIND: spec JSON in, the export
// out with its media type.
func (h *handler) apiExport(w http.ResponseWriter, r *http.Request) {
	q := r.URL.Query()
	kinds := strings.Join(export.Kinds, ", ")
	switch as := q["as"]; {
	case len(as) == 0 || as[0] == "":
		writeJSONError(w, http.StatusBadRequest, "as: is required (kinds: "+kinds+")", "as")
		return
	case len(as) > 1:
		writeJSONError(w, http.StatusBadRequest, "as: is given more than once", "as")
		return
	case !export.Known(as[0]):
		writeJSONError(w, http.StatusBadRequest, fmt.Sprintf("as: unknown kind %q (kinds: %s)", clip(as[0]), kinds), "as")
		return
	}
	for name := range q {
		if name != "as" {
			writeJSONError(w, http.StatusBadRequest, fmt.Sprintf("%s: unknown parameter (the export takes only as)", clip(name)), name)
			return
		}
	}
	kind := q.Get("as")
	d, ok := h.apiSynthesize(w, r)
	if !ok {
		return
	}
	buf := getBuffer()
	defer putBuffer(buf)
	if err := h.export(buf, d, kind); err != nil {
		h.exportFailed(w, r, kind, err)
		return
	}
	if err := r.Context().Err(); err != nil { // the deadline crossed while drawing
		h.synthFailed(w, r, err)
		return
	}
	w.Header().Set("Content-Type", export.ContentType(kind))
	w.Header().Set("Cache-Control", "no-store")
	_, _ = w.Write(buf.Bytes())
}

// apiSynthesize reads the spec JSON of r's body and designs it (or takes
// its design from the cache). On failure
// it has answered and returns ok = false.
func (h *handler) apiSynthesize(w http.ResponseWriter, r *http.Request) (*synth.Design, bool) {
	body, err := io.ReadAll(r.Body)
	if err != nil {
		var tooBig *http.MaxBytesError
		if errors.As(err, &tooBig) {
			writeJSONError(w, http.StatusRequestEntityTooLarge, fmt.Sprintf("the request body is larger than %d bytes (64 KiB)", MaxBodyBytes), "json")
			return nil, false
		}
		writeJSONError(w, http.StatusBadRequest, "the request body cannot be read", "json")
		return nil, false
	}
	spec, err := synth.ParseSpecBytes(body)
	var d *synth.Design
	if err == nil {
		d, err = h.cache.design(r.Context(), spec)
	}
	if err == nil {
		return d, true
	}
	if fe, ok := synth.IsFieldError(err); ok {
		writeJSONError(w, http.StatusBadRequest, fe.Error(), fe.Field)
		return nil, false
	}
	h.synthFailed(w, r, err)
	return nil, false
}
