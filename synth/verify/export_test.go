package verify

import (
	"slices"

	"github.com/polewright/polewright/synth/circuit"
)

// StageTrial analyses the one-stage chain of st with model m, its parts
// scaled by fac and its single-pole op-amps' GBW by gbw, on freqHz, by
// the path MonteCarlo takes (the generic one when generic is set, else
// the fast one whenever the stage has at most 16 variables); it returns
// the response in dB, the stage's f0 and Q, and whether the fast path was
// used.
func StageTrial(st circuit.Stage, m circuit.Model, fac, gbw, freqHz []float64, generic bool) (db []float64, f0, q float64, ok, fast bool, err error) {
	mode := expandAlways
	if generic {
		mode = expandNever
	}
	cm, err := buildChainModel(circuit.Chain{Stages: []circuit.Stage{st}, Model: m}, Tolerance{}, MonteCarloOptions{Trials: 1, FreqHz: freqHz}, mode)
	if err != nil {
		return nil, 0, 0, false, false, err
	}
	w := newWorker(cm, 1)
	copy(w.fac[0], fac)
	copy(w.gbw[0], gbw)
	if err := w.analyse(); err != nil {
		return nil, 0, 0, false, false, err
	}
	return slices.Clone(w.db[:len(freqHz)]), w.f0[0], w.q[0], w.ok[0], !cm.stages[0].generic, nil
}

// TailSizes exposes tailSizes.
var TailSizes = tailSizes
