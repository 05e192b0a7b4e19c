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
	case "passband-svg":
		return plotting.Passband(w, d, plotting.Options{})
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

// PassbandCaption is the caption of the passband plot, on the result page
// and in the report.
const PassbandCaption = passbandCaption

const passbandCaption = "The magnitude over the passband on a scale that shows the ripple, ideal and as built, against the mask's passband limits (shaded: forbidden; " +
	"with a gain tolerance, the dashed line is the least the passband maximum may be)."
