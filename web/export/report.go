package export

import (
	"bytes"
	"embed"
	"encoding/base64"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"html/template"
	"io"
	"math"
	"strconv"
	"strings"
	"sync"

	"github.com/polewright/polewright/plotting"
	"github.com/polewright/polewright/standards/si"
	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/web/static"
)

//go:embed report.html report.css
var reportFiles embed.FS

// reportTemplate is the report page; its style sheet is inlined.
var reportTemplate = template.Must(template.New("report.html").Funcs(template.FuncMap{
	"fig":   checkFigure,
	"deref": func(p *int) int { return *p },
}).ParseFS(reportFiles, "report.html"))

// reportCSS is the report's style sheet, screen and print.
var reportCSS = func() template.CSS {
	b, err := reportFiles.ReadFile("report.css")
	if err != nil {
		panic(err) // unreachable: the file is embedded
	}
	return template.CSS(b)
}()

// reportIcon is the workbench's icon as a data: address.
var reportIcon = template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(static.FaviconPNG()))

// report is the view of a design that the report template renders: every
// figure already formatted, every verdict sentence taken from the
// design's checks as synth wrote it.
type report struct {
	Title, Job string
	CSS        template.CSS
	// Icon is the workbench's icon as a data: address, so that a
	// browser asks for no favicon either.
	Icon template.URL
	Mask []pair
	// Verdict is the text of the built-mask check (the ideal-mask check
	// without a circuit); VerdictOK and VerdictSeverity are its.
	Verdict         string
	VerdictOK       bool
	VerdictSeverity string
	Checks          []synth.Check
	Figures         []figure
	Stages          []reportStage
	BOMHeader       []string
	BOM             [][]string
	PartsHeader     []string
	Parts           [][]string
	Noise           []pair
	Contributors    []pair
	Yield           []pair
	// Driver are the SAR driver's figures and reason; nil without one.
	Driver   []pair
	Cautions []string
	SpecJSON string
	Notes    []string
}

// pair is a label and its value.
type pair struct{ Label, Value string }

// figure is one inline plot with its title and caption.
type figure struct {
	ID, Title, Caption string
	SVG                template.HTML
}

// reportStage is one stage: its figures, schematic and parts.
type reportStage struct {
	Title     string
	Figures   []pair
	Schematic template.HTML
	Parts     [][]string
}

// generalCaution is the safety note every report ends with, as the
// workbench's pages carry it.
const generalCaution = "polewright designs low-voltage signal circuits. For inputs connected to the mains, to a " +
	"high-voltage source or to a person, follow your local electrical codes and the applicable safety " +
	"standards, and have the design reviewed by a licensed or qualified professional."

// writeReport writes d as one self-contained HTML file: inline CSS and
// inline SVG, no script, nothing fetched from elsewhere.
func writeReport(w io.Writer, d *synth.Design) error {
	r, err := newReport(d)
	if err != nil {
		return err
	}
	return reportTemplate.Execute(w, r)
}

func newReport(d *synth.Design) (*report, error) {
	s := d.Spec
	r := &report{
		Title: "Filter design report: " + Describe(d),
		CSS:   reportCSS,
		Icon:  reportIcon,
	}
	r.Job = job(d)
	r.Mask = maskPairs(d)
	spec, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		return nil, err
	}
	r.SpecJSON = string(spec)

	r.Checks = d.Checks
	for _, c := range d.Checks {
		if c.ID == synth.CheckBuiltMask || (c.ID == synth.CheckIdealMask && r.Verdict == "") {
			r.Verdict, r.VerdictOK, r.VerdictSeverity = c.Text, c.OK, string(c.Severity)
		}
	}

	ch, chErr := d.Chain()
	hasChain := chErr == nil
	if !hasChain {
		r.Notes = append(r.Notes, "No circuit: "+chErr.Error())
	}

	// The drawings are independent: draw them concurrently.
	type drawing struct {
		id, title, caption string
		draw               func(io.Writer) error
	}
	drawings := []drawing{
		{"bode", "Magnitude and phase", "Magnitude against the mask (shaded: forbidden), ideal and as built; phase below.",
			func(w io.Writer) error { return plotting.Bode(w, d, plotting.Options{}) }},
		{"passband", "Passband", passbandCaption,
			func(w io.Writer) error { return plotting.Passband(w, d, plotting.Options{}) }},
		{"delay", "Group delay", "Group delay, ideal and as built.",
			func(w io.Writer) error { return plotting.GroupDelay(w, d, plotting.Options{}) }},
		{"step", "Step response", "Response to a unit step at the input, ideal and as built.",
			func(w io.Writer) error { return plotting.Step(w, d, plotting.Options{}) }},
	}
	if d.Noise != nil {
		drawings = append(drawings, drawing{"noise", "Output noise density", "Output noise density of the circuit as built; dashed, with a converter: its quantisation noise LSB/√12 spread over 0 to fs/2.",
			func(w io.Writer) error { return plotting.Noise(w, d, plotting.Options{}) }})
	}
	nStages := 0
	if hasChain {
		nStages = len(ch.Stages)
	}
	svgs := make([][]byte, len(drawings)+nStages)
	errs := make([]error, len(svgs))
	var wg sync.WaitGroup
	for i, dr := range drawings {
		wg.Go(func() {
			var b bytes.Buffer
			errs[i] = dr.draw(&b)
			svgs[i] = plotting.InlineSVG(b.Bytes())
		})
	}
	for k := range nStages {
		wg.Go(func() {
			var b bytes.Buffer
			errs[len(drawings)+k] = stageSVG(&b, d, ch, k+1, "") // the report heads it
			svgs[len(drawings)+k] = b.Bytes()
		})
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	for i, dr := range drawings {
		r.Figures = append(r.Figures, figure{ID: dr.id, Title: dr.title, Caption: dr.caption, SVG: template.HTML(svgs[i])})
	}

	for k := range nStages {
		st := reportStage{Title: StageTitle(d, ch, k+1), Schematic: template.HTML(svgs[len(drawings)+k])}
		if k < len(d.Sections) {
			st.Figures = sectionPairs(d.Sections[k])
		}
		st.Parts = append(st.Parts, []string{"ref", "kind", "value", "exact", "series", "tolerance"})
		for _, p := range ch.Stages[k].Parts {
			unit := "Ω"
			if p.Kind == circuit.Capacitor {
				unit = "F"
			}
			series, tol := p.Series, "—"
			if series == "" {
				series = "exact"
			}
			if p.TolerancePct != 0 {
				tol = strconv.FormatFloat(p.TolerancePct, 'g', -1, 64) + " %"
			}
			st.Parts = append(st.Parts, []string{ch.Ref(k+1, p.Ref), string(p.Kind), si.Format(p.Value, unit, 4), si.Format(p.Exact, unit, 6), series, tol})
		}
		for _, u := range ch.Stages[k].OpAmps {
			v := "ideal"
			if !ch.Model.Ideal {
				v = si.Format(ch.Model.GBWHz, "Hz", 3) + " GBW"
			}
			st.Parts = append(st.Parts, []string{ch.Ref(k+1, u.Ref), "op-amp", v, "—", "—", "—"})
		}
		r.Stages = append(r.Stages, st)
	}

	if hasChain {
		var bom bytes.Buffer
		if err := Write(&bom, d, "bom"); err != nil {
			return nil, err
		}
		rows, err := csv.NewReader(&bom).ReadAll()
		if err != nil {
			return nil, err
		}
		if len(rows) > 0 {
			r.BOMHeader, r.BOM = rows[0], rows[1:]
		}
		var parts bytes.Buffer
		if err := writeParts(&parts, d); err != nil {
			return nil, err
		}
		if rows, err = csv.NewReader(&parts).ReadAll(); err != nil {
			return nil, err
		}
		if len(rows) > 0 {
			r.PartsHeader, r.Parts = rows[0], rows[1:]
		}
	}

	r.Noise, r.Contributors = noisePairs(d.Noise)
	if mc := d.MonteCarlo; mc != nil {
		r.Yield = []pair{
			{"Trials", strconv.Itoa(mc.Trials)},
			{"Seed", strconv.FormatUint(mc.Seed, 10)},
			{"Yield (boards passing the acceptance rule)", strconv.FormatFloat(100*mc.Yield, 'f', 1, 64) + " %"},
			{"Part tolerances drawn", fmt.Sprintf("resistors %g %%, capacitors %g %%, %s", s.Tolerance.ResistorPct, s.Tolerance.CapacitorPct, s.Tolerance.Distribution)},
		}
	}
	if dr := d.Driver; dr != nil && len(dr.Components) == 2 {
		pm := "not judged (ideal op-amp)"
		if dr.PhaseMarginDeg != nil {
			pm = fmt.Sprintf("%.0f°", *dr.PhaseMarginDeg)
		}
		r.Driver = []pair{
			{"R", dr.Components[0].Ref + " " + si.Format(dr.ROhm, "Ω", 3)},
			{"C", dr.Components[1].Ref + " " + si.Format(dr.CFarad, "F", 3) + " " + dr.Dielectric},
			{"Kick of a full-scale step, Vfs·Cs/(Cs + C)", si.Format(dr.KickbackV, "V", 3)},
			{"Left at the end of the acquisition", fmt.Sprintf("%.3g LSB after %s", dr.SettledErrorLSB, si.Format(dr.AcquisitionTimeS, "s", 3))},
			{"Phase margin of the last op-amp with R–C", pm},
			{"Why", dr.Reason},
		}
	}
	for _, c := range d.Checks {
		if c.ID == synth.CheckSafetyVoltage || c.ID == synth.CheckSafetyMains {
			r.Cautions = append(r.Cautions, c.Text)
		}
	}
	r.Cautions = append(r.Cautions, generalCaution)
	return r, nil
}

// job is the requirement in one sentence.
func job(d *synth.Design) string {
	s := d.Spec
	var b strings.Builder
	fmt.Fprintf(&b, "A %s filter: passband %s with at most %s dB of ripple", s.Response, edges(s.PassbandHz), num(s.PassbandRippleDB, 4))
	if s.HasStopband() {
		fmt.Fprintf(&b, ", stopband %s with at least %s dB of attenuation", edges(s.StopbandHz), num(s.StopbandAttenDB, 4))
	}
	fmt.Fprintf(&b, ", passband gain %s dB; designed as a %s of order %d in %d stages.", num(s.GainDB, 4), s.Approximation, d.Order, len(d.Sections))
	return b.String()
}

// maskPairs are the spec's mask and build settings as label and value.
func maskPairs(d *synth.Design) []pair {
	s := d.Spec
	p := []pair{
		{"Response", string(s.Response)},
		{"Approximation", s.Approximation},
		{"Order", strconv.Itoa(d.Order)},
		{"Passband edge", edges(s.PassbandHz)},
		{"Passband ripple Amax", num(s.PassbandRippleDB, 4) + " dB"},
	}
	if s.HasStopband() {
		p = append(p, pair{"Stopband edge", edges(s.StopbandHz)}, pair{"Stopband attenuation Amin", num(s.StopbandAttenDB, 4) + " dB"})
	}
	p = append(p,
		pair{"Gain", checkFigure(s.GainDB, "dB")},
		pair{"Topology", s.Topology},
		pair{"Resistor series / capacitor series", s.ResistorSeries + " / " + s.CapacitorSeries},
		pair{"Values", s.Values},
	)
	if s.OpAmp.Ideal {
		p = append(p, pair{"Op-amp", "ideal"})
	} else {
		p = append(p, pair{"Op-amp", fmt.Sprintf("GBW %s, DC gain %s dB, slew %s, noise %s/√Hz, %s/√Hz",
			si.Format(s.OpAmp.GBWHz, "Hz", 4), num(s.OpAmp.DCGainDB, 4), si.Format(s.OpAmp.SlewVPerS, "V/s", 3),
			si.Format(s.OpAmp.NoiseVPerRtHz, "V", 3), si.Format(s.OpAmp.NoiseAPerRtHz, "A", 3))})
	}
	if c := s.Converter; c != nil {
		p = append(p, pair{"Converter", fmt.Sprintf("%d bits, sampling at %s, full scale %s Vpp",
			c.Bits, si.Format(c.SampleRateHz, "Hz", 6), num(c.FullScaleVpp, 4))})
	}
	return p
}

// sectionPairs are the figures of one section.
func sectionPairs(sec synth.Section) []pair {
	p := []pair{
		{"Kind", string(sec.Kind)},
		{"f0", si.Format(sec.F0Hz, "Hz", 5)},
	}
	if sec.Q != nil {
		p = append(p, pair{"Q", num(*sec.Q, 4)})
	}
	if sec.ZeroHz != nil {
		p = append(p, pair{"Zero", si.Format(*sec.ZeroHz, "Hz", 5)})
	}
	p = append(p, pair{"Gain", checkFigure(sec.GainDB, "dB")}, pair{"Peak at output", checkFigure(sec.PeakGainDB, "dB")})
	if rz := sec.Realized; rz != nil {
		v := si.Format(rz.F0Hz, "Hz", 5)
		if rz.Q != nil {
			v += ", Q " + num(*rz.Q, 4)
		}
		p = append(p, pair{"As built", v})
	}
	if n := sec.OpAmpNeeds; n != nil {
		gbw := "beyond 1 THz"
		if n.GBWHz != nil {
			gbw = si.Format(*n.GBWHz, "Hz", 3)
		}
		p = append(p, pair{"Op-amp GBW needed", gbw}, pair{"Slew needed", si.Format(n.SlewVPerS, "V/s", 3)})
	}
	for _, w := range sec.Warnings {
		p = append(p, pair{"Note", w})
	}
	return p
}

// noisePairs are the noise figures and the largest contributors.
func noisePairs(n *synth.NoiseReport) (figs, contrib []pair) {
	if n == nil {
		return nil, nil
	}
	figs = []pair{
		{"Output noise, " + si.Format(n.BandHz[0], "Hz", 4) + " to " + si.Format(n.BandHz[1], "Hz", 4), si.Format(n.InbandRMSV, "V", 3) + " rms"},
	}
	if n.SampledRMSV != nil {
		figs = append(figs, pair{"Noise in the converter's output words", si.Format(*n.SampledRMSV, "V", 3) + " rms"})
	}
	if n.LSBV != nil {
		figs = append(figs, pair{"LSB", si.Format(*n.LSBV, "V", 3)})
	}
	if n.SNRDB != nil {
		figs = append(figs, pair{"SNR of a full-scale sine", num(*n.SNRDB, 4) + " dB"})
	}
	if n.ENOBLossBits != nil {
		figs = append(figs, pair{"Resolution the noise costs", num(*n.ENOBLossBits, 3) + " bit"})
	}
	for i, c := range n.Contributors {
		if i == 8 {
			break
		}
		contrib = append(contrib, pair{c.Ref, strconv.FormatFloat(100*c.Share, 'f', 1, 64) + " %"})
	}
	return figs, contrib
}

// checkFigure formats a check's figure or limit in its unit: dB with
// three decimals, the SI units with a metric prefix, anything else with
// four significant digits.
func checkFigure(v float64, unit string) string {
	switch unit {
	case "dB":
		if math.Abs(v) >= 1e6 {
			return num(v, 4) + " dB"
		}
		s := strconv.FormatFloat(v, 'f', 3, 64)
		if s == "-0.000" {
			s = "0.000"
		}
		return strings.Replace(s, "-", "−", 1) + " dB"
	case "Hz", "s", "V", "V/s", "A":
		return si.Format(v, unit, 4)
	}
	return strings.TrimSpace(num(v, 4) + " " + unit)
}

// edges formats band edges: "20 kHz" or "18 kHz to 22 kHz".
func edges(hz []float64) string {
	out := make([]string, len(hz))
	for i, f := range hz {
		out[i] = si.Format(f, "Hz", 6)
	}
	return strings.Join(out, " to ")
}

// num formats v with digits significant digits, without an exponent for
// everyday magnitudes.
func num(v float64, digits int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	s := strconv.FormatFloat(v, 'g', digits, 64)
	if strings.ContainsAny(s, "e") {
		return s
	}
	return strings.Replace(s, "-", "−", 1)
}
