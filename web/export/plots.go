package export

import (
	"fmt"
	"io"

	"github.com/polewright/polewright/synth"
)

// writePlot writes one of the SVG plots.
func writePlot(w io.Writer, d *synth.Design, kind string) error {
	return fmt.Errorf("export: %s is not available yet", kind)
}
