package export

import (
	"io"

	"github.com/polewright/polewright/plotting"
	"github.com/polewright/polewright/synth"
)

// writePlot writes one of the SVG plots with plotting's default size.
func writePlot(w io.Writer, d *synth.Design, kind string) error {
	switch kind {
	case "bode-svg":
		return plotting.Bode(w, d, plotting.Options{})
	case "delay-svg":
		return plotting.GroupDelay(w, d, plotting.Options{})
	case "noise-svg":
		if d.Noise == nil {
			return ErrNoNoise
		}
		return plotting.Noise(w, d, plotting.Options{})
	}
	return plotting.Step(w, d, plotting.Options{})
}
