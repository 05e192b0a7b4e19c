package web

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"runtime/debug"
	"strconv"
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
func (h *handler) buildResult(ctx context.Context, vals formValues, d *synth.Design) (components.Result, error) {
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
	for i := range res.Stages {
		res.Stages[i].Details = stageDetails(d.Sections[i], tol)
	}
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
				svg, err := drawSVG(func(w io.Writer) error { return pk.draw(h.deps.Plots, w, d) })
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
			svg, err := drawSVG(func(w io.Writer) error { return np.Noise(w, d) })
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
		for k := range ch.Stages {
			res.Cards[k] = stageCard(ch, k)
			if k < len(d.Sections) {
				fillPartBench(&res.Cards[k], d.Sections[k], tol)
			}
			if h.deps.Schematics == nil {
				continue
			}
			wg.Go(func() {
				svg, err := drawSVG(func(w io.Writer) error {
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
			})
		}
	}
	wg.Wait()
	if res.Bench != nil {
		res.Bench.NoisePlot = noisePlot
	}
	for _, p := range plots {
		if p.SVG != nil {
			res.Plots = append(res.Plots, p)
		}
	}
	if h.deps.Plots != nil && len(res.Plots) < wanted {
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

// drawSVG runs draw into a buffer and returns the SVG as a component to
// inline, its XML prolog and doctype removed. A panic in draw (which runs
// on its own goroutine, out of reach of the recovery middleware) is
// returned as an error carrying its stack, for the log.
func drawSVG(draw func(io.Writer) error) (c templ.Component, err error) {
	defer func() {
		if rec := recover(); rec != nil {
			c, err = nil, fmt.Errorf("web: drawing panicked: %v\n%s", rec, debug.Stack())
		}
	}()
	buf := getBuffer()
	defer putBuffer(buf)
	if err := draw(buf); err != nil {
		return nil, err
	}
	b := inlineSVG(buf.Bytes())
	if !bytes.HasPrefix(b, []byte("<svg")) {
		return nil, errors.New("web: the drawing is not an SVG document")
	}
	return templ.Raw(string(b)), nil // a copy: buf goes back to the pool
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
	order := components.Figure{Label: "Order", Value: strconv.Itoa(d.Order), TestID: "fig-order"}
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
		Detail: "Amax less the worst passband loss", TestID: "fig-passband-margin"})
	if m := d.Mask.StopbandMarginDB; m != nil {
		figs = append(figs, components.Figure{Label: "Stopband margin", Value: db(*m, true),
			Detail: "least stopband loss less Amin", TestID: "fig-stopband-margin"})
	} else {
		figs = append(figs, components.Figure{Label: "Stopband margin", Value: "—", Detail: "no stopband given", TestID: "fig-stopband-margin"})
	}
	figs = append(figs, components.Figure{Label: "Stages", Value: strconv.Itoa(len(d.Sections)), TestID: "fig-stages"})
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
		components.Figure{Label: "Op-amps", Value: opamps, Detail: detail, TestID: "fig-opamps"},
		components.Figure{Label: "Passive parts", Value: parts, Detail: detail, TestID: "fig-parts"},
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

// stageTable is the header and rows of the stage table of d. The as-built
// and op-amp columns appear only when the design has them.
func stageTable(d *synth.Design, ch circuit.Chain, hasChain bool, views []sectionView) ([]string, []components.StageRow) {
	built, needs, zeros, slews := false, false, false, false
	for i, v := range views {
		built = built || v.Realized != nil
		needs = needs || v.OpAmpNeeds != nil
		slews = slews || (v.OpAmpNeeds != nil && v.OpAmpNeeds.SlewVPerS != nil && *v.OpAmpNeeds.SlewVPerS > 0)
		zeros = zeros || d.Sections[i].ZeroHz != nil
	}
	cols := []string{"#", "Kind", "f0", "Q"}
	if zeros {
		cols = append(cols, "Zero at")
	}
	cols = append(cols, "Circuit", "Gain", "Peak at output")
	if built {
		cols = append(cols, "f0 built (error)", "Q built (error)")
	}
	if needs {
		cols = append(cols, "GBW needed (rule of thumb)")
	}
	if slews {
		cols = append(cols, "Slew needed")
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
					g = "none up to 1 THz"
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
		reason := v.TopologyReason
		if reason == "" {
			reason = "—"
		}
		rows[i] = components.StageRow{Cells: cells, Reason: reason, Warnings: v.Warnings}
	}
	return cols, rows
}

// stageCard lists the parts of stage k (0-based) of ch with their
// chain-wide designators; the schematic is added by the caller.
func stageCard(ch circuit.Chain, k int) components.StageCard {
	st := ch.Stages[k]
	card := components.StageCard{Title: fmt.Sprintf("Stage %d · %s", k+1, st.Topology)}
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
		card.Parts = append(card.Parts, components.PartRow{Ref: ch.Ref(k+1, u.Ref), Kind: "op-amp", Value: v, Exact: "—", Deviation: "—", Series: "—"})
	}
	return card
}
