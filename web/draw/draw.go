// Package draw connects the drawing packages to the workbench: [Plots]
// draws through package plotting and [Schematics] through package
// plotting/schematic, as the [web.Plots] and [web.Schematics] the handler
// takes. [Deps] returns both, for the server and the tests.
package draw

import (
	"fmt"
	"io"

	"github.com/polewright/polewright/plotting"
	"github.com/polewright/polewright/plotting/schematic"
	"github.com/polewright/polewright/synth"
	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/web"
)

// Plots draws the plots of a design with package plotting, at the sizes of
// Options (zero: plotting's defaults).
type Plots struct {
	Options plotting.Options
}

var _ web.Plots = Plots{}

// Bode writes the magnitude (with the mask) and phase plot of d.
func (p Plots) Bode(w io.Writer, d *synth.Design) error { return plotting.Bode(w, d, p.Options) }

// GroupDelay writes the group delay plot of d.
func (p Plots) GroupDelay(w io.Writer, d *synth.Design) error {
	return plotting.GroupDelay(w, d, p.Options)
}

// Step writes the step response plot of d.
func (p Plots) Step(w io.Writer, d *synth.Design) error { return plotting.Step(w, d, p.Options) }

var _ web.PassbandPlots = Plots{}

// Passband writes the magnitude over the passband of d, with the mask's
// passband limits.
func (p Plots) Passband(w io.Writer, d *synth.Design) error {
	return plotting.Passband(w, d, p.Options)
}

var _ web.NoisePlots = Plots{}

// Noise writes the output noise density plot of d.
func (p Plots) Noise(w io.Writer, d *synth.Design) error { return plotting.Noise(w, d, p.Options) }

// Schematics draws stage schematics with package plotting/schematic,
// labelled with the chain-wide designators of the SPICE deck and the bill
// of materials.
type Schematics struct{}

var _ web.Schematics = Schematics{}

// Stage writes the schematic of ch.Stages[stage-1]. A stage number out of
// range is an error.
func (Schematics) Stage(w io.Writer, ch circuit.Chain, stage int) error {
	if stage < 1 || stage > len(ch.Stages) {
		return fmt.Errorf("draw: stage %d of a chain of %d", stage, len(ch.Stages))
	}
	return schematic.Stage(w, ch.Stages[stage-1], schematic.Options{
		Refs: func(local string) string { return ch.Ref(stage, local) },
	})
}

// StageOnReference is Stage with every ground symbol labelled label (the
// reference of a single-supply board).
func (Schematics) StageOnReference(w io.Writer, ch circuit.Chain, stage int, label string) error {
	if stage < 1 || stage > len(ch.Stages) {
		return fmt.Errorf("draw: stage %d of a chain of %d", stage, len(ch.Stages))
	}
	return schematic.Stage(w, ch.Stages[stage-1], schematic.Options{
		Refs:        func(local string) string { return ch.Ref(stage, local) },
		GroundLabel: label,
	})
}

// Deps are the workbench's dependencies with the real drawings.
func Deps() web.Deps {
	return web.Deps{Plots: Plots{}, Schematics: Schematics{}}
}
