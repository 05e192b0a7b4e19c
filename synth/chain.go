package synth

import (
	"errors"

	"github.com/polewright/polewright/synth/circuit"
)

// ErrNoCircuit is returned by [Design.Chain] for a design whose sections
// have not been mapped onto circuits.
var ErrNoCircuit = errors.New("synth: the design has no circuit")

// Chain returns the filter as built: one circuit stage per section, in
// signal order, with the spec's op-amp model. The SPICE deck and the bill
// of materials are written from it.
func (d *Design) Chain() (circuit.Chain, error) {
	if d.chain == nil {
		return circuit.Chain{}, ErrNoCircuit
	}
	return *d.chain, nil
}
