// Package export writes a design in each of the forms the outside contract
// names: the design JSON, the SPICE deck, the bill of materials, the plots
// and the schematic as SVG (each with a <title> and the spec in a <desc>,
// [LabelSVG]). The command line and the HTTP API both go through [Write],
// so the two give byte-identical output for the same spec.
package export

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// Kinds are the export kinds, as the CLI's -as and the API's ?as= take them.
var Kinds = []string{"spice", "bom", "json", "bode-svg", "passband-svg", "delay-svg", "step-svg", "noise-svg", "schematic-svg", "report", "parts"}

// ErrKind is returned by [Write] for a kind not in [Kinds].
var ErrKind = errors.New("export: unknown kind")

// ErrNoNoise is returned by [Write] for noise-svg of a design without a
// noise analysis (Design.Noise nil: it needs the circuit).
var ErrNoNoise = errors.New("export: the design has no noise analysis (it needs the circuit)")

// IsSVG reports whether kind is one of the SVG drawings.
func IsSVG(kind string) bool { return strings.HasSuffix(kind, "-svg") }

// Known reports whether kind is one of [Kinds].
func Known(kind string) bool {
	for _, k := range Kinds {
		if k == kind {
			return true
		}
	}
	return false
}

// ContentType returns the media type of an export kind.
func ContentType(kind string) string {
	switch kind {
	case "spice":
		return "application/x-spice; charset=utf-8"
	case "bom", "parts":
		return "text/csv; charset=utf-8"
	case "json":
		return "application/json"
	case "report":
		return "text/html; charset=utf-8"
	}
	if IsSVG(kind) {
		return "image/svg+xml"
	}
	return "application/octet-stream"
}

// FileName returns a file name for kind that does not depend on the
// design; downloads use [DesignFileName].
func FileName(kind string) string {
	switch kind {
	case "spice":
		return "polewright.cir"
	case "bom":
		return "polewright-bom.csv"
	case "json":
		return "polewright-design.json"
	}
	return "polewright-" + strings.TrimSuffix(kind, "-svg") + ".svg"
}

// Write writes d as kind to w. It renders into a buffer first, so w gets
// either the whole export or nothing. An unknown kind wraps [ErrKind].
func Write(w io.Writer, d *synth.Design, kind string) error {
	var buf bytes.Buffer
	var err error
	switch kind {
	case "json":
		enc := json.NewEncoder(&buf)
		enc.SetIndent("", "  ")
		err = enc.Encode(d)
	case "spice":
		err = writeSpice(&buf, d)
	case "bom":
		var ch circuit.Chain
		if ch, err = d.Chain(); err == nil {
			err = ch.WriteBOM(&buf)
		}
	case "bode-svg", "passband-svg", "delay-svg", "step-svg", "noise-svg":
		err = writePlot(&buf, d, kind)
	case "schematic-svg":
		err = writeSchematics(&buf, d)
	case "report":
		err = writeReport(&buf, d)
	case "parts":
		err = writeParts(&buf, d)
	default:
		return fmt.Errorf("%w %q (kinds: %s)", ErrKind, kind, strings.Join(Kinds, ", "))
	}
	if err != nil {
		return err
	}
	out := buf.Bytes()
	if IsSVG(kind) {
		out = LabelSVG(out, d, kind)
	}
	_, err = w.Write(out)
	return err
}

// SpiceDescription returns the header comment of the deck: the spec as
// JSON, one field per line.
func SpiceDescription(d *synth.Design) string {
	b, _ := json.MarshalIndent(d.Spec, "", "  ")
	return "polewright design\nspec:\n" + string(b)
}

func writeSpice(w io.Writer, d *synth.Design) error {
	ch, err := d.Chain()
	if err != nil {
		return err
	}
	lo, hi := d.Response.FreqHz[0], d.Response.FreqHz[len(d.Response.FreqHz)-1]
	opt := circuit.SpiceOptions{
		Title:           fmt.Sprintf("polewright %s %s, order %d", d.Spec.Approximation, d.Spec.Response, d.Order),
		Description:     SpiceDescription(d),
		PointsPerDecade: 100,
		StartHz:         lo,
		StopHz:          hi,
		// The op-amps carry the spec's noise densities, so that the deck's
		// noise analysis gives the design's output noise density.
		Noise: &circuit.SpiceNoise{
			VoltageVPerRtHz: d.Spec.OpAmp.NoiseVPerRtHz,
			CurrentAPerRtHz: d.Spec.OpAmp.NoiseAPerRtHz,
			CornerHz:        d.Spec.OpAmp.NoiseCornerHz,
			TempK:           300,
			Analysis:        true,
		},
	}
	if st := d.Step; st != nil && len(st.TimeS) > 1 {
		end := st.TimeS[len(st.TimeS)-1]
		// The simulator integrates with at most this step; ten times finer
		// than the design's grid keeps its error well under 0.1 %.
		opt.Transient = &circuit.SpiceTransient{StopS: end, StepS: end / float64(10*(len(st.TimeS)-1))}
	}
	if p := d.Spec.Supply; p != nil {
		// On its rails: the step is the full-scale one the swing figures
		// take, from reference − signal_vpp/2 to reference + signal_vpp/2.
		a := d.Spec.SignalVppV() / 2
		opt.Supply = &circuit.SpiceSupply{PositiveV: p.PositiveV, NegativeV: p.NegativeV, ReferenceV: p.ReferenceV,
			OutputHeadroomV: d.Spec.OpAmp.OutputHeadroomV, StepLowV: -a, StepHighV: a}
	}
	if dr, c := d.Driver, d.Spec.Converter; dr != nil && c != nil {
		// The converter's sampling capacitor at the other end of the
		// range, switched on for one acquisition; the switch's own
		// resistance is not in the spec, so it is 1/1000 of R's, too
		// small to change the settling.
		opt.Sampler = &circuit.SpiceSampler{CapacitanceFarad: c.SamplingCapacitanceFarad, AcquisitionS: c.AcquisitionTimeS,
			KickV: -c.FullScaleVpp, SwitchOhm: dr.ROhm / 1000}
	}
	return ch.WriteSPICE(w, opt)
}
