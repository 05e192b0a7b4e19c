package synth

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"strings"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/section"
	"github.com/polewright/polewright/synth/topology"
)

// notchSigmas is how many standard deviations of the first-order spread
// of a one-op-amp notch's gain at its zeros the chain must absorb (common
// practice: three σ for a tolerance stack).
const notchSigmas = 3

// keepNotchesInMask re-realises, as two-integrator-notch stages (three
// op-amps) or, where those do not fit, state-variable stages (four), the
// one-amp-notch stages that auto chose whose part tolerances would spoil
// the mask: at the section's zero frequency, when it lies in a stop or
// alias band, notchSigmas times the first-order spread of the stage's
// gain (every part uniform within the spec's tolerance; [stageSpread])
// times the ideal gain of every other stage there must stay the band's
// attenuation below the passband gain (gain_db). The one-op-amp form's
// zeros are on the jω axis only while its numerator's s term cancels, so
// a part error leaves a residual there, which the two-integrator notch
// (no feedforward path with an s term) and the state-variable stage (a sum
// with no bandpass term) do not. It changes results in place and
// says why in the new stage's reason.
func (d *Design) keepNotchesInMask(ordered []section.Section, results []topology.Result, opt topology.Options) {
	s := d.Spec
	mask := s.acceptMask()
	ideal := circuit.Model{Ideal: true}
	gp := math.Pow(10, s.GainDB/20)
	for i, r := range results {
		if r.Stage.Topology != topology.OneAmpNotch {
			continue
		}
		wz, ok := ordered[i].ZeroOmegaRadPerSec()
		if !ok {
			continue
		}
		fz := wz / (2 * math.Pi)
		need, what := 0.0, ""
		for _, b := range mask.Stop {
			if fz >= b.LoHz && fz <= b.HiHz && mask.AttenDB > need {
				need, what = mask.AttenDB, "stopband"
			}
		}
		for _, b := range mask.Alias {
			if fz >= b.LoHz && fz <= b.HiHz && mask.AliasAttenDB > need {
				need, what = mask.AliasAttenDB, "alias band"
			}
		}
		if need == 0 {
			continue
		}
		sigma, err := stageSpread(r.Stage, complex(0, wz), s.Tolerance.ResistorPct, s.Tolerance.CapacitorPct)
		if err != nil {
			continue
		}
		others := 1.0
		for j, o := range results {
			if j == i {
				continue
			}
			h, err := o.Stage.SolveAt(ideal, complex(0, wz))
			if err != nil {
				others = math.NaN()
				break
			}
			others *= cmplx.Abs(h)
		}
		level := 20 * math.Log10(notchSigmas*sigma*others/gp)
		if !(level > -need) { // within the mask (or not computable: NaN keeps it)
			continue
		}
		tin, err := topology.Realize(ordered[i], topology.TwoIntegratorNotch, opt)
		if err == nil {
			tin.Reason = fmt.Sprintf("one-amp-notch would leave about %.1f dB (3σ, first order, with %g %% resistors and %g %% capacitors) at its zeros (%s Hz, %s), where the mask needs −%g dB; two-integrator-notch (three op-amps, the fewest left) keeps its zeros on the jω axis: %s",
				level, s.Tolerance.ResistorPct, s.Tolerance.CapacitorPct, fmtHzPlain(fz), what, need, strings.TrimPrefix(tin.Reason, topology.TwoIntegratorNotch+" as asked: "))
			results[i] = tin
			continue
		}
		tinErr := err
		sv, err := topology.Realize(ordered[i], topology.StateVariable, opt)
		if err != nil {
			results[i].Reason += fmt.Sprintf("; with %g %% resistors and %g %% capacitors it would leave about %.1f dB (3σ, first order) at its zeros (%s Hz, %s), where the mask needs −%g dB, but neither the two-integrator notch (%v) nor the state-variable stage (%v) fits",
				s.Tolerance.ResistorPct, s.Tolerance.CapacitorPct, level, fmtHzPlain(fz), what, need, tinErr, err)
			continue
		}
		sv.Reason = fmt.Sprintf("one-amp-notch would leave about %.1f dB (3σ, first order, with %g %% resistors and %g %% capacitors) at its zeros (%s Hz, %s), where the mask needs −%g dB, and the two-integrator notch does not fit (%v); state-variable (four op-amps) keeps its zeros on the jω axis: %s",
			level, s.Tolerance.ResistorPct, s.Tolerance.CapacitorPct, fmtHzPlain(fz), what, need, tinErr, strings.TrimPrefix(sv.Reason, topology.StateVariable+" as asked: "))
		results[i] = sv
	}
}

// stageSpread returns the first-order rms of |H(s)| of a stage over its
// parts, each uniform within its tolerance (rPct for resistors, cPct for
// capacitors; σ = tol/√3), by relative steps of 1e-6 on the nodal
// analysis with ideal op-amps.
func stageSpread(st circuit.Stage, s complex128, rPct, cPct float64) (float64, error) {
	ideal := circuit.Model{Ideal: true}
	h0, err := st.SolveAt(ideal, s)
	if err != nil {
		return 0, err
	}
	const step = 1e-6
	var s2 float64
	p := st
	p.Parts = slices.Clone(st.Parts)
	for j, part := range st.Parts {
		tol := rPct
		if part.Kind == circuit.Capacitor {
			tol = cPct
		}
		if tol == 0 {
			continue
		}
		p.Parts[j].Value = part.Value * (1 + step)
		h, err := p.SolveAt(ideal, s)
		p.Parts[j].Value = part.Value
		if err != nil {
			return 0, err
		}
		s2 += math.Pow(cmplx.Abs(h-h0)/step*tol/100/math.Sqrt(3), 2)
	}
	return math.Sqrt(s2), nil
}

// fmtHzPlain formats a frequency with three significant figures.
func fmtHzPlain(f float64) string { return fmt.Sprintf("%.3g", f) }
