package noise

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
)

// source is one noise source of a stage: its density squared and its
// contributor index.
type source struct {
	psd     float64 // V²/Hz for a voltage, A²/Hz for a current (white part)
	who     int     // contributor index
	flicker bool    // an op-amp source: psd·(1 + corner/f)
}

// stageNoise is one stage's noise sources and their transfers to the
// stage output, rational functions of p = s/tf.ScaleRadPerSec sharing
// one denominator ([circuit.Stage.SourceTransfers]).
type stageNoise struct {
	srcs []source
	tf   circuit.SourceTransfers
	mag  []float64 // |N_i(jx)|², per source
	// corner is the op-amp sources' 1/f corner in Hz, floor the lowest
	// frequency the 1/f term is evaluated at (0: white).
	corner, floor float64
}

// newStageNoise compiles stage k (1-based) of the valid chain ch: every
// resistor's thermal noise (a current of density² fourKT/R across it) and
// every op-amp's voltage noise (in series with its non-inverting input)
// and current noise (from each input to ground). It appends the
// contributors' refs to refs (the index of each contributor is its
// position there).
func newStageNoise(ch circuit.Chain, k int, on OpAmpNoise, fourKT float64, refs *[]string) (*stageNoise, error) {
	st := ch.Stages[k-1]
	sn := &stageNoise{corner: on.CornerHz, floor: on.flickerFrom()}
	var srcs []circuit.Source
	for _, p := range st.Parts {
		if p.Kind != circuit.Resistor {
			continue
		}
		*refs = append(*refs, ch.Ref(k, p.Ref))
		srcs = append(srcs, circuit.Source{To: p.A, From: p.B})
		sn.srcs = append(sn.srcs, source{psd: fourKT / p.Value, who: len(*refs) - 1})
	}
	for q, u := range st.OpAmps {
		*refs = append(*refs, ch.Ref(k, u.Ref))
		who := len(*refs) - 1
		if on.VoltageVPerRtHz > 0 {
			srcs = append(srcs, circuit.Source{OpAmp: q + 1})
			sn.srcs = append(sn.srcs, source{psd: on.VoltageVPerRtHz * on.VoltageVPerRtHz, who: who, flicker: true})
		}
		// Current noise from each input to ground, uncorrelated.
		if ci := on.CurrentAPerRtHz; ci > 0 {
			for _, node := range []string{u.Plus, u.Minus} {
				if node != circuit.Ground {
					srcs = append(srcs, circuit.Source{To: node, From: circuit.Ground})
					sn.srcs = append(sn.srcs, source{psd: ci * ci, who: who, flicker: true})
				}
			}
		}
	}
	tf, err := st.SourceTransfers(ch.Model, srcs)
	if err != nil {
		return nil, fmt.Errorf("stage %d: %w", k, err)
	}
	sn.tf = tf
	sn.mag = make([]float64, len(srcs))
	return sn, nil
}

// accumulate adds each source's density² at the stage output at w rad/s,
// times gain (the later stages' |H|²), to perWho, and returns their sum,
// or an error wrapping [circuit.ErrSingular] where the nodal determinant
// is zero.
func (sn *stageNoise) accumulate(w, gain float64, perWho []float64) (float64, error) {
	d := sn.tf.AtAxis(w/sn.tf.ScaleRadPerSec, sn.mag)
	if d == 0 {
		return 0, fmt.Errorf("%w: the nodal matrix is singular at %v Hz", circuit.ErrSingular, w/(2*math.Pi))
	}
	g := gain / d
	pink := 1.0
	if sn.corner > 0 {
		pink = 1 + sn.corner/math.Max(w/(2*math.Pi), sn.floor)
	}
	var total float64
	for i, s := range sn.srcs {
		v := s.psd * sn.mag[i] * g
		if s.flicker {
			v *= pink
		}
		perWho[s.who] += v
		total += v
	}
	return total, nil
}
