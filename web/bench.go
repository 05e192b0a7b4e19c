package web

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/web/components"
)

// Figures of the bench panel.
const (
	// topContributors is the number of noise contributors listed.
	topContributors = 8
	// topSensitive is the number of parts named per stage.
	topSensitive = 3
)

// benchView is the bench panel of d: Monte Carlo, noise against the
// converter, step figures. It is nil when the design carries none of them
// (a design without a circuit).
func benchView(d *synth.Design) *components.Bench {
	if d.MonteCarlo == nil && d.Noise == nil && d.Step == nil {
		return nil
	}
	s := d.Spec
	b := &components.Bench{}
	tol := newTolerances(d)

	// Yield.
	if mc := d.MonteCarlo; mc != nil {
		b.Figures = append(b.Figures, components.Figure{
			Label: "Yield", Value: share(mc.Yield), TestID: "fig-yield",
			Detail: fmt.Sprintf("of %d trials meet the mask (seed %d)", mc.Trials, mc.Seed),
		})
		b.MonteCarlo = monteCarloView(d, tol)
	} else {
		b.Figures = append(b.Figures, components.Figure{Label: "Yield", Value: "—", Detail: "no Monte Carlo asked", TestID: "fig-yield"})
		b.Hint = "No Monte Carlo was run: give a number of trials (1000 is a good start) under “Tolerances and Monte Carlo” for the yield, the spread of each stage and the response envelope."
	}

	// Noise.
	if n := d.Noise; n != nil {
		band := si(n.BandHz[0], "Hz", 3) + " to " + si(n.BandHz[1], "Hz", 3)
		if s.Converter != nil {
			band += " (half the output word rate)"
		}
		b.Figures = append(b.Figures, components.Figure{Label: "Output noise", Value: si(n.OutputRMSV, "V", 3) + " rms", Detail: band, TestID: "fig-noise"})
		if n.SampledRMSV != nil {
			detail := "what the converter's samples carry: everything sampling folds into the band"
			if n.SNRDB != nil && n.ENOBLossBits != nil {
				detail = fmt.Sprintf("folding included; SNR %.1f dB, %.2f bits lost", *n.SNRDB, *n.ENOBLossBits)
			}
			b.Figures = append(b.Figures, components.Figure{Label: "Sampled noise", Value: si(*n.SampledRMSV, "V", 3) + " rms", Detail: detail, TestID: "fig-sampled-noise"})
		}
		if n.LSBV != nil && n.QuantizationRMSV != nil && s.Converter != nil {
			q, c := *n.QuantizationRMSV, s.Converter
			b.Figures = append(b.Figures, components.Figure{Label: "Quantisation noise", Value: si(q, "V", 3) + " rms",
				Detail: fmt.Sprintf("LSB/√12; LSB %s (%d bits, %s Vpp)", si(*n.LSBV, "V", 3), c.Bits, strconv.FormatFloat(c.FullScaleVpp, 'g', 4, 64)), TestID: "fig-quant"})
		} else {
			b.Figures = append(b.Figures, components.Figure{Label: "Quantisation noise", Value: "—", Detail: "give a converter for LSB figures", TestID: "fig-quant"})
		}
		b.Contributors, b.ContributorsNote = contributorRows(n)
		b.ContributorColumns = contributorColumns
	}

	// Step.
	if st := d.Step; st != nil {
		pct := func(v float64) string { return strconv.FormatFloat(v, 'f', 2, 64) + " %" }
		over := components.Figure{Label: "Overshoot", Value: optional(st.OvershootPct, pct), Detail: "of the final value, as built", TestID: "fig-overshoot"}
		if st.OvershootPct == nil && st.UndershootPct != nil {
			// A highpass or bandpass: no final value to overshoot.
			over = components.Figure{Label: "Undershoot", Value: optional(st.UndershootPct, pct), Detail: "of the peak, the other sign, as built", TestID: "fig-overshoot"}
		}
		b.Figures = append(b.Figures, over,
			components.Figure{Label: "Rise time", Value: optional(st.RiseTimeS, func(v float64) string { return si(v, "s", 3) }),
				Detail: "10 % to 90 %", TestID: "fig-rise"},
		)
		settle := components.Figure{Label: "Settling time", Value: optional(st.SettlingS, func(v float64) string { return si(v, "s", 3) }), TestID: "fig-settling"}
		settle.Detail = "to " + settlingBand(d)
		if st.Unstable {
			settle.Detail += "; unstable as built"
		}
		if st.IdealSettlingS != nil {
			settle.Detail += "; ideal " + si(*st.IdealSettlingS, "s", 3)
		}
		if c := s.Converter; c != nil && st.SettlingS != nil {
			settle.Detail += fmt.Sprintf("; %.0f sample periods", math.Ceil(*st.SettlingS*c.SampleRateHz))
		}
		b.Figures = append(b.Figures, settle)
	}

	// Slew.
	need, worst := 0.0, 0
	for i, sec := range d.Sections {
		if sec.OpAmpNeeds != nil && sec.OpAmpNeeds.SlewVPerS > need {
			need, worst = sec.OpAmpNeeds.SlewVPerS, i+1
		}
	}
	if need > 0 {
		b.Figures = append(b.Figures, components.Figure{Label: "Slew rate needed", Value: slew(need),
			Detail: fmt.Sprintf("stage %d; the op-amp has %s", worst, slew(s.OpAmp.SlewVPerS)), TestID: "fig-slew"})
	}

	b.Notes = append(b.Notes, "Noise: the thermal noise (4kTR at 300 K) of every resistor and the white voltage and current noise of every op-amp, "+
		"through the circuit as built, integrated over the band shown; the quantisation noise of an ideal converter is LSB/√12 (textbook).")
	if d.Step != nil {
		crit := "±½ LSB is the usual criterion in front of a converter (common practice)"
		if s.Converter == nil {
			crit = "give a converter to settle to ±½ LSB, the usual criterion in front of one (common practice)"
		}
		b.Notes = append(b.Notes, "Settling: the last time the as-built response to a unit step is outside its final value "+settlingBand(d)+
			" (full scale: the passband gain; the final value is 0 for a highpass or bandpass); "+crit+".")
	}
	if d.MonteCarlo != nil {
		b.Notes = append(b.Notes, "Monte Carlo: each trial draws every resistor and capacitor within its tolerance and judges the board as built by the same acceptance rule "+
			"as the headline (extremes refined between grid points); the op-amps are as in the spec. The first-order σ is √(Σ S²·σ²) from the sensitivities, for comparison.")
	}
	return b
}

// settlingBand names the settling band of d's step figures.
func settlingBand(d *synth.Design) string {
	st := d.Step
	if c := d.Spec.Converter; c != nil {
		return fmt.Sprintf("±½ LSB (%d bits, ±%s of full scale)", c.Bits, pctOf(st.SettlingFrac))
	}
	return "±" + pctOf(st.SettlingFrac) + " of the peak"
}

// monteCarloColumns are the headings of the Monte Carlo's per-stage
// table, with their hints.
var monteCarloColumns = []components.Column{
	{Label: "Stage", Hint: "the stage, input first"},
	{Label: "f0 mean", Hint: "the mean of the stage's f0 over the trials (Hz)"},
	{Label: "σ f0", Hint: "the standard deviation of f0 over the trials, in % of its mean"},
	{Label: "σ f0, first order", Hint: "the same predicted from the sensitivities, √(Σ S²·σ²) (%), for comparison"},
	{Label: "Q mean", Hint: "the mean of the stage's Q over the trials (no unit; — for a first-order stage)"},
	{Label: "σ Q", Hint: "the standard deviation of Q over the trials, in % of its mean"},
	{Label: "σ Q, first order", Hint: "the same predicted from the sensitivities (%)"},
}

// contributorColumns are the headings of the noise contributors' table.
var contributorColumns = []components.Column{
	{Label: "Part", Hint: "the designator, as on the schematic and the bill of materials"},
	{Label: "Source", Hint: "the part's noise: a resistor's thermal noise, an op-amp's input voltage and current noise"},
	{Label: "Share of power", Hint: "this part's share of the output noise power over the band (%)"},
	{Label: "rms at output", Hint: "this part's own noise at the output, rms over the band (V)"},
}

// monteCarloView lays out the Monte Carlo of d.
func monteCarloView(d *synth.Design, tol tolerances) *components.MonteCarloView {
	mc := d.MonteCarlo
	v := &components.MonteCarloView{
		Summary: fmt.Sprintf("%d trials, seed %d; %s.", mc.Trials, mc.Seed, tol.describe()),
		Columns: monteCarloColumns,
	}
	for i, st := range mc.Stages {
		row := []string{strconv.Itoa(i + 1), si(st.F0MeanHz, "Hz", 5), pctValue(st.F0StdPct), "—", "—", "—", "—"}
		var sec *synth.Section
		if i < len(d.Sections) {
			sec = &d.Sections[i]
		}
		if sec != nil {
			if p, ok := tol.predicted(sec, func(x synth.Sensitivity) float64 { return x.F0 }); ok {
				row[3] = pctValue(p)
			}
		}
		if sec == nil || sec.Order == 2 {
			if st.QMean > 0 && finite(st.QMean) {
				row[4] = strconv.FormatFloat(st.QMean, 'f', 4, 64)
				row[5] = pctValue(st.QStdPct)
			}
			if sec != nil {
				if p, ok := tol.predicted(sec, func(x synth.Sensitivity) float64 { return x.Q }); ok {
					row[6] = pctValue(p)
				}
			}
		}
		v.Rows = append(v.Rows, row)
	}
	refDB := 20 * math.Log10(d.Gain)
	amax, amin := d.Spec.PassbandRippleDB, d.Spec.StopbandAttenDB
	for _, e := range edgeOrder(mc.EdgeLoss) {
		h := mc.EdgeLoss[e.key]
		limit, bad := amax-refDB, func(loss float64) bool { return loss > amax-refDB }
		if e.stop {
			limit, bad = amin-refDB, func(loss float64) bool { return loss < amin-refDB }
		}
		if hv, ok := histogram(h, limit, bad); ok {
			hv.Title = fmt.Sprintf("Loss at the %s, %s", e.label, si(h.FreqHz, "Hz", 4))
			side := "at most"
			if e.stop {
				side = "at least"
			}
			switch {
			case hv.HasLimit:
				hv.Caption = fmt.Sprintf("%d trials; the dashed red line is the mask's limit (loss %s %s); red bars lie beyond it.", mc.Trials, side, db(limit, false))
			case slices.ContainsFunc(hv.Bars, func(b components.Bar) bool { return b.Bad }):
				hv.Caption = fmt.Sprintf("%d trials; the mask's limit (loss %s %s) lies far off the chart; red bars lie beyond it.", mc.Trials, side, db(limit, false))
			default:
				hv.Caption = fmt.Sprintf("%d trials; every one clears the mask's limit (loss %s %s) by far.", mc.Trials, side, db(limit, false))
			}
			hv.TestID = "histogram-" + strings.ReplaceAll(e.key, "_", "-")
			v.Histograms = append(v.Histograms, hv)
		}
	}
	return v
}

// edge is one edge-loss histogram's key, its name in words and whether it
// is a stopband edge.
type edge struct {
	key, label string
	stop       bool
}

// edgeOrder returns the keys of the edge-loss histograms synth writes, in
// the order of the page: passband before stopband, lower before upper;
// any other key follows in sorted order.
func edgeOrder(hs map[string]synth.HistogramReport) []edge {
	known := []edge{
		{"passband_edge", "passband edge", false},
		{"passband_edge_lo", "lower passband edge", false},
		{"passband_edge_hi", "upper passband edge", false},
		{"stopband_edge", "stopband edge", true},
		{"stopband_edge_lo", "lower stopband edge", true},
		{"stopband_edge_hi", "upper stopband edge", true},
	}
	var out []edge
	for _, e := range known {
		if _, ok := hs[e.key]; ok {
			out = append(out, e)
		}
	}
	var rest []string
	for k := range hs {
		if !slices.ContainsFunc(known, func(e edge) bool { return e.key == k }) {
			rest = append(rest, k)
		}
	}
	slices.Sort(rest)
	for _, k := range rest {
		out = append(out, edge{k, strings.ReplaceAll(k, "_", " "), strings.HasPrefix(k, "stopband")})
	}
	return out
}

// Layout of a histogram, in SVG user units.
const (
	histWidth, histHeight = 280, 120
	histLeft, histRight   = 10, 270
	histTop, histBase     = 8, 92
)

// histogram lays out h as bars, with the mask's limit drawn where it falls
// within reach of the bars; bad says which losses miss the mask. It
// reports false for a histogram it cannot draw.
func histogram(h synth.HistogramReport, limit float64, bad func(float64) bool) (components.Histogram, bool) {
	n := len(h.Counts)
	if n == 0 || len(h.EdgesDB) != n+1 {
		return components.Histogram{}, false
	}
	lo, hi := h.EdgesDB[0], h.EdgesDB[n]
	if !finite(lo) || !finite(hi) || !(hi > lo) {
		return components.Histogram{}, false
	}
	// The limit widens the axis by up to the bars' own span.
	span := hi - lo
	hasLimit := finite(limit) && limit >= lo-span && limit <= hi+span
	xLo, xHi := lo, hi
	if hasLimit {
		xLo, xHi = math.Min(lo, limit), math.Max(hi, limit)
	}
	x := func(v float64) float64 { return histLeft + (v-xLo)/(xHi-xLo)*(histRight-histLeft) }
	peak := slices.Max(h.Counts)
	if peak <= 0 {
		peak = 1
	}
	f := func(v float64) string { return strconv.FormatFloat(v, 'f', 1, 64) }
	out := components.Histogram{
		Width: histWidth, Height: histHeight, BaseY: f(histBase),
		LoLabel: db(lo, false), HiLabel: db(hi, false),
	}
	for i, c := range h.Counts {
		a, b := h.EdgesDB[i], h.EdgesDB[i+1]
		if !finite(a) || !finite(b) {
			continue
		}
		height := float64(c) / float64(peak) * (histBase - histTop)
		out.Bars = append(out.Bars, components.Bar{
			X: f(x(a) + 0.5), Y: f(histBase - height), W: f(math.Max(x(b)-x(a)-1, 0.5)), H: f(height),
			Bad:   bad((a + b) / 2),
			Title: fmt.Sprintf("%s to %s: %d trials", db(a, false), db(b, false), c),
		})
	}
	if hasLimit {
		out.HasLimit, out.LimitX, out.LimitLabel = true, f(x(limit)), db(limit, false)
		switch out.LimitAnchor = "middle"; {
		case x(limit) < histLeft+30:
			out.LimitAnchor = "start"
		case x(limit) > histRight-30:
			out.LimitAnchor = "end"
		}
		if limit < lo {
			out.LoLabel = ""
		}
		if limit > hi {
			out.HiLabel = ""
		}
	}
	return out, true
}

// contributorRows lists the largest noise contributors of n and says how
// much the rest add up to.
func contributorRows(n *synth.NoiseReport) ([]components.ContributorRow, string) {
	cs := slices.Clone(n.Contributors)
	slices.SortStableFunc(cs, func(a, b synth.Contributor) int { return cmp.Compare(b.Share, a.Share) })
	var rows []components.ContributorRow
	for i, c := range cs {
		if i == topContributors {
			break
		}
		kind := "op-amp: voltage and current noise"
		if strings.HasPrefix(c.Ref, "R") {
			kind = "resistor: thermal noise"
		}
		rows = append(rows, components.ContributorRow{
			Ref: c.Ref, Kind: kind, Share: share(c.Share), RMS: si(math.Sqrt(math.Max(c.Share, 0))*n.OutputRMSV, "V", 3),
		})
	}
	note := ""
	if len(cs) > topContributors {
		rest := 0.0
		for _, c := range cs[topContributors:] {
			rest += c.Share
		}
		note = fmt.Sprintf("%d more parts add %s of the noise power.", len(cs)-topContributors, share(rest))
	}
	return rows, note
}

// tolerances are the tolerances the Monte Carlo draws each part from: the
// spec's for its kind, else the part's own.
type tolerances struct {
	byRef        map[string]float64
	kinds        map[string][]float64 // the distinct tolerances of each kind
	resistorPct  float64
	capacitorPct float64
	gaussian     bool
}

func newTolerances(d *synth.Design) tolerances {
	t := tolerances{
		byRef: map[string]float64{}, kinds: map[string][]float64{},
		resistorPct: d.Spec.Tolerance.ResistorPct, capacitorPct: d.Spec.Tolerance.CapacitorPct,
		gaussian: d.Spec.Tolerance.Distribution == "gaussian",
	}
	for _, sec := range d.Sections {
		for _, c := range sec.Components {
			pct := c.TolerancePct // the spec's (0: exact), as the Monte Carlo draws it
			t.byRef[c.Ref] = pct
			if !slices.Contains(t.kinds[c.Kind], pct) {
				t.kinds[c.Kind] = append(t.kinds[c.Kind], pct)
			}
		}
	}
	return t
}

// of returns the tolerance of the part ref, in percent.
func (t tolerances) of(ref string) (float64, bool) {
	v, ok := t.byRef[ref]
	return v, ok
}

// sigma returns the standard deviation of a part of tolerance pct, in
// percent: pct/√3 uniform, pct/3 gaussian (the tolerance as 3σ).
func (t tolerances) sigma(pct float64) float64 {
	if t.gaussian {
		return pct / 3
	}
	return pct / math.Sqrt(3)
}

// predicted returns the first-order σ of a stage figure, in percent:
// √(Σ S²·σ²) over the stage's parts, y picking the sensitivity.
func (t tolerances) predicted(sec *synth.Section, y func(synth.Sensitivity) float64) (float64, bool) {
	if len(sec.Sensitivities) == 0 {
		return 0, false
	}
	sum := 0.0
	for _, x := range sec.Sensitivities {
		pct, ok := t.of(x.Ref)
		if !ok {
			continue // not a drawn part (an op-amp)
		}
		s := y(x) * t.sigma(pct)
		sum += s * s
	}
	return math.Sqrt(sum), finite(sum)
}

// describe says which tolerances the Monte Carlo drew from.
func (t tolerances) describe() string {
	one := func(kind, plural string, spec float64) string {
		if spec > 0 {
			return plural + " ±" + num(spec) + " %"
		}
		vs := slices.Clone(t.kinds[kind])
		slices.Sort(vs)
		if len(vs) == 0 {
			return plural + ": none"
		}
		parts := make([]string, len(vs))
		for i, v := range vs {
			parts[i] = "±" + num(v) + " %"
		}
		return plural + " " + strings.Join(parts, " or ") + " (the parts' own)"
	}
	dist := "uniform within the tolerance"
	if t.gaussian {
		dist = "gaussian, the tolerance as 3σ"
	}
	return one("resistor", "resistors", t.resistorPct) + ", " + one("capacitor", "capacitors", t.capacitorPct) + ", " + dist
}

// stageDetails are the bench lines of section sec under its row of the
// stage table: the most sensitive parts and the tolerances they need.
func stageDetails(sec synth.Section, tol tolerances) []components.Detail {
	var out []components.Detail
	if len(sec.Sensitivities) > 0 {
		ss := slices.Clone(sec.Sensitivities)
		mag := func(x synth.Sensitivity) float64 { return math.Max(math.Abs(x.F0), math.Abs(x.Q)) }
		slices.SortStableFunc(ss, func(a, b synth.Sensitivity) int { return cmp.Compare(mag(b), mag(a)) })
		var parts []string
		for i, x := range ss {
			if i == topSensitive {
				break
			}
			if sec.Order == 1 {
				parts = append(parts, fmt.Sprintf("%s (f0 %s)", x.Ref, signed(x.F0)))
			} else {
				parts = append(parts, fmt.Sprintf("%s (f0 %s, Q %s)", x.Ref, signed(x.F0), signed(x.Q)))
			}
		}
		out = append(out, components.Detail{Label: "Most sensitive (S = ∂ln y/∂ln x):", Text: strings.Join(parts, ", ")})
	}
	if len(sec.RequiredTolerance) > 0 {
		req := slices.Clone(sec.RequiredTolerance)
		slices.SortStableFunc(req, func(a, b synth.PartTolerance) int { return cmp.Compare(a.TolerancePct, b.TolerancePct) })
		var tight []string
		for i, p := range req {
			if i < topSensitive {
				tight = append(tight, fmt.Sprintf("%s ±%s %%", p.Ref, num(p.TolerancePct)))
			}
		}
		target := "f0 within 1 % and Q within 2 %"
		if sec.Order == 1 {
			target = "f0 within 1 %"
		}
		out = append(out, components.Detail{Label: "Tolerance needed for " + target + " on 99 % of boards:", Text: strings.Join(tight, ", ")})
	}
	return out
}

// fillPartBench adds the tolerance, sensitivities and need of each part of
// card, the stage of section sec.
func fillPartBench(card *components.StageCard, sec synth.Section, tol tolerances) {
	if len(sec.Sensitivities) == 0 && len(sec.RequiredTolerance) == 0 {
		return
	}
	card.Sensitive = true
	for i := range card.Parts {
		p := &card.Parts[i]
		p.Tolerance, p.SensF0, p.SensQ, p.Needs, p.FailsAt = "—", "—", "—", "—", "—"
		if t, ok := tol.of(p.Ref); ok {
			p.Tolerance = "±" + num(t) + " %"
		}
		for _, x := range sec.Sensitivities {
			if x.Ref == p.Ref {
				p.SensF0 = signed(x.F0)
				if sec.Order == 2 {
					p.SensQ = signed(x.Q)
				}
			}
		}
		for _, c := range sec.Components {
			if c.Ref == p.Ref {
				p.FailsAt = failsAt(c.FailAtPct)
			}
		}
		for _, r := range sec.RequiredTolerance {
			if r.Ref == p.Ref {
				p.Needs = "±" + num(r.TolerancePct) + " %"
			}
		}
	}
}

// failsAt words a part's fail_at_pct: "−1.2 % / +3.4 %", "never" beyond
// the search on both sides, "now" when the board fails as it is.
func failsAt(f [2]*float64) string {
	side := func(v *float64, sign string) string {
		if v == nil {
			return sign + "> 100 %"
		}
		return sign + num(*v) + " %"
	}
	if f[0] == nil && f[1] == nil {
		return "never"
	}
	if f[0] != nil && f[1] != nil && *f[0] == 0 && *f[1] == 0 {
		return "fails as built"
	}
	return side(f[0], "−") + " / " + side(f[1], "+")
}

// optional formats *v, or "—" for nil.
func optional(v *float64, f func(float64) string) string {
	if v == nil || !finite(*v) {
		return "—"
	}
	return f(*v)
}

// share formats a fraction as a percentage with three significant digits
// ("97.3 %", "100 %").
func share(v float64) string {
	if !finite(v) {
		return "—"
	}
	return pctValue(100 * v)
}

// pctValue formats a value in percent with three significant digits.
func pctValue(v float64) string {
	if !finite(v) {
		return "—"
	}
	return num(v) + " %"
}

// pctOf formats a fraction as a percentage in the shortest form with
// three significant digits ("0.1 %", "0.000191 %").
func pctOf(v float64) string { return pctValue(100 * v) }

// num formats v with three significant digits, no exponent for ordinary
// magnitudes.
func num(v float64) string {
	s := strconv.FormatFloat(v, 'g', 3, 64)
	if strings.ContainsAny(s, "e") && math.Abs(v) >= 1e-6 && math.Abs(v) < 1e6 {
		prec := max(0, 2-int(math.Floor(math.Log10(math.Abs(v)))))
		s = strconv.FormatFloat(v, 'f', prec, 64)
	}
	return strings.Replace(s, "-", "−", 1)
}

// signed formats a sensitivity with a sign and two decimals.
func signed(v float64) string {
	s := strconv.FormatFloat(v, 'f', 2, 64)
	if s == "-0.00" {
		s = "0.00"
	}
	if !strings.HasPrefix(s, "-") {
		s = "+" + s
	}
	return strings.Replace(s, "-", "−", 1)
}

// slew formats a slew rate in V/µs, as data sheets give it.
func slew(v float64) string {
	return num(v/1e6) + " V/µs"
}

// finite reports whether v is neither NaN nor infinite.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
