package export

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"strconv"

	"github.com/polewright/polewright/synth"
)

// StageFileName returns the file name a download of stage k's (1-based)
// schematic alone is offered under, e.g.
// "polewright-elliptic-5-lowpass-20kHz-stage2-schematic.svg".
func StageFileName(d *synth.Design, k int) string {
	if d == nil {
		return "polewright-stage" + strconv.Itoa(k) + "-schematic.svg"
	}
	return "polewright-" + DesignName(d) + "-stage" + strconv.Itoa(k) + "-schematic.svg"
}

// WriteStageSchematic writes the schematic of stage k (1-based) of d's
// chain alone as an SVG document: drawn as the page draws it, captioned
// with [StageTitle], labelled with the chain-wide designators, on a white
// ground, with a <title> naming the design and the stage and the spec in
// a <desc> (as [LabelSVG] labels the other drawings). A k outside the
// chain's stages is an error.
func WriteStageSchematic(w io.Writer, d *synth.Design, k int) error {
	ch, err := d.Chain()
	if err != nil {
		return err
	}
	if k < 1 || k > len(ch.Stages) {
		return fmt.Errorf("export: the design has %d stages, not a stage %d", len(ch.Stages), k)
	}
	one, sw, sh, err := sizedStageSVG(d, ch, k)
	if err != nil {
		return err
	}
	var b bytes.Buffer
	fmt.Fprintf(&b, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"+
		"<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 %d %d\" width=\"%d\" height=\"%d\" color=\"#000\">\n<title>", sw, sh, sw, sh)
	xmlEscape(&b, fmt.Sprintf("polewright: %s, schematic of stage %d", Describe(d), k))
	b.WriteString("</title>\n<desc>")
	spec, _ := json.Marshal(d.Spec)
	xmlEscape(&b, "spec: "+string(spec))
	fmt.Fprintf(&b, "</desc>\n<rect width=\"%d\" height=\"%d\" fill=\"#fff\"/>\n", sw, sh)
	b.Write(one)
	b.WriteString("</svg>\n")
	_, err = w.Write(b.Bytes())
	return err
}
