package web

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"regexp"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"

	"github.com/a-h/templ"
	"github.com/go-chi/chi/v5/middleware"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/web/components"
	"github.com/polewright/polewright/web/export"
)

// buildResult computes the result view of design d, whose spec the form
// values vals hold. Plots and schematics that fail to draw are left out
// with a note (and logged); only a failure of the view itself is an error.
// The drawings go into pooled buffers held by frame until the page is
// written (the caller releases it after); a nil frame copies each drawing
// into a string of its own.
func (h *handler) buildResult(ctx context.Context, vals formValues, d *synth.Design, frame *svgFrame) (components.Result, error) {
	query := canonicalQuery(vals)
	spec := d.Spec
	res := components.Result{
		Title:     fmt.Sprintf("%s %s, order %d", approxNames[spec.Approximation], spec.Response, d.Order),
		Permalink: "/design?" + query,
	}
	specJSON, err := json.MarshalIndent(spec, "", "  ")
	if err != nil {
		return res, err
	}
	res.SpecJSON = string(specJSON)

	ch, chErr := d.Chain()
	hasChain := chErr == nil
	switch {
	case errors.Is(chErr, synth.ErrNoCircuit):
		res.Notes = append(res.Notes, "This build does not map the sections onto circuits yet: schematics, part values, the SPICE deck and the bill of materials are left out.")
	case chErr != nil:
		h.logWarn(ctx, "no circuit for the design", chErr)
		res.Notes = append(res.Notes, "The circuit of this design could not be built, so schematics, parts, the SPICE deck and the bill of materials are left out.")
	}

	if d.MarginSearch != nil {
		res.Notes = append(res.Notes, d.MarginSearch.Text)
	}
	headline(&res, d)
	res.Summary = summary(d, ch, hasChain)

	views, err := sectionViews(d)
	if err != nil {
		return res, err
	}
	res.Columns, res.Stages = stageTable(d, ch, hasChain, views)
	tol := newTolerances(d)
	res.Bench = benchView(d)
	res.Board = boardView(d)
	res.Driver = driverView(d)
	res.TableNote = "Gain is the stage's own gain at its reference frequency (DC for lowpass kinds, high frequency for highpass, f0 for bandpass). " +
		"Peak at output is the highest level over frequency at the stage's output, relative to the filter's passband gain: at or below 0 dB, no stage clips before the output does."
	if hasChain {
		res.TableNote += " Built values use the exported part values and the spec's op-amp; the GBW needed keeps the op-amp's own effect on f0 and Q within 1 % " +
			"(beside it the rule of thumb 100·Q·f0, common practice); the slew rate needed is 2π·f·Vpeak of a full-scale sine at the passband edge at the stage's output."
	}

	// Drawings: the plots and schematics are independent, so they are
	// drawn concurrently.
	var wg sync.WaitGroup
	var plots []components.Plot
	wanted := 0 // the plots Deps.Plots draws
	if h.deps.Plots != nil {
		plots = make([]components.Plot, len(plotKinds))
		for i, pk := range plotKinds {
			if !pk.drawnBy(h.deps.Plots) {
				continue
			}
			wanted++
			wg.Go(func() {
				svg, err := frame.drawSVG(func(w io.Writer) error { return pk.draw(h.deps.Plots, w, d) })
				if err != nil {
					h.logWarn(ctx, "plot failed", err, slog.String("plot", pk.kind))
					return
				}
				plots[i] = components.Plot{
					Title: pk.title, Caption: pk.caption, SVG: svg, TestID: "plot-" + pk.kind,
					Download: downloadLink(d, pk.kind, query),
				}
				plots[i].Download.Label = "Download SVG"
			})
		}
	}
	var noisePlot *components.Plot
	if np, ok := h.deps.Plots.(NoisePlots); ok && d.Noise != nil {
		wg.Go(func() {
			svg, err := frame.drawSVG(func(w io.Writer) error { return np.Noise(w, d) })
			if err != nil {
				h.logWarn(ctx, "plot failed", err, slog.String("plot", noiseKind))
				return
			}
			noisePlot = &components.Plot{
				Title:   "Output noise density",
				Caption: "Output noise density of the circuit as built; dashed: the converter's quantisation noise LSB/√12 spread evenly over 0 to fs/2, when a converter is given.",
				SVG:     svg, TestID: "plot-" + noiseKind, Download: downloadLink(d, noiseKind, query),
			}
			noisePlot.Download.Label = "Download SVG"
		})
	}
	if hasChain {
		res.Cards = make([]components.StageCard, len(ch.Stages))
		res.PartColumns = partColumns
		for k := range ch.Stages {
			res.Cards[k] = stageCard(d, ch, k)
			if k < len(d.Sections) {
				fillPartBench(&res.Cards[k], d.Sections[k], tol)
				res.Cards[k].Reason = views[k].TopologyReason
				res.Cards[k].Warnings = views[k].Warnings
				res.Cards[k].Details = stageDetails(d.Sections[k], tol)
			}
			if k < len(res.Stages) {
				res.Stages[k].Href = "#" + res.Cards[k].ID
			}
			if h.deps.Schematics == nil {
				continue
			}
			wg.Go(func() {
				svg, head, err := frame.draw(func(w io.Writer) error {
					if rs, ok := h.deps.Schematics.(ReferenceSchematics); ok && d.Spec.Supply != nil {
						return rs.StageOnReference(w, ch, k+1, "ref")
					}
					return h.deps.Schematics.Stage(w, ch, k+1)
				})
				if err != nil {
					h.logWarn(ctx, "schematic failed", err, slog.Int("stage", k+1))
					return
				}
				res.Cards[k].SVG = svg
				res.Cards[k].SchematicStyle = templ.SafeCSS(schematicStyle(head))
				res.Cards[k].Download = stageDownload(d, k+1, query)
			})
		}
	}
	wg.Wait()
	if res.Bench != nil {
		res.Bench.NoisePlot = noisePlot
	}
	for _, p := range plots {
		switch {
		case p.SVG == nil:
		case benchPlots[p.Download.Kind] && res.Bench != nil:
			res.Bench.Plots = append(res.Bench.Plots, p)
		default:
			res.Plots = append(res.Plots, p)
		}
	}
	drawn := 0
	for _, p := range plots {
		if p.SVG != nil {
			drawn++
		}
	}
	if h.deps.Plots != nil && drawn < wanted {
		res.Notes = append(res.Notes, "Some plots could not be drawn and are left out.")
	}
	if h.deps.Plots == nil {
		res.Notes = append(res.Notes, "This build draws no plots.")
	}

	for _, kind := range export.Kinds {
		k := downloadKinds[kind]
		if (k.circuit && !hasChain) || (k.plots && h.deps.Plots == nil) {
			continue
		}
		if _, ok := h.deps.Plots.(NoisePlots); kind == noiseKind && (!ok || d.Noise == nil) {
			continue
		}
		res.Downloads = append(res.Downloads, downloadLink(d, kind, query))
	}
	return res, nil
}

func (h *handler) logWarn(ctx context.Context, msg string, err error, attrs ...slog.Attr) {
	attrs = append(attrs, slog.String("error", err.Error()), slog.String("request_id", middleware.GetReqID(ctx)))
	h.log.LogAttrs(ctx, slog.LevelWarn, msg, attrs...)
}

// plotKind is a plot of the result page with the export kind of its
// download.
type plotKind struct {
	kind, title, caption string
	draw                 func(p Plots, w io.Writer, d *synth.Design) error
	// optional, when set, reports whether p draws the plot (an optional
	// interface of [Plots]); nil: every Plots does.
	optional func(p Plots) bool
}

// drawnBy reports whether p draws the plot.
func (pk plotKind) drawnBy(p Plots) bool { return pk.optional == nil || pk.optional(p) }

// plotKinds are the plots of the result page, in order.
var plotKinds = []plotKind{
	{kind: "bode-svg", title: "Magnitude and phase", caption: "Magnitude against the mask (shaded: forbidden), ideal and as built, on one dB scale; phase below. The passband's ripple is on the next plot.",
		draw: func(p Plots, w io.Writer, d *synth.Design) error { return p.Bode(w, d) }},
	{kind: "passband-svg", title: "Passband", caption: export.PassbandCaption,
		draw: func(p Plots, w io.Writer, d *synth.Design) error { return p.(PassbandPlots).Passband(w, d) },
		optional: func(p Plots) bool {
			_, ok := p.(PassbandPlots)
			return ok
		}},
	{kind: "delay-svg", title: "Group delay", caption: "Group delay, ideal and as built.",
		draw: func(p Plots, w io.Writer, d *synth.Design) error { return p.GroupDelay(w, d) }},
	{kind: "step-svg", title: "Step response", caption: "Response to a unit step at the input, ideal and as built.",
		draw: func(p Plots, w io.Writer, d *synth.Design) error { return p.Step(w, d) }},
}

// FigureWidthPx is the width, in CSS pixels, at which the result page
// draws its plots on a wide screen (a 1440 px window, and wider): the
// style sheet's --figure-width, the content column's width less the
// panel's padding. On a narrower screen a plot shrinks with the column
// (about 350 px on a 390 px phone). Plots size their text for it.
const FigureWidthPx = 1100

// benchPlots are the kinds of plotKinds that the page shows among the
// bench figures rather than with the response (when it has a bench panel).
var benchPlots = map[string]bool{"step-svg": true}

// svgFrame holds the pooled buffers of one page's drawings until the page
// is written: copying each drawing into a string (so that its buffer could
// go back to the pool at once) was a tenth of a page view's allocation. A
// nil frame copies. Its methods are safe for concurrent use.
type svgFrame struct {
	mu   sync.Mutex
	bufs []*bytes.Buffer
}

// drawSVG runs draw and returns the SVG as a component to inline, its XML
// prolog and doctype removed (see [svgFrame.draw]).
func (f *svgFrame) drawSVG(draw func(io.Writer) error) (templ.Component, error) {
	c, _, err := f.draw(draw)
	return c, err
}

// draw runs draw as [drawSVGText] does and returns the inline SVG as a
// component that writes it from f's buffer, and the SVG's start tag as a
// string (for reading its size).
func (f *svgFrame) draw(draw func(io.Writer) error) (templ.Component, string, error) {
	if f == nil {
		text, err := drawSVGText(draw)
		if err != nil {
			return nil, "", err
		}
		return templ.Raw(text), startTag(text), nil
	}
	buf := getBuffer()
	b, err := drawInto(buf, draw)
	if err != nil {
		putBuffer(buf)
		return nil, "", err
	}
	f.mu.Lock()
	f.bufs = append(f.bufs, buf)
	f.mu.Unlock()
	return templ.ComponentFunc(func(_ context.Context, w io.Writer) error {
		_, err := w.Write(b)
		return err
	}), startTag(string(b[:bytes.IndexByte(b, '>')+1])), nil
}

// startTag returns svg up to the end of its first tag.
func startTag(svg string) string { return svg[:strings.IndexByte(svg, '>')+1] }

// release returns f's buffers to the pool; the components f made must
// not be written after.
func (f *svgFrame) release() {
	if f == nil {
		return
	}
	f.mu.Lock()
	defer f.mu.Unlock()
	for _, b := range f.bufs {
		putBuffer(b)
	}
	f.bufs = nil
}

// drawInto runs draw into buf and returns the inline SVG in buf's memory
// (see drawSVGText).
func drawInto(buf *bytes.Buffer, draw func(io.Writer) error) (b []byte, err error) {
	defer func() {
		if rec := recover(); rec != nil {
			b, err = nil, fmt.Errorf("web: drawing panicked: %v\n%s", rec, debug.Stack())
		}
	}()
	if err := draw(buf); err != nil {
		return nil, err
	}
	b = inlineSVG(buf.Bytes())
	if !bytes.HasPrefix(b, []byte("<svg")) {
		return nil, errors.New("web: the drawing is not an SVG document")
	}
	return b, nil
}

// drawSVGText runs draw into a buffer and returns the SVG to inline, its
// XML prolog and doctype removed. A panic in draw (which runs on its own
// goroutine, out of reach of the recovery middleware) is returned as an
// error carrying its stack, for the log.
func drawSVGText(draw func(io.Writer) error) (text string, err error) {
	buf := getBuffer()
	defer putBuffer(buf)
	b, err := drawInto(buf, draw)
	if err != nil {
		return "", err
	}
	return string(b), nil // a copy: buf goes back to the pool
}

// inlineSVG strips what precedes the <svg element of an SVG document: the
// XML prolog, a doctype, comments and white space.
func inlineSVG(b []byte) []byte {
	if i := bytes.Index(b, []byte("<svg")); i >= 0 {
		return bytes.TrimSpace(b[i:])
	}
	return bytes.TrimSpace(b)
}

// headline fills the result's verdicts from synth's checks: the board as
// built (the ideal filter's when there is no circuit) as the headline, the
// ideal verdict and the yield beside it, and every check in order. The
// page words nothing itself.
func headline(res *components.Result, d *synth.Design) {
	byID := map[string]synth.Check{}
	for _, c := range d.Checks {
		byID[c.ID] = c
		res.Checks = append(res.Checks, components.Check{Good: c.OK, Severity: string(c.Severity), Text: c.Text, TestID: "check-" + c.ID})
	}
	ideal := byID[synth.CheckIdealMask]
	if built, ok := byID[synth.CheckBuiltMask]; ok {
		res.Meets, res.Verdict, res.Ideal = built.OK, built.Text, ideal.Text
	} else {
		res.Meets, res.Verdict = ideal.OK, ideal.Text
	}
	if y, ok := byID[synth.CheckYield]; ok {
		res.Yield = y.Text
	}
}

// summary are the headline figures of d.
func summary(d *synth.Design, ch circuit.Chain, hasChain bool) []components.Figure {
	order := components.Figure{Label: "Order", Value: strconv.Itoa(d.Order), TestID: "fig-order",
		Hint: "the filter's order: the number of poles of its transfer function (the all-pass delay equaliser's not counted)"}
	switch mo := d.Mask.MinOrder; {
	case d.Spec.Order == 0:
		order.Detail = "the lowest that meets the mask"
	case mo != nil:
		order.Detail = fmt.Sprintf("as given; the mask needs %d", *mo)
	default:
		order.Detail = "as given"
	}
	figs := []components.Figure{order}
	figs = append(figs, components.Figure{Label: "Passband margin", Value: db(d.Mask.PassbandMarginDB, true),
		Detail: "Amax less the worst passband loss", TestID: "fig-passband-margin",
		Hint: "of the ideal filter (dB): how much more loss the passband could take before it breaks Amax; positive: met"})
	if m := d.Mask.StopbandMarginDB; m != nil {
		figs = append(figs, components.Figure{Label: "Stopband margin", Value: db(*m, true),
			Detail: "least stopband loss less Amin", TestID: "fig-stopband-margin",
			Hint: "of the ideal filter (dB): how far the least stopband loss exceeds Amin; positive: met"})
	} else {
		figs = append(figs, components.Figure{Label: "Stopband margin", Value: "—", Detail: "no stopband given", TestID: "fig-stopband-margin"})
	}
	figs = append(figs, components.Figure{Label: "Stages", Value: strconv.Itoa(len(d.Sections)), TestID: "fig-stages",
		Hint: "first- and second-order sections in cascade, one op-amp circuit each"})
	opamps, parts := "—", "—"
	detail := "with the circuit mapping"
	if hasChain {
		nu, np := 0, 0
		for _, st := range ch.Stages {
			nu += len(st.OpAmps)
			np += len(st.Parts)
		}
		opamps, parts, detail = strconv.Itoa(nu), strconv.Itoa(np), ""
	}
	figs = append(figs,
		components.Figure{Label: "Op-amps", Value: opamps, Detail: detail, TestID: "fig-opamps", Hint: "op-amps on the board, every stage's together"},
		components.Figure{Label: "Passive parts", Value: parts, Detail: detail, TestID: "fig-parts", Hint: "resistors and capacitors on the board"},
	)
	return figs
}

// sectionView is the part of a section's JSON that the stage table reads
// beyond the basic fields: what comes with the circuit mapping and the
// verification work. It is read from the JSON, not from the Go type, so
// that a field shows on the page as soon as synth writes it, and an absent
// one is simply left out.
type sectionView struct {
	TopologyReason string `json:"topology_reason"`
	Realized       *struct {
		F0Hz       float64  `json:"f0_hz"`
		Q          *float64 `json:"q"`
		F0ErrorPct *float64 `json:"f0_error_pct"`
		QErrorPct  *float64 `json:"q_error_pct"`
	} `json:"realized"`
	OpAmpNeeds *struct {
		GBWHz            *float64 `json:"gbw_hz"`
		RuleOfThumbGBWHz float64  `json:"rule_of_thumb_gbw_hz"`
		SlewVPerS        *float64 `json:"slew_v_per_s"`
	} `json:"opamp_needs"`
	Warnings []string `json:"warnings"`
}

// sectionViews reads the sectionView of each of d's sections.
func sectionViews(d *synth.Design) ([]sectionView, error) {
	out := make([]sectionView, len(d.Sections))
	for i, s := range d.Sections {
		b, err := json.Marshal(s)
		if err != nil {
			return nil, err
		}
		if err := json.Unmarshal(b, &out[i]); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// Columns of the stage table, with their hints.
var (
	colStage   = components.Column{Label: "Stage", Hint: "the stage's place in the chain, input first; it links to the stage's card below"}
	colKind    = components.Column{Label: "Kind", Hint: "the section the stage builds: lowpass, highpass, bandpass, notch (lowpass-notch, highpass-notch), all-pass"}
	colF0      = components.Column{Label: "f0", Hint: "the section's natural frequency (Hz): where its poles sit, |p|/2π"}
	colQ       = components.Column{Label: "Q", Hint: "the section's quality factor (no unit): |p|/(2·|Re p|); 0.5 to 0.7 is gentle, above 5 needs care"}
	colZero    = components.Column{Label: "Zero at", Hint: "the frequency of the section's transmission zeros (Hz), where it blocks the signal; — for none"}
	colCircuit = components.Column{Label: "Circuit", Hint: "the op-amp circuit that builds the section"}
	colGain    = components.Column{Label: "Gain", Hint: "the stage's own gain at its reference frequency (dB): DC for lowpass kinds, high frequency for highpass, f0 for bandpass"}
	colPeak    = components.Column{Label: "Peak at output", Hint: "the highest level over frequency at the stage's output, relative to the filter's passband gain (dB); above 0 dB this stage clips before the output does"}
	colF0Built = components.Column{Label: "f0 built (error)", Hint: "the f0 of the stage as built, with the exported part values and the spec's op-amp (Hz), and its error against f0 (%)"}
	colQBuilt  = components.Column{Label: "Q built (error)", Hint: "the Q of the stage as built, and its error against Q (%)"}
	colGBW     = components.Column{Label: "GBW needed (rule of thumb)", Hint: "the least op-amp gain-bandwidth (Hz) that keeps the op-amp's own effect on f0, Q and gain within 1 %; in brackets 100·Q·f0, a common-practice rule of thumb"}
	colSlew    = components.Column{Label: "Slew needed", Hint: "the slew rate (V/µs) a full-scale sine at the passband edge needs at this stage's output: 2π·f·Vpeak"}
)

// partColumns are the headings of a stage card's part table: the first
// five always, the rest when the design has tolerances and
// sensitivities.
var partColumns = []components.Column{
	{Label: "Ref", Hint: "the part's designator, as on the schematic, in the SPICE deck and on the bill of materials (R: resistor, C: capacitor, U: op-amp; the hundreds are the stage)"},
	{Label: "Value", Hint: "the value to fit (Ω, F), from the series in the next column"},
	{Label: "Exact", Hint: "the unrounded value the design asks for, given the parts already chosen (capacitors are picked from their series first, so theirs equal Value)"},
	{Label: "Off by", Hint: "(Value − Exact)/Exact in %: how far the fitted value is from the unrounded one; resistors may be picked together to keep f0 and Q closest, so one can sit a step from its nearest series value"},
	{Label: "Series", Hint: "the IEC 60063 series the value comes from; exact: unrounded"},
	{Label: "Tolerance", Hint: "the tolerance the Monte Carlo draws this part within (± %)"},
	{Label: "S f0", Hint: "the sensitivity of the stage's f0 to this part: ∂ln f0/∂ln x, the % change of f0 for a 1 % change of the part"},
	{Label: "S Q", Hint: "the sensitivity of the stage's Q to this part: ∂ln Q/∂ln x"},
	{Label: "Needs", Hint: "the tolerance (± %) this part needs for f0 within 1 % and Q within 2 % on 99 % of boards"},
	{Label: "Fails at", Hint: "how far this part alone may move down / up (%) before the board fails the mask, every other part nominal"},
}

// stageTable is the header and rows of the stage table of d. The as-built
// and op-amp columns appear only when the design has them.
func stageTable(d *synth.Design, ch circuit.Chain, hasChain bool, views []sectionView) ([]components.Column, []components.StageRow) {
	built, needs, zeros, slews := false, false, false, false
	for i, v := range views {
		built = built || v.Realized != nil
		needs = needs || v.OpAmpNeeds != nil
		slews = slews || (v.OpAmpNeeds != nil && v.OpAmpNeeds.SlewVPerS != nil && *v.OpAmpNeeds.SlewVPerS > 0)
		zeros = zeros || d.Sections[i].ZeroHz != nil
	}
	cols := []components.Column{colStage, colKind, colF0, colQ}
	if zeros {
		cols = append(cols, colZero)
	}
	cols = append(cols, colCircuit, colGain, colPeak)
	if built {
		cols = append(cols, colF0Built, colQBuilt)
	}
	if needs {
		cols = append(cols, colGBW)
	}
	if slews {
		cols = append(cols, colSlew)
	}
	rows := make([]components.StageRow, len(d.Sections))
	for i, s := range d.Sections {
		v := views[i]
		q, zero := "—", "—"
		if s.Q != nil {
			q = strconv.FormatFloat(*s.Q, 'f', 4, 64)
		}
		if s.ZeroHz != nil {
			zero = si(*s.ZeroHz, "Hz", 5)
		}
		top := s.Topology
		if top == "" && hasChain && i < len(ch.Stages) {
			top = ch.Stages[i].Topology
		}
		if top == "" {
			top = "—"
		}
		cells := []string{strconv.Itoa(i + 1), string(s.Kind), si(s.F0Hz, "Hz", 5), q}
		if zeros {
			cells = append(cells, zero)
		}
		cells = append(cells, top, db(s.GainDB, false), db(s.PeakGainDB, true))
		if built {
			f0b, f0e, qb, qe := "—", "", "—", ""
			if r := v.Realized; r != nil {
				f0b = si(r.F0Hz, "Hz", 5)
				switch {
				case r.F0ErrorPct != nil:
					f0e = pct(*r.F0ErrorPct / 100)
				case s.F0Hz > 0:
					f0e = pct(r.F0Hz/s.F0Hz - 1)
				}
				if r.Q != nil {
					qb = strconv.FormatFloat(*r.Q, 'f', 4, 64)
					switch {
					case r.QErrorPct != nil:
						qe = pct(*r.QErrorPct / 100)
					case s.Q != nil && *s.Q > 0:
						qe = pct(*r.Q / *s.Q - 1)
					}
				}
			}
			if f0e != "" {
				f0b += " (" + f0e + ")"
			}
			if qe != "" {
				qb += " (" + qe + ")"
			}
			cells = append(cells, f0b, qb)
		}
		if needs {
			g := "—"
			if n := v.OpAmpNeeds; n != nil {
				switch {
				case n.GBWHz != nil:
					g = si(*n.GBWHz, "Hz", 3)
				default:
					g = "over 1 THz (the op-amp's DC gain alone moves it by more than 1 %)"
				}
				if n.RuleOfThumbGBWHz > 0 {
					g += " (" + si(n.RuleOfThumbGBWHz, "Hz", 3) + ")"
				}
			}
			cells = append(cells, g)
		}
		if slews {
			sl := "—"
			if n := v.OpAmpNeeds; n != nil && n.SlewVPerS != nil && *n.SlewVPerS > 0 {
				sl = slew(*n.SlewVPerS)
			}
			cells = append(cells, sl)
		}
		rows[i] = components.StageRow{Cells: cells}
	}
	return cols, rows
}

// stageCard lists the parts of stage k (0-based) of d's chain ch with
// their chain-wide designators; the schematic, the reason and the bench
// figures are added by the caller.
func stageCard(d *synth.Design, ch circuit.Chain, k int) components.StageCard {
	st := ch.Stages[k]
	id := fmt.Sprintf("stage-%d", k+1)
	title := fmt.Sprintf("Stage %d · %s", k+1, st.Topology)
	if k < len(d.Sections) {
		s := d.Sections[k]
		title += fmt.Sprintf(" %s, f0 %s", s.Kind, si(s.F0Hz, "Hz", 5))
		if s.Q != nil {
			title += ", Q " + strconv.FormatFloat(*s.Q, 'f', 4, 64)
		}
	}
	card := components.StageCard{ID: id, SchematicID: id + "-schematic", Title: title}
	for _, p := range st.Parts {
		unit := "Ω"
		if p.Kind == circuit.Capacitor {
			unit = "F"
		}
		row := components.PartRow{
			Ref: ch.Ref(k+1, p.Ref), Kind: string(p.Kind),
			Value: si(p.Value, unit, 4), Exact: si(p.Exact, unit, 6), Series: p.Series,
			Deviation: "—",
		}
		if p.Series == "" {
			row.Series = "exact"
		}
		if p.Exact != 0 {
			row.Deviation = pct(p.Value/p.Exact - 1)
		}
		card.Parts = append(card.Parts, row)
	}
	for _, u := range st.OpAmps {
		v := "ideal"
		if !ch.Model.Ideal {
			v = si(ch.Model.GBWHz, "Hz", 3) + " GBW"
		}
		card.Parts = append(card.Parts, components.PartRow{Ref: ch.Ref(k+1, u.Ref), Kind: "op-amp", Value: v, Exact: "—", Deviation: "—", Series: "—", FailsAt: "—"})
	}
	return card
}

// schematicScale is how much larger than its own size (about a pixel per
// SVG unit, 10-unit text) the page draws a stage's schematic when the card
// has the room: 15 px text. A narrower card shrinks it to fit; its
// enlarged view is twice the own size.
const schematicScale = 1.5

// svgSize matches the width and height attributes of an SVG's root
// element, in plain user units as package schematic writes them.
var svgSize = regexp.MustCompile(`^<svg[^>]*? width="([0-9.]+)" height="([0-9.]+)"`)

// schematicStyle is the style of a schematic's figure: its own width and
// height (in SVG units, unitless) as the custom properties --sw and --sh,
// and the scale --schematic-scale, from which the style sheet sizes it.
// Empty when the SVG states no size.
func schematicStyle(svg string) string {
	m := svgSize.FindStringSubmatch(svg)
	if m == nil {
		return ""
	}
	w, errW := strconv.ParseFloat(m[1], 64)
	h, errH := strconv.ParseFloat(m[2], 64)
	if errW != nil || errH != nil || !(w > 0 && h > 0) || w > 1e5 || h > 1e5 {
		return ""
	}
	return "--sw: " + m[1] + "; --sh: " + m[2] + "; --schematic-scale: " + strconv.FormatFloat(schematicScale, 'f', -1, 64)
}

// stageDownload is the link to stage k's (1-based) schematic alone.
func stageDownload(d *synth.Design, k int, query string) components.Link {
	return components.Link{
		Label:    fmt.Sprintf("Download stage %d's schematic (SVG)", k),
		Href:     fmt.Sprintf("/download/schematic-svg?%s=%d&%s", paramStage, k, query),
		Download: export.StageFileName(d, k),
		Kind:     "schematic-svg",
	}
}
