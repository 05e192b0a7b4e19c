package synth

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"strings"

	"github.com/polewright/polewright/standards/si"
	"github.com/polewright/polewright/synth/circuit"
)

// MaxCommonModeTrials bounds the trials of the common-mode figure (the
// spec's Monte Carlo trials, at most this many): its cost is four nodal
// solves of the first stage per trial and frequency.
const MaxCommonModeTrials = 2000

// CommonModeLimitDB is the least common-mode rejection the
// common-mode check asks of the first stage at every frequency it is
// taken at, in every trial: 40 dB (our own figure: a common-mode
// disturbance, hum on the source's ground say, reaches the differential
// path at most a hundredth as strong as a differential signal would).
// Halves of 1 % resistors come near it at DC; 5 % capacitors take the
// rejection well below it near the passband edge, which is what the
// warning is for.
const CommonModeLimitDB = 40

// CommonModeReport is the common-mode rejection of a differential
// design's first stage over Monte Carlo trials in which every part of
// both halves varies on its own: the differential gain over the
// common-mode to differential conversion, |H_dm|/|H_cm→dm|, in dB. The
// first stage is the one a common-mode input reaches: it converts the
// single-ended source, whose common mode is half the signal, and later
// stages see only FDA outputs, whose common mode the FDA holds at the
// reference (the model's common-mode loop is ideal, so the FDA's own
// rejection is not in the figure).
type CommonModeReport struct {
	// Trials is the number of trials: the spec's Monte Carlo trials, at
	// most MaxCommonModeTrials.
	Trials int `json:"trials"`
	// Stage is the stage (1-based) whose halves the figure is of: the
	// first, or, in a design built single-ended and converted after its
	// last section, the last stage's conversion (its FDA and their
	// resistors), which takes the last single-ended output.
	Stage int `json:"stage"`
	// Points holds the rejection at DC (lowpass and bandstop responses)
	// and at each passband edge.
	Points []CommonModePoint `json:"points"`
}

// CommonModePoint is the rejection at one frequency.
type CommonModePoint struct {
	FreqHz float64 `json:"freq_hz"`
	// WorstDB is the least rejection over the trials, MedianDB the
	// median.
	WorstDB  float64 `json:"worst_db"`
	MedianDB float64 `json:"median_db"`
}

// commonMode computes d.MonteCarlo.CommonMode for a differential chain:
// the spec's seed and tolerances, the first stage's parts drawn on their
// own (uniform within ± the tolerance, or gaussian with the tolerance as
// 3σ), the differential and common-mode drives solved directly at each
// frequency. Nothing when the parts are exact (the rejection is then
// infinite).
func (d *Design) commonMode(ch circuit.Chain) error {
	if !ch.Differential() || d.MonteCarlo == nil {
		return nil
	}
	st, stage := ch.Stages[0], 1
	if !st.Differential() {
		// Built single-ended and converted after the last section: the
		// conversion's halves are what a common mode reaches.
		stage = len(ch.Stages)
		var ok bool
		if _, st, ok = ch.Stages[stage-1].SplitConversion(); !ok {
			return fmt.Errorf("synth: common mode: stage %d has no conversion", stage)
		}
	}
	if !slices.ContainsFunc(st.Parts, func(p circuit.Part) bool { return p.TolerancePct > 0 }) {
		return nil
	}
	s := d.Spec
	freqs := []float64{}
	if s.Response == Lowpass || s.Response == Bandstop {
		freqs = append(freqs, 0)
	}
	freqs = append(freqs, s.PassbandHz...)
	trials := min(s.MonteCarlo.Trials, MaxCommonModeTrials)
	rng := rand.New(rand.NewPCG(s.MonteCarlo.Seed, 0xc0117a5e))
	gauss := s.Tolerance.Distribution == "gaussian"
	per := make([][]float64, len(freqs))
	trial := st
	trial.Parts = slices.Clone(st.Parts)
	for range trials {
		for j, p := range st.Parts {
			u := 2*rng.Float64() - 1
			if gauss {
				u = rng.NormFloat64() / 3
			}
			trial.Parts[j].Value = p.Value * (1 + u*p.TolerancePct/100)
		}
		dm, cm, err := trial.InputModes()
		if err != nil {
			return fmt.Errorf("synth: common mode: %w", err)
		}
		for i, f := range freqs {
			sj := complex(0, 2*math.Pi*f)
			hd, err := dm.SolveAt(ch.Model, sj)
			if err != nil {
				return fmt.Errorf("synth: common mode: %w", err)
			}
			hc, err := cm.SolveAt(ch.Model, sj)
			if err != nil {
				return fmt.Errorf("synth: common mode: %w", err)
			}
			// 300 dB stands for an exact cancellation.
			r := 300.0
			if a := cmplx.Abs(hc); a > 0 {
				r = math.Min(r, 20*math.Log10(cmplx.Abs(hd)/a))
			}
			per[i] = append(per[i], r)
		}
	}
	rep := &CommonModeReport{Trials: trials, Stage: stage}
	for i, f := range freqs {
		slices.Sort(per[i])
		rep.Points = append(rep.Points, CommonModePoint{FreqHz: f, WorstDB: per[i][0], MedianDB: per[i][len(per[i])/2]})
	}
	d.MonteCarlo.CommonMode = rep
	return nil
}

// commonModeCheck judges the worst common-mode rejection of a
// differential design's first stage against CommonModeLimitDB; present
// with the figure.
func (d *Design) commonModeCheck() (Check, bool) {
	if d.MonteCarlo == nil || d.MonteCarlo.CommonMode == nil {
		return Check{}, false
	}
	rep := d.MonteCarlo.CommonMode
	worst := rep.Points[0]
	for _, p := range rep.Points[1:] {
		if p.WorstDB < worst.WorstDB {
			worst = p
		}
	}
	at := "DC"
	if worst.FreqHz > 0 {
		at = si.Format(worst.FreqHz, "Hz", 4)
	}
	ok := worst.WorstDB >= CommonModeLimitDB
	halves, cure := "the first stage's matched halves", "tighter resistors and capacitors in that stage cure it"
	if rep.Stage > 1 {
		halves, cure = fmt.Sprintf("the matched halves of stage %d's conversion", rep.Stage), "tighter resistors there cure it"
	}
	text := fmt.Sprintf("%s reject a common-mode input by at least %.3g dB (median %.3g dB) at %s over %d trials of independent part spread, at least %d dB asked.",
		upperFirst(halves), worst.WorstDB, worst.MedianDB, at, rep.Trials, CommonModeLimitDB)
	if !ok {
		text = fmt.Sprintf("Mismatch of %s lets a common-mode input through: only %.3g dB of rejection at worst (median %.3g dB) at %s over %d trials, under %d dB; %s.",
			strings.Replace(halves, "matched ", "", 1), worst.WorstDB, worst.MedianDB, at, rep.Trials, CommonModeLimitDB, cure)
	}
	return newCheck(CheckCommonMode, ok, SeverityWarning, worst.WorstDB, CommonModeLimitDB, "dB", max(rep.Stage, 1), text), true
}

// upperFirst returns s with its first byte upper-cased (ASCII).
func upperFirst(s string) string {
	if s == "" || s[0] < 'a' || s[0] > 'z' {
		return s
	}
	return string(s[0]-'a'+'A') + s[1:]
}
