package web

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"sync"

	"github.com/a-h/templ"
	"github.com/go-chi/chi/v5"
	"github.com/go-chi/chi/v5/middleware"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/components"
	"github.com/polewright/polewright/web/export"
)

// home serves the spec form. With no query it is the blank form; a query
// pre-fills it, and the helper's button (fill=1) fills the stopband from
// the converter fields first.
func (h *handler) home(w http.ResponseWriter, r *http.Request) {
	q := r.URL.Query()
	if len(q) == 0 {
		h.render(w, r, http.StatusOK, components.Home(buildForm(initialValues(), nil), ""))
		return
	}
	vals, err := readQuery(q, paramFill)
	var msgs map[string]string
	filled := ""
	if err != nil {
		msgs = placeError(vals, err)
	} else if vals[paramFill] != "" {
		msgs, filled = applyHelper(vals)
	}
	status := http.StatusOK
	if len(msgs) > 0 {
		status = http.StatusBadRequest
	}
	form := buildForm(vals, msgs)
	form.Filled = filled
	h.render(w, r, status, components.Home(form, ""))
}

// design serves the result page of the spec in the query, or the form with
// the error beside its field (400).
func (h *handler) design(w http.ResponseWriter, r *http.Request) {
	// A submitted form carries every field, most of them empty: answer
	// with the permalink that carries only the fields given, so that the
	// address bar, the history and a bookmark hold the clean one.
	if q := r.URL.Query(); hasEmptyParam(q) && (r.Method == http.MethodGet || r.Method == http.MethodHead) {
		if vals, err := readQuery(q); err == nil {
			http.Redirect(w, r, "/design?"+canonicalQuery(vals), http.StatusSeeOther)
			return
		}
	}
	vals, d, ok := h.designFromQuery(w, r, r.URL.Query())
	if !ok {
		return
	}
	frame := &svgFrame{}
	defer frame.release() // after the page is written
	res, err := h.buildResult(r.Context(), vals, d, frame)
	if err == nil {
		// The drawings do not watch the deadline: a request that crossed
		// it while they ran is answered as one that crossed it designing.
		err = r.Context().Err()
	}
	if err != nil {
		h.synthFailed(w, r, err)
		return
	}
	form := buildForm(vals, nil)
	form.ResetOnShow = true
	h.render(w, r, http.StatusOK, components.DesignPage(form, res))
}

// download serves one export of the spec in the query as a file, named
// after the design ([export.DesignFileName]). The schematic takes a
// parameter of its own besides the spec's: stage=N gives stage N's
// schematic alone.
func (h *handler) download(w http.ResponseWriter, r *http.Request) {
	kind := chi.URLParam(r, "kind")
	if !export.Known(kind) {
		h.fail(w, r, http.StatusNotFound, fmt.Sprintf("there is no download %q (kinds: %s)", clip(kind), strings.Join(export.Kinds, ", ")), "")
		return
	}
	q := r.URL.Query()
	stage := 0
	if vs, ok := q[paramStage]; ok && kind == "schematic-svg" {
		n, err := strconv.Atoi(vs[0])
		if len(vs) != 1 || err != nil || n < 1 || n > synth.MaxOrder {
			h.fail(w, r, http.StatusBadRequest, fmt.Sprintf("stage must be a stage's number, 1 to %d (got %q)", synth.MaxOrder, clip(strings.Join(vs, ","))), paramStage)
			return
		}
		stage = n
		q.Del(paramStage)
	}
	_, d, ok := h.designFromQuery(w, r, q)
	if !ok {
		return
	}
	var buf bytes.Buffer
	name := export.DesignFileName(d, kind)
	if stage > 0 {
		ch, err := d.Chain()
		if err == nil && stage > len(ch.Stages) {
			h.fail(w, r, http.StatusBadRequest, fmt.Sprintf("stage must be a stage's number, 1 to %d (got %d)", len(ch.Stages), stage), paramStage)
			return
		}
		if err == nil {
			err = export.WriteStageSchematic(&buf, d, stage)
		}
		if err != nil {
			h.exportFailed(w, r, kind, err)
			return
		}
		name = export.StageFileName(d, stage)
	} else if err := h.export(&buf, d, kind); err != nil {
		h.exportFailed(w, r, kind, err)
		return
	}
	if err := r.Context().Err(); err != nil { // the deadline crossed while drawing
		h.synthFailed(w, r, err)
		return
	}
	w.Header().Set("Content-Type", export.ContentType(kind))
	w.Header().Set("Content-Disposition", fmt.Sprintf("attachment; filename=%q", name))
	w.Header().Set("Cache-Control", "no-store")
	_, _ = w.Write(buf.Bytes())
}

// designFromQuery parses the spec of r's query and designs it (or takes
// its design from the cache). On failure
// it has answered (the form with the error for a bad spec) and returns
// ok = false.
func (h *handler) designFromQuery(w http.ResponseWriter, r *http.Request, q url.Values) (formValues, *synth.Design, bool) {
	vals, spec, err := parseQuery(q)
	var d *synth.Design
	if err == nil {
		d, err = h.cache.design(r.Context(), spec)
	}
	if err == nil {
		return vals, d, true
	}
	if _, ok := synth.IsFieldError(err); ok {
		h.render(w, r, http.StatusBadRequest, components.Home(buildForm(vals, placeError(vals, err)), "Correct the field marked below and design again."))
		return nil, nil, false
	}
	h.synthFailed(w, r, err)
	return nil, nil, false
}

// export writes d as kind. The plot kinds are drawn by Deps.Plots when it
// is set (noise-svg when it is also a [NoisePlots]), so that a downloaded
// plot is the one the page shows, and labelled as [export.Write] labels
// its SVGs; everything else goes through Deps.Export.
func (h *handler) export(w io.Writer, d *synth.Design, kind string) error {
	var draw func(io.Writer) error // nil: not a plot Deps.Plots draws
	if p := h.deps.Plots; p != nil {
		for _, pk := range plotKinds {
			if pk.kind == kind && pk.drawnBy(p) {
				draw = func(w io.Writer) error { return pk.draw(p, w, d) }
			}
		}
		if np, ok := p.(NoisePlots); ok && kind == noiseKind {
			if d.Noise == nil {
				return export.ErrNoNoise
			}
			draw = func(w io.Writer) error { return np.Noise(w, d) }
		}
	}
	if draw == nil {
		return h.deps.Export(w, d, kind)
	}
	var buf bytes.Buffer
	if err := draw(&buf); err != nil {
		return err
	}
	_, err := w.Write(export.LabelSVG(buf.Bytes(), d, kind))
	return err
}

// synthFailed answers a failure that is not the spec's fault: designing,
// drawing or rendering. A crossed deadline (the request's context done) is
// a 503 with Retry-After, logged by logRequests as a warning, or as a
// client that went away; anything else is an internal error (500, logged
// as an ERROR).
func (h *handler) synthFailed(w http.ResponseWriter, r *http.Request, err error) {
	if errors.Is(err, context.DeadlineExceeded) || errors.Is(err, context.Canceled) || r.Context().Err() != nil {
		h.fail(w, r, http.StatusServiceUnavailable, "the design took too long; try again, or a lower order", "")
		return
	}
	h.internal(w, r, err)
}

// exportFailed answers an export that could not be written.
func (h *handler) exportFailed(w http.ResponseWriter, r *http.Request, kind string, err error) {
	if errors.Is(err, synth.ErrNoCircuit) {
		h.fail(w, r, http.StatusNotImplemented, kind+" needs the circuit of the design, which this build does not map yet", "")
		return
	}
	if errors.Is(err, export.ErrNoNoise) {
		h.fail(w, r, http.StatusNotImplemented, "this design has no noise analysis (it needs the circuit)", "")
		return
	}
	h.synthFailed(w, r, err)
}

// internal logs err and answers 500 without its text.
func (h *handler) internal(w http.ResponseWriter, r *http.Request, err error) {
	h.log.LogAttrs(r.Context(), slog.LevelError, "internal error",
		slog.String("error", err.Error()),
		slog.String("path", r.URL.Path),
		slog.String("request_id", middleware.GetReqID(r.Context())))
	h.fail(w, r, http.StatusInternalServerError, "internal error; it has been logged", "")
}

// render renders c into a buffer and sends it, so that a failed render
// never sends half a page.
func (h *handler) render(w http.ResponseWriter, r *http.Request, status int, c templ.Component) {
	buf := getBuffer()
	defer putBuffer(buf)
	if err := c.Render(r.Context(), buf); err != nil {
		h.synthFailed(w, r, err)
		return
	}
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.Header().Set("Cache-Control", "no-cache")
	w.WriteHeader(status)
	_, _ = w.Write(buf.Bytes())
}

// buffers are the scratch buffers that pages and drawings are written
// into before they are sent or copied: a result page is about 200 KB and
// its plots 10–60 KB each, which a new buffer would reach by doubling.
var buffers = sync.Pool{New: func() any {
	b := new(bytes.Buffer)
	b.Grow(64 << 10)
	return b
}}

// maxPooledBytes is the largest buffer put back into buffers: a rare huge
// page is left to the collector rather than held.
const maxPooledBytes = 4 << 20

// keptBuffers holds a few grown buffers across garbage collections, which
// empty a sync.Pool: a page view allocates enough to start a collection
// every page or two, so that buffers from the pool alone were mostly new
// and grew again (a sixth of a page view's allocation).
var keptBuffers = make(chan *bytes.Buffer, 16)

// getBuffer returns an empty buffer, a kept one if there is one.
func getBuffer() *bytes.Buffer {
	select {
	case b := <-keptBuffers:
		return b
	default:
		return buffers.Get().(*bytes.Buffer)
	}
}

// putBuffer returns b to keptBuffers or buffers, emptied; nothing that b's
// bytes were shared with may be used after.
func putBuffer(b *bytes.Buffer) {
	if b.Cap() > maxPooledBytes {
		return
	}
	b.Reset()
	select {
	case keptBuffers <- b:
	default:
		buffers.Put(b)
	}
}

// initialValues are the values of the blank form.
func initialValues() formValues {
	vals := formValues{}
	for _, f := range allFields {
		if f.Initial != "" {
			vals[f.Name] = f.Initial
		}
	}
	return vals
}

// placeError turns a spec error into messages by control name; a message
// that concerns no control is under the key "".
func placeError(vals formValues, err error) map[string]string {
	fe, ok := synth.IsFieldError(err)
	if !ok {
		return map[string]string{"": "the spec cannot be read"}
	}
	if f, ok := fieldByJSON(fe.Field); ok {
		return map[string]string{f.Name: practitionerReason(fe.Reason)}
	}
	if fe.Field == "delay_equalizer" {
		// The equaliser's one control carries what is said of it whole.
		return map[string]string{"delay_equalizer_max_spread_pct": practitionerReason(fe.Reason)}
	}
	if fe.Field == "converter" {
		// Synth takes the converter whole: the message goes beside the
		// first of its controls left empty.
		return map[string]string{missingConverterField(vals): "the converter needs its sample rate, resolution and full scale together; give all three, or leave all three empty"}
	}
	if f, ok := lookupField(fe.Field); ok {
		return map[string]string{f.Name: practitionerReason(fe.Reason)}
	}
	if strings.HasPrefix(fe.Reason, "unknown parameter") {
		return map[string]string{"": fe.Reason}
	}
	return map[string]string{"": practitionerReason(fe.Field + ": " + fe.Reason)}
}

// missingConverterField is the first converter control of vals that is
// empty (the first control when none is).
func missingConverterField(vals formValues) string {
	for _, name := range converterFields {
		if strings.TrimSpace(vals[name]) == "" {
			return name
		}
	}
	return converterFields[0]
}

// helperNote explains the converter helper on the form.
const helperNote = "For an anti-alias lowpass in front of a converter: the passband edge becomes the signal bandwidth fb, the stopband edge " +
	"fs − fb (the lowest frequency that folds back into the signal band) and the attenuation " +
	"6.02·N + 1.76 dB (the ideal N-bit quantisation SNR, common practice). Both stay editable. " +
	"An empty sample rate or resolution is taken from the converter fields below."

// helperFallback names the converter field whose value the helper uses
// when its own is empty.
var helperFallback = map[string]string{paramRate: "converter_sample_rate_hz", paramBits: "converter_bits"}

// applyHelper fills the stopband edge and attenuation (and an empty
// passband edge) from the converter fields of vals. It returns messages by
// control name for what is missing or wrong, and a note of what it filled.
func applyHelper(vals formValues) (map[string]string, string) {
	msgs := map[string]string{}
	num := func(name string) float64 {
		f, _ := lookupField(name)
		text := strings.TrimSpace(vals[name])
		if text == "" {
			if conv := helperFallback[name]; conv != "" && strings.TrimSpace(vals[conv]) != "" {
				// The converter's own field stands in; an error in it is
				// shown beside the helper's, which is where it was used.
				f, _ = lookupField(conv)
				text = strings.TrimSpace(vals[conv])
			}
		}
		if text == "" {
			msgs[name] = "is needed to fill the stopband from a converter"
			return math.NaN()
		}
		n, err := number(f, text)
		if err != nil {
			fe, _ := synth.IsFieldError(err)
			msgs[name] = fe.Reason
			return math.NaN()
		}
		x, _ := n.Float64()
		if x <= 0 {
			msgs[name] = fmt.Sprintf("must be above 0 (got %s)", plain(x))
			return math.NaN()
		}
		return x
	}
	fs, bits, fb := num(paramRate), num(paramBits), num(paramBand)
	if !math.IsNaN(bits) && (bits < 1 || bits > 32 || bits != math.Trunc(bits)) {
		msgs[paramBits] = fmt.Sprintf("must be a whole number of bits from 1 to 32 (got %s)", plain(bits))
	}
	if !math.IsNaN(fs) && !math.IsNaN(fb) && fb >= fs/2 {
		msgs[paramBand] = fmt.Sprintf("must be below half the sample rate (%s) for anything to be filtered before it folds back", si(fs/2, "Hz", 6))
	}
	if resp := strings.TrimSpace(vals["response"]); resp != "" && !strings.EqualFold(resp, "lowpass") {
		msgs["response"] = "the converter helper fills a lowpass (anti-alias) requirement; choose lowpass first"
	}
	if len(msgs) > 0 {
		return msgs, ""
	}
	// 6.02·N + 1.76 dB, the SNR of an ideal N-bit quantiser for a full-scale
	// sine (common practice), rounded to 0.01 dB as the form shows it.
	atten := math.Round((6.02*bits+1.76)*100) / 100
	// The signal band is the passband: a passband left at another edge
	// (the form's initial 1000 Hz, say) would design a filter for a band
	// the converter is not asked to carry.
	vals["passband_hz"] = plain(fb)
	vals["stopband_hz"] = plain(fs - fb)
	vals["stopband_atten_db"] = plain(atten)
	// The converter fields take the helper's rate and resolution, so that
	// the design carries the converter (alias band, LSB, noise) without
	// typing them twice.
	vals["converter_sample_rate_hz"] = plain(fs)
	vals["converter_bits"] = plain(bits)
	note := fmt.Sprintf("Filled: passband edge %s Hz, stopband edge %s Hz, attenuation %s dB, and the converter's sample rate and resolution.", plain(fb), plain(fs-fb), plain(atten))
	if strings.TrimSpace(vals["converter_full_scale_vpp"]) == "" {
		note += " Give the converter's full scale too (its three fields go together)."
	}
	return nil, note + " Edit them if you like, then design."
}

// buildForm is the form view of vals, with msgs beside their controls.
func buildForm(vals formValues, msgs map[string]string) components.Form {
	form := components.Form{Error: msgs[""], HelperNote: helperNote, SlowTrials: slowTrials}
	var cur *components.Group
	for _, f := range specFields {
		if cur == nil || cur.Legend != f.Group {
			form.Groups = append(form.Groups, components.Group{Legend: f.Group})
			cur = &form.Groups[len(form.Groups)-1]
		}
		cur.Controls = append(cur.Controls, control(f, vals, msgs))
	}
	form.Helper.Legend = groupHelper
	for _, f := range helperFields {
		form.Helper.Controls = append(form.Helper.Controls, control(f, vals, msgs))
	}
	return form
}

func control(f field, vals formValues, msgs map[string]string) components.Control {
	c := components.Control{
		Name: f.Name, ID: "f-" + f.Name,
		Label: f.Label, Hint: f.Hint, Placeholder: f.Placeholder,
		Value: vals[f.Name], Error: msgs[f.Name],
	}
	switch f.Kind {
	case kindChoice:
		c.Kind = components.ControlSelect
		sel := f.Default
		for _, ch := range f.Choices {
			if strings.EqualFold(ch, strings.TrimSpace(c.Value)) {
				sel = ch
			}
		}
		for _, ch := range f.Choices {
			label := ch
			if n, ok := approxNames[ch]; ok {
				label = n
			}
			c.Options = append(c.Options, components.Option{Value: ch, Label: label, Selected: ch == sel})
		}
	case kindBool:
		c.Kind = components.ControlCheckbox
		switch strings.ToLower(strings.TrimSpace(c.Value)) {
		case "1", "true", "on", "yes":
			c.Checked = true
		}
	case kindBand:
		c.Kind = components.ControlText
		c.InputMode = "text" // commas separate band edges
	default:
		c.Kind = components.ControlText
		c.InputMode = "decimal"
	}
	return c
}

// downloadKinds describes each export kind on the page: label, and what
// the kind needs (a circuit, or plots).
var downloadKinds = map[string]struct {
	label, detail  string
	circuit, plots bool
}{
	"spice":         {"SPICE deck", "runs in ngspice batch mode", true, false},
	"bom":           {"Bill of materials", "CSV", true, false},
	"json":          {"Design", "JSON", false, false},
	"bode-svg":      {"Magnitude and phase", "SVG", false, true},
	"passband-svg":  {"Passband", "SVG", false, true},
	"delay-svg":     {"Group delay", "SVG", false, true},
	"step-svg":      {"Step response", "SVG", false, true},
	"noise-svg":     {"Output noise", "SVG", true, true},
	"schematic-svg": {"Schematic, every stage", "SVG", true, false},
	"report":        {"Design report", "HTML, self-contained, prints to PDF", false, false},
	"parts":         {"Part list", "CSV, grouped by value, with the op-amp's needs", true, false},
}

// noiseKind is the export kind of the noise plot.
const noiseKind = "noise-svg"

// downloadLink is the address of the download of kind of d, whose spec
// query holds.
func downloadLink(d *synth.Design, kind, query string) components.Link {
	k := downloadKinds[kind]
	return components.Link{
		Label:    k.label,
		Detail:   k.detail,
		Href:     "/download/" + url.PathEscape(kind) + "?" + query,
		Download: export.DesignFileName(d, kind),
		Kind:     kind,
	}
}

// hasEmptyParam reports whether a query has a parameter with an empty
// value.
func hasEmptyParam(q url.Values) bool {
	for _, vs := range q {
		for _, v := range vs {
			if v == "" {
				return true
			}
		}
	}
	return false
}
