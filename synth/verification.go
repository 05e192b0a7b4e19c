package synth

import (
	"context"
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/noise"
	"github.com/polewright/polewright/synth/verify"
)

// Verification grids and targets.
const (
	// MonteCarloPoints is the number of log-spaced frequencies each Monte
	// Carlo trial is analysed and checked against the mask on (the band
	// edges are added).
	MonteCarloPoints = 200
	// NoisePoints is the number of log-spaced frequencies of the noise
	// spectrum.
	NoisePoints = 200
	// StepPoints is the number of points of the step responses.
	StepPoints = 500
	// stepLoadingFrac: the step takes the stages' loading of each other
	// where it may move the unit step by more than this (a rule of this
	// program, against circuit.Loading.StepShift's estimate).
	stepLoadingFrac = 1e-4
	// DefaultSettlingFrac is the settling band without a converter: ±0.1 %.
	DefaultSettlingFrac = 0.001
	// assumedFullScaleVpp is the output swing assumed for the slew-rate
	// need when the spec names no converter.
	assumedFullScaleVpp = 2.0
)

// Tolerance target for the per-part tolerances a section reports: each
// stage's f0 within 1 % and Q within 2 % on 99 % of boards (our default).
var toleranceTarget = verify.ToleranceTarget{F0Pct: 1, QPct: 2, Yield: 0.99}

func finitePtr(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// verifyDesign fills the verification fields: sensitivities and part
// tolerances per section, op-amp slew needs, noise, step and, when the
// spec asks, the Monte Carlo.
func (d *Design) verifyDesign(ctx context.Context, level Level) error {
	perPart := level >= Verified
	ch := *d.chain
	s := d.Spec
	fullScale := float64(assumedFullScaleVpp)
	if s.Converter != nil {
		fullScale = s.Converter.FullScaleVpp
	}
	edgeHz := slices.Max(d.Mask.DesignPassbandHz)
	for i := range d.Sections {
		sec := &d.Sections[i]
		if perPart {
			if err := d.partFigures(ch, i); err != nil {
				return err
			}
		}
		// A full-scale sine at the passband edge at this stage's output,
		// whose level is its node peak relative to the filter's output.
		vpp := fullScale * math.Pow(10, sec.PeakGainDB/20)
		slew := noise.SlewVPerS(edgeHz, vpp)
		sec.OpAmpNeeds.SlewVPerS = slew
		if slew > s.OpAmp.SlewVPerS {
			sec.Warnings = append(sec.Warnings, fmt.Sprintf(
				"a %.3g Vpp sine at %.4g Hz needs %.3g V/s at this stage's output, more than the op-amp's %.3g V/s", vpp, edgeHz, slew, s.OpAmp.SlewVPerS))
		}
	}
	if perPart {
		if err := d.failAt(ch); err != nil {
			return err
		}
	}
	if err := d.noise(ch); err != nil {
		return err
	}
	tfs := d.chainTFs
	if tfs == nil {
		var err error
		if tfs, err = ch.TransferFunctions(); err != nil {
			return fmt.Errorf("synth: step: %w", err)
		}
	}
	// The step sees each stage's output loaded by the next stage's input
	// where the loading can move it by more than stepLoadingFrac of the
	// step (circuit.Loading.StepShift): each loaded stage's rational has
	// the next stage's input poles too, which cost a step response about
	// a sixth more.
	stepTFs := tfs
	if load, err := ch.Loading(); err == nil && !load.Empty() {
		lo, hi := math.Inf(1), ch.Model.GBWHz
		for _, r := range tfs {
			f := r.ScaleRadPerSec / (2 * math.Pi)
			lo, hi = math.Min(lo, f), math.Max(hi, f)
		}
		if load.StepShift(tfs, lo*1e-3, hi*1e3, 8) > stepLoadingFrac {
			stepTFs = load.FirstOrder(tfs)
			// What first order leaves out, for the step-model check.
			d.stepLoadResidual = load.FirstOrderShift(tfs, stepTFs, lo*1e-3, hi*1e3, 8)
		}
	}
	d.stepResponse(stepTFs)
	if perPart {
		if err := d.board(ch, tfs, stepTFs); err != nil {
			return err
		}
	}
	if s.MonteCarlo.Trials > 0 {
		return d.monteCarlo(ctx, ch)
	}
	return nil
}
