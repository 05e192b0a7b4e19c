package export

import (
	"bytes"
	"fmt"
	"io"
	"regexp"
	"strconv"

	"github.com/polewright/polewright/plotting/schematic"
	"github.com/polewright/polewright/standards/si"
	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
)

// schematicGapPx is the space between two stages' schematics in the
// combined drawing, in SVG user units.
const schematicGapPx = 24

// StageTitle returns the caption of stage k (1-based) of d's chain ch:
// its number, topology and, when the design has a section for it, its
// f0 and Q, and, on the last stage, the SAR converter's driver parts.
func StageTitle(d *synth.Design, ch circuit.Chain, k int) string {
	t := fmt.Sprintf("Stage %d: %s", k, ch.Stages[k-1].Topology)
	if k-1 < len(d.Sections) {
		s := d.Sections[k-1]
		t += fmt.Sprintf(" %s, f0 %s", s.Kind, si.Format(s.F0Hz, "Hz", 4))
		if s.Q != nil {
			t += ", Q " + strconv.FormatFloat(*s.Q, 'g', 4, 64)
		}
	}
	if dr := d.Driver; dr != nil && k == len(ch.Stages) && len(dr.Components) == 2 {
		t += fmt.Sprintf("; %s and %s drive the SAR converter's input", dr.Components[0].Ref, dr.Components[1].Ref)
	}
	return t
}

// StageSVG writes the schematic of stage k (1-based) of ch, labelled with
// the chain-wide designators and captioned with [StageTitle].
func StageSVG(w io.Writer, d *synth.Design, ch circuit.Chain, k int) error {
	return stageSVG(w, d, ch, k, StageTitle(d, ch, k))
}

// stageSVG writes stage k's schematic with title drawn above it ("": none).
func stageSVG(w io.Writer, d *synth.Design, ch circuit.Chain, k int, title string) error {
	return schematic.Stage(w, ch.Stages[k-1], schematic.Options{
		Title: title,
		Refs:  func(local string) string { return ch.Ref(k, local) },
	})
}

// rootSize finds the width and height attributes of a schematic's root
// element (plain user units, as package schematic writes them).
var rootSize = regexp.MustCompile(`^<svg[^>]*? width="([0-9]+)" height="([0-9]+)"`)

// writeSchematics writes every stage of d's chain in one SVG document:
// the stages' own drawings stacked top to bottom in signal order, each
// with its caption, schematicGapPx apart, on a white ground. Each stage stays
// a nested <svg> element with its own viewBox, so that it is drawn
// exactly as the page draws it.
func writeSchematics(w io.Writer, d *synth.Design) error {
	ch, err := d.Chain()
	if err != nil {
		return err
	}
	var body bytes.Buffer
	width, y := 0, 0
	for k := 1; k <= len(ch.Stages); k++ {
		one, sw, sh, err := sizedStageSVG(d, ch, k)
		if err != nil {
			return err
		}
		if k > 1 {
			y += schematicGapPx
		}
		fmt.Fprintf(&body, "<g class=\"stage\" data-stage=\"%d\" transform=\"translate(0 %d)\">\n", k, y)
		body.Write(one)
		body.WriteString("</g>\n")
		width = max(width, sw)
		y += sh
	}
	fmt.Fprintf(w, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"+
		"<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 %d %d\" width=\"%d\" height=\"%d\" color=\"#000\">\n"+
		"<rect width=\"%d\" height=\"%d\" fill=\"#fff\"/>\n", width, y, width, y, width, y)
	_, err = w.Write(body.Bytes())
	if err == nil {
		_, err = io.WriteString(w, "</svg>\n")
	}
	return err
}

// sizedStageSVG draws stage k of ch as [StageSVG] does and returns the
// drawing with its width and height in px, read from its root element.
func sizedStageSVG(d *synth.Design, ch circuit.Chain, k int) (svg []byte, width, height int, err error) {
	var one bytes.Buffer
	if err := StageSVG(&one, d, ch, k); err != nil {
		return nil, 0, 0, err
	}
	m := rootSize.FindSubmatch(one.Bytes())
	if m == nil {
		return nil, 0, 0, fmt.Errorf("export: stage %d's schematic has no width and height", k)
	}
	width, _ = strconv.Atoi(string(m[1]))
	height, _ = strconv.Atoi(string(m[2]))
	return one.Bytes(), width, height, nil
}
