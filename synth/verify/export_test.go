package verify

import (
	"fmt"
	"math"
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

// ExpansionBothWays evaluates the fast path's numerator and denominator
// of stage st (model m, parts scaled by fac, single-pole op-amps' GBW by
// gbw) term by term (evalExpansion, the reference) and through their
// compiled layout (compiled.eval, what the trials use). expanded is false
// when the stage takes the generic path (then nothing is evaluated).
func ExpansionBothWays(st circuit.Stage, m circuit.Model, fac, gbw []float64) (refNum, refDen, num, den []float64, expanded bool, err error) {
	sm, err := newStageModel(st, m, 1, expandAlways, nil)
	if err != nil || sm.generic {
		return nil, nil, nil, nil, false, err
	}
	y := slices.Clone(sm.y0)
	for j, f := range fac {
		if sm.isCap[j] {
			y[j] *= f
		} else {
			y[j] /= f
		}
	}
	var alpha float64
	beta := make([]float64, sm.nOps)
	if !m.Ideal {
		alpha = math.Pow(10, -m.DCGainDB/20)
		for u := range beta {
			beta[u] = sm.scale / (2 * math.Pi * m.GBWHz * gbw[u])
		}
	}
	refNum, refDen = make([]float64, sm.degNum+1), make([]float64, sm.degDen+1)
	num, den = make([]float64, sm.degNum+1), make([]float64, sm.degDen+1)
	evalExpansion(sm.num, refNum, y, alpha, beta)
	evalExpansion(sm.den, refDen, y, alpha, beta)
	nA := sm.denC.nA
	pa, pb := make([]float64, 1<<nA), make([]float64, 1<<(len(y)-nA))
	subsetProducts(pa, y[:nA])
	subsetProducts(pb, y[nA:])
	sm.numC.eval(num, pa, pb, alpha, beta)
	sm.denC.eval(den, pa, pb, alpha, beta)
	return refNum, refDen, num, den, true, nil
}

// PoleCheck is a stage prepared for [PoleCheck.Poles].
type PoleCheck struct {
	st circuit.Stage
	m  circuit.Model
	sm *stageModel
}

// NewPoleCheck prepares stage st under model m on the fast path; it
// returns nil when the stage takes the generic path.
func NewPoleCheck(st circuit.Stage, m circuit.Model) (*PoleCheck, error) {
	sm, err := newStageModel(st, m, 1, expandAlways, nil)
	if err != nil || sm.generic {
		return nil, err
	}
	return &PoleCheck{st, m, sm}, nil
}

// Poles computes the stage's denominator with its parts scaled by fac and
// its single-pole op-amps' GBW by gbw (as the trials do) and its roots
// twice, in rad/s: polished, from the nominal roots by the trials'
// iteration (polyRoots; ok is false when it gave up and a trial would
// take the full solve), and full, the circuit package's full solve
// (companion-matrix eigenvalues, circuit.Rational.Poles).
func (pc *PoleCheck) Poles(fac, gbw []float64) (polished, full []complex128, ok bool) {
	sm := pc.sm
	y := slices.Clone(sm.y0)
	for j, f := range fac {
		if sm.isCap[j] {
			y[j] *= f
		} else {
			y[j] /= f
		}
	}
	var alpha float64
	beta := make([]float64, sm.nOps)
	if !pc.m.Ideal {
		alpha = math.Pow(10, -pc.m.DCGainDB/20)
		for u := range beta {
			beta[u] = sm.scale / (2 * math.Pi * pc.m.GBWHz * gbw[u])
		}
	}
	den := make([]float64, sm.degDen+1)
	evalExpansion(sm.den, den, y, alpha, beta)
	z := slices.Clone(sm.nomRoots)
	ok = len(z) == len(den)-1 && polyRoots(den, z)
	for i := range z {
		z[i] *= complex(sm.scale, 0)
	}
	full = circuit.Rational{Num: []float64{1}, Den: den, ScaleRadPerSec: sm.scale}.Poles()
	return z, full, ok
}

// ExpansionMatchesFull expands stage st under model m (as a run does,
// always on the fast path when it has at most 16 variables) and compares
// its coefficients with those of the whole nodal system's determinants
// at every vertex (fullVertexExpansion, the computation before the
// source's elimination): it returns the number of nonzero coefficients
// compared and an error naming the first that differs. expanded is false
// for a stage on the generic path.
func ExpansionMatchesFull(st circuit.Stage, m circuit.Model) (terms int, expanded bool, err error) {
	sm, err := newStageModel(st, m, 1, expandAlways, nil)
	if err != nil || sm.generic {
		return 0, false, err
	}
	wantD, wantN, err := fullVertexExpansion(sm)
	if err != nil {
		return 0, true, err
	}
	nParts := len(sm.aug.Parts)
	for _, e := range []struct {
		name string
		got  expansion
		want []float64
	}{{"den", sm.den, wantD}, {"num", sm.num, wantN}} {
		got := make([]float64, len(e.want))
		for _, t := range e.got {
			var mask int
			for _, v := range t.vars {
				mask |= 1 << v
			}
			for _, u := range t.ops {
				mask |= 1 << (nParts + int(u))
			}
			got[mask] = t.coef
		}
		for mask, w := range e.want {
			if got[mask] != w {
				return terms, true, fmt.Errorf("%s: coefficient of mask %#x: %v, the whole system's %v", e.name, mask, got[mask], w)
			}
			if w != 0 {
				terms++
			}
		}
	}
	return terms, true, nil
}

// CachedExpansionsMatch builds the stage models of chain ch as a run
// does, the expansions shared by structure through one cache, and each
// stage again alone without the cache, and compares their expansions
// term by term (the same integers, in the same order). It returns the
// number of stages that took a cached expansion and an error naming the
// first difference.
func CachedExpansionsMatch(ch circuit.Chain) (hits int, err error) {
	cache := expansionCache{}
	expanded := 0
	for k, st := range ch.Stages {
		shared, err := newStageModel(st, ch.Model, MaxTrials, expandAuto, cache)
		if err != nil {
			return 0, err
		}
		alone, err := newStageModel(st, ch.Model, MaxTrials, expandAuto, nil)
		if err != nil {
			return 0, err
		}
		if shared.generic != alone.generic {
			return 0, fmt.Errorf("stage %d: generic %v with the cache, %v alone", k+1, shared.generic, alone.generic)
		}
		if shared.generic {
			continue
		}
		expanded++
		for _, e := range []struct {
			name      string
			got, want expansion
		}{{"num", shared.num, alone.num}, {"den", shared.den, alone.den}} {
			if len(e.got) != len(e.want) {
				return 0, fmt.Errorf("stage %d %s: %d terms with the cache, %d alone", k+1, e.name, len(e.got), len(e.want))
			}
			for i, t := range e.want {
				g := e.got[i]
				if g.coef != t.coef || g.caps != t.caps || !slices.Equal(g.vars, t.vars) || !slices.Equal(g.ops, t.ops) {
					return 0, fmt.Errorf("stage %d %s term %d: %+v with the cache, %+v alone", k+1, e.name, i, g, t)
				}
			}
		}
	}
	return expanded - len(cache), nil
}
