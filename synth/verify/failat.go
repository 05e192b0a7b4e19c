package verify

import (
	"fmt"
	"math"

	"github.com/polewright/polewright/synth/circuit"
)

// FailAtMaxPct is the largest change [FailAt] looks at: a part changed by
// more than this (down: to less than 1 % of its value) is reported as
// never failing.
const FailAtMaxPct = 100

// failAtDownMaxPct is the deepest cut of a part's value FailAt tries: a
// part cannot go to zero.
const failAtDownMaxPct = 99

// failAtRelTol is the relative accuracy of each figure FailAt reports
// (0.5 %: a part's tolerance is chosen from series a factor 2 apart).
const failAtRelTol = 5e-3

// failAtFloorPct is the smallest change FailAt resolves: a board that
// fails at 1e-4 % of a part is reported as failing there.
const failAtFloorPct = 1e-4

// PartLimit is how far one part may move, alone, before the board fails:
// DownPct and UpPct are magnitudes in percent, NaN when the board still
// passes at the limit of the search (FailAtMaxPct up, 99 % down).
type PartLimit struct {
	DownPct, UpPct float64
}

// FailAt returns, for every part of every stage of ch (in stage and part
// order), the smallest change of that part alone, every other part
// nominal, at which judge stops passing the board; margin returns how far
// a board is from failing (≥ 0 passes, in any unit that changes sign at
// the verdict, e.g. the acceptance rule's smallest margin in dB) given
// its response on freqHz and at any frequency, as for [Judge].
//
// The search steps the change up by factors of 10 from 0.01 % until the
// board fails, then finds the crossing by regula falsi (Illinois) on the
// margin in the logarithm of the change, to 0.5 %. A margin that
// dips below zero and recovers between two steps of the ladder is missed:
// the figure is the first crossing the ladder brackets. If the nominal
// board fails, every figure is 0.
//
// A board with one part changed is the nominal chain with one stage
// replaced: the stage's determinant and cofactor are affine in the part's
// admittance ([circuit.Stage.Slopes], every part's slopes from one LU per
// interpolation point), so a step of the search costs one stage's
// response on the grid.
func FailAt(ch circuit.Chain, freqHz []float64, margin func(db []float64, eval func(fHz float64) float64) float64) ([][]PartLimit, error) {
	if err := ch.Validate(); err != nil {
		return nil, err
	}
	tfs, err := ch.TransferFunctions()
	if err != nil {
		return nil, err
	}
	// The nominal inter-stage loading (circuit.Loading) rides on every
	// board: a part's change moves it by far less than its own size.
	load, err := ch.Loading()
	if err != nil {
		return nil, err
	}
	loadDB := make([]float64, len(freqHz))
	load.ApplyDB(loadDB, freqHz)
	slopes := make([]circuit.PartSlopes, len(ch.Stages))
	for k, st := range ch.Stages {
		if slopes[k], err = st.Slopes(ch.Model, tfs[k].ScaleRadPerSec); err != nil {
			return nil, fmt.Errorf("stage %d (%s): %w", k+1, st.Topology, err)
		}
	}
	// Each stage's nominal response on the grid, and the chain's.
	stageDB := make([][]float64, len(tfs))
	total := append([]float64(nil), loadDB...)
	for k, r := range tfs {
		stageDB[k] = make([]float64, len(freqHz))
		for i, f := range freqHz {
			stageDB[k][i] = dbOfComplex(r.AtHz(f))
			total[i] += stageDB[k][i]
		}
	}
	db := make([]float64, len(freqHz))
	// others is the response of every stage but the one being changed
	// (summed afresh per stage: a stage's −Inf dB at an exact zero, say 0 Hz
	// for a highpass, cannot be subtracted from the total).
	others := make([]float64, len(freqHz))
	var num, den []float64
	// board returns the margin of the board with part j of stage k's
	// admittance scaled by a (k < 0: the nominal board).
	board := func(k, j int, a float64) float64 {
		if k < 0 {
			copy(db, total)
			return finiteMargin(margin(db, func(f float64) float64 { return dbOfComplex(tfs.AtHz(f)) + load.DBAt(f) }))
		}
		num, den = slopes[k].At(j, a, num, den)
		r := circuit.Rational{Num: num, Den: den, ScaleRadPerSec: slopes[k].ScaleRadPerSec}
		for i, f := range freqHz {
			db[i] = others[i] + dbOfComplex(r.AtHz(f))
		}
		return finiteMargin(margin(db, func(f float64) float64 {
			v := dbOfComplex(r.AtHz(f)) + load.DBAt(f)
			for i, t := range tfs {
				if i != k {
					v += dbOfComplex(t.AtHz(f))
				}
			}
			return v
		}))
	}
	out := make([][]PartLimit, len(ch.Stages))
	nominal := board(-1, 0, 1)
	for k, st := range ch.Stages {
		out[k] = make([]PartLimit, len(st.Parts))
		if nominal < 0 {
			continue // the nominal board fails: every figure is 0
		}
		for i := range others {
			others[i] = loadDB[i]
			for m := range stageDB {
				if m != k {
					others[i] += stageDB[m][i]
				}
			}
		}
		for j, p := range st.Parts {
			for _, dir := range []float64{-1, 1} {
				limit := float64(FailAtMaxPct)
				if dir < 0 {
					limit = failAtDownMaxPct
				}
				pct := crossing(func(pct float64) float64 {
					f := 1 + dir*pct/100
					if p.Kind == circuit.Resistor {
						return board(k, j, 1/f)
					}
					return board(k, j, f)
				}, nominal, limit)
				if dir < 0 {
					out[k][j].DownPct = pct
				} else {
					out[k][j].UpPct = pct
				}
			}
		}
	}
	return out, nil
}

// dbOfComplex returns 20·log10|h|.
func dbOfComplex(h complex128) float64 {
	re, im := real(h), imag(h)
	if m := re*re + im*im; m > 1e-300 && m < 1e300 {
		return dbPerLn * math.Log(m) // one logarithm, no hypot
	}
	return 20 * math.Log10(math.Hypot(re, im))
}

func finiteMargin(m float64) float64 {
	if math.IsNaN(m) {
		return math.Inf(-1)
	}
	return m
}

// crossing finds the smallest change (in %) up to limit at which m goes
// below zero, m(0) = m0 ≥ 0; NaN when m stays ≥ 0 up to limit.
func crossing(m func(pct float64) float64, m0, limit float64) float64 {
	lo, mlo := 0.0, m0
	hi, mhi := 0.0, 0.0
	found := false
	for p := 0.01; ; p *= 10 {
		p = math.Min(p, limit)
		v := m(p)
		if v < 0 {
			hi, mhi, found = p, v, true
			break
		}
		lo, mlo = p, v
		if p >= limit {
			break
		}
	}
	if !found {
		return math.NaN()
	}
	if lo == 0 {
		lo = hi / 10 // m(0) passes; the ladder's first rung failed
		v := m(lo)
		for v < 0 && lo > failAtFloorPct {
			hi, mhi = lo, v
			lo /= 10
			v = m(lo)
		}
		mlo = v
		if v < 0 {
			return 0
		}
	}
	// Illinois regula falsi in x = ln(pct): mlo ≥ 0 > mhi.
	xa, xb := math.Log(lo), math.Log(hi)
	fa, fb := mlo, mhi
	side := 0
	for range 60 {
		if xb-xa <= failAtRelTol {
			break
		}
		x := xb - fb*(xb-xa)/(fb-fa)
		if !(x > xa && x < xb) || math.IsInf(fa, 0) || math.IsInf(fb, 0) {
			x = 0.5 * (xa + xb)
		}
		v := m(math.Exp(x))
		if v < 0 {
			xb, fb = x, v
			if side == -1 {
				fa /= 2
			}
			side = -1
		} else {
			xa, fa = x, v
			if side == 1 {
				fb /= 2
			}
			side = 1
		}
	}
	return math.Exp(xb)
}
