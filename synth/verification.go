package synth

import (
	"context"
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/circuit"
	"github.com/polewright/polewright/synth/noise"
	"github.com/polewright/polewright/synth/response"
	"github.com/polewright/polewright/synth/step"
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
	// DefaultSettlingFrac is the settling band without a converter: ±0.1 %.
	DefaultSettlingFrac = 0.001
	// assumedFullScaleVpp is the output swing assumed for the slew-rate
	// need when the spec names no converter.
	assumedFullScaleVpp = 2.0
)

// Tolerance target for the per-part tolerances a section reports: each
// stage's f0 within 1 % and Q within 2 % on 99 % of boards (our default).
var toleranceTarget = verify.ToleranceTarget{F0Pct: 1, QPct: 2, Yield: 0.99}

// MonteCarloReport is the outcome of a tolerance Monte Carlo.
type MonteCarloReport struct {
	Trials int    `json:"trials"`
	Seed   uint64 `json:"seed"`
	// Yield is the share of trials whose response meets the mask on the
	// Monte Carlo grid.
	Yield float64 `json:"yield"`
	// Envelope is the spread of the magnitude response.
	Envelope EnvelopeReport `json:"envelope"`
	// Stages is the spread of each stage's f0 and Q.
	Stages []StageSpread `json:"stages"`
	// EdgeLoss histograms the loss at the passband and stopband edges.
	EdgeLoss map[string]HistogramReport `json:"edge_loss"`
}

// EnvelopeReport is the magnitude response's spread over the trials, in
// dB (floored at −400 dB).
type EnvelopeReport struct {
	FreqHz []float64 `json:"freq_hz"`
	MinDB  []float64 `json:"min_db"`
	P01DB  []float64 `json:"p01_db"`
	P99DB  []float64 `json:"p99_db"`
	MaxDB  []float64 `json:"max_db"`
}

// StageSpread is the spread of one stage's f0 and Q over the trials.
type StageSpread struct {
	F0MeanHz float64 `json:"f0_mean_hz"`
	F0StdPct float64 `json:"f0_std_pct"`
	QMean    float64 `json:"q_mean"`
	QStdPct  float64 `json:"q_std_pct"`
}

// HistogramReport counts the trials' loss at one frequency in bins:
// Counts[i] lie in [EdgesDB[i], EdgesDB[i+1]).
type HistogramReport struct {
	FreqHz  float64   `json:"freq_hz"`
	EdgesDB []float64 `json:"edges_db"`
	Counts  []int     `json:"counts"`
}

// NoiseReport is the output noise of the chain as built.
type NoiseReport struct {
	FreqHz         []float64 `json:"freq_hz"`
	OutputVPerRtHz []float64 `json:"output_v_per_rthz"`
	// OutputRMSV is the noise integrated over BandHz.
	OutputRMSV float64    `json:"output_rms_v"`
	BandHz     [2]float64 `json:"band_hz"`
	// LSBV and QuantizationRMSV (LSB/√12) are the converter's, nil
	// without one.
	LSBV             *float64 `json:"lsb_v"`
	QuantizationRMSV *float64 `json:"quantization_rms_v"`
	// TempK is the temperature of the thermal noise.
	TempK        float64       `json:"temp_k"`
	Contributors []Contributor `json:"contributors"`
}

// Contributor is one part's share of the integrated output noise power:
// a resistor's thermal noise, or an op-amp's voltage and current noise.
type Contributor struct {
	Ref   string  `json:"ref"`
	Share float64 `json:"share"`
}

// StepReport is the unit-step response, ideal and as built, with the
// figures of the as-built one.
type StepReport struct {
	TimeS    []float64 `json:"time_s"`
	Ideal    []float64 `json:"ideal"`
	Realized []float64 `json:"realized"`
	// OvershootPct, RiseTimeS and SettlingS are nil where undefined (a
	// response with no DC gain has no rise time, say).
	OvershootPct *float64 `json:"overshoot_pct"`
	RiseTimeS    *float64 `json:"rise_time_s"`
	SettlingS    *float64 `json:"settling_s"`
	// SettlingFrac is the settling band as a fraction of the final value:
	// ½ LSB of the converter, or 0.1 %.
	SettlingFrac float64 `json:"settling_frac"`
	// IdealSettlingS is the settling time of the ideal response.
	IdealSettlingS *float64 `json:"ideal_settling_s"`
}

// Sensitivity is a part's normalised sensitivity S = ∂ln y/∂ln x of its
// stage's f0 and Q.
type Sensitivity struct {
	Ref string  `json:"ref"`
	F0  float64 `json:"f0"`
	Q   float64 `json:"q"`
}

// PartTolerance is the tolerance a part needs for the stage's f0 within
// 1 % and Q within 2 % on 99 % of boards, first order.
type PartTolerance struct {
	Ref          string  `json:"ref"`
	TolerancePct float64 `json:"tolerance_pct"`
}

func finitePtr(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// verifyDesign fills the verification fields: sensitivities and part
// tolerances per section, op-amp slew needs, noise, step and, when the
// spec asks, the Monte Carlo.
func (d *Design) verifyDesign(ctx context.Context) error {
	ch := *d.chain
	s := d.Spec
	fullScale := float64(assumedFullScaleVpp)
	if s.Converter != nil {
		fullScale = s.Converter.FullScaleVpp
	}
	edgeHz := slices.Max(d.Mask.DesignPassbandHz)
	for i := range d.Sections {
		sec := &d.Sections[i]
		// Passive sensitivities, with ideal op-amps: the textbook figure, and a
		// fraction of the cost of the op-amp model's higher-degree forms.
		sens, err := verify.Sensitivities(ch.Stages[i], circuit.Model{Ideal: true})
		if err != nil {
			return fmt.Errorf("synth: stage %d sensitivities: %w", i+1, err)
		}
		sec.Sensitivities = make([]Sensitivity, len(sens))
		for k, x := range sens {
			sec.Sensitivities[k] = Sensitivity{Ref: ch.Ref(i+1, x.Ref), F0: x.F0, Q: x.Q}
		}
		target := toleranceTarget
		if sec.Order == 1 {
			target.QPct = 0
		}
		target.Distribution = verify.Distribution(s.Tolerance.Distribution)
		if req, err := verify.RequiredTolerancePct(sens, target); err == nil {
			for _, p := range req {
				sec.RequiredTolerance = append(sec.RequiredTolerance, PartTolerance{Ref: ch.Ref(i+1, p.Ref), TolerancePct: p.TolerancePct})
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
	if err := d.noise(ch); err != nil {
		return err
	}
	if err := d.stepResponse(ch); err != nil {
		return err
	}
	if s.MonteCarlo.Trials > 0 {
		return d.monteCarlo(ctx, ch)
	}
	return nil
}

func (d *Design) noise(ch circuit.Chain) error {
	lo, hi := d.Response.FreqHz[0], d.Response.FreqHz[len(d.Response.FreqHz)-1]
	if c := d.Spec.Converter; c != nil {
		hi = c.SampleRateHz / 2
	}
	if !(hi > lo) {
		lo = hi / 1000
	}
	grid := response.LogSpaceHz(nil, lo, hi, NoisePoints)
	on := noise.OpAmpNoise{VoltageVPerRtHz: d.Spec.OpAmp.NoiseVPerRtHz, CurrentAPerRtHz: d.Spec.OpAmp.NoiseAPerRtHz}
	r, err := noise.Output(ch, on, noise.DefaultTempK, grid, [2]float64{lo, hi})
	if err != nil {
		return fmt.Errorf("synth: noise: %w", err)
	}
	d.Noise = &NoiseReport{
		FreqHz: r.FreqHz, OutputVPerRtHz: r.OutputVPerRtHz, OutputRMSV: r.OutputRMSV, BandHz: r.BandHz,
		TempK: noise.DefaultTempK,
	}
	for _, c := range r.Contributors {
		d.Noise.Contributors = append(d.Noise.Contributors, Contributor{Ref: c.Ref, Share: c.Share})
	}
	if c := d.Spec.Converter; c != nil {
		lsb, q := noise.LSBVolts(c.Bits, c.FullScaleVpp), noise.QuantizationRMSV(c.Bits, c.FullScaleVpp)
		d.Noise.LSBV, d.Noise.QuantizationRMSV = &lsb, &q
	}
	return nil
}

func (d *Design) stepResponse(ch circuit.Chain) error {
	frac := DefaultSettlingFrac
	if c := d.Spec.Converter; c != nil {
		frac = step.HalfLSBFrac(c.Bits)
	}
	var ideal, built []step.Stage
	for _, sec := range d.Cascade() {
		ideal = append(ideal, step.FromSection(sec))
	}
	tfs, err := ch.TransferFunctions()
	if err != nil {
		return fmt.Errorf("synth: step: %w", err)
	}
	for _, r := range tfs {
		built = append(built, step.FromRational(r))
	}
	t := step.SettlingGrid(built, StepPoints, frac)
	yb, fig, err := step.Measure(built, t, frac)
	if err != nil {
		return fmt.Errorf("synth: step: %w", err)
	}
	yi, err := step.Response(ideal, t)
	if err != nil {
		return fmt.Errorf("synth: step: %w", err)
	}
	figIdeal := step.Analyze(t, yi, frac) // interpolated between samples: enough for a comparison figure
	d.Step = &StepReport{
		TimeS: t, Ideal: yi, Realized: yb, SettlingFrac: frac,
		OvershootPct: finitePtr(fig.OvershootPct), RiseTimeS: finitePtr(fig.RiseTimeS),
		SettlingS: finitePtr(fig.SettlingS), IdealSettlingS: finitePtr(figIdeal.SettlingS),
	}
	return nil
}

func (d *Design) monteCarlo(ctx context.Context, ch circuit.Chain) error {
	s := d.Spec
	lo, hi := d.Response.FreqHz[0], d.Response.FreqHz[len(d.Response.FreqHz)-1]
	grid := response.LogSpaceHz(nil, lo, hi, MonteCarloPoints)
	grid = append(grid, s.PassbandHz...)
	grid = append(grid, s.StopbandHz...)
	slices.Sort(grid)
	grid = slices.Compact(grid)
	inPass, inStop := d.maskRegions(grid)
	ref := 20 * math.Log10(d.Gain)
	amax, amin := s.PassbandRippleDB+MaskToleranceDB, s.StopbandAttenDB-MaskToleranceDB
	meets := func(db []float64) bool {
		for i, v := range db {
			loss := ref - v
			if inPass[i] && !(loss <= amax) || inStop[i] && !(loss >= amin) {
				return false
			}
		}
		return true
	}
	var edges []verify.Edge
	for i, f := range s.PassbandHz {
		edges = append(edges, verify.Edge{Name: edgeName("passband_edge", i, len(s.PassbandHz)), FreqHz: f})
	}
	for i, f := range s.StopbandHz {
		edges = append(edges, verify.Edge{Name: edgeName("stopband_edge", i, len(s.StopbandHz)), FreqHz: f})
	}
	tol := verify.Tolerance{
		ResistorPct: s.Tolerance.ResistorPct, CapacitorPct: s.Tolerance.CapacitorPct,
		Distribution: verify.Distribution(s.Tolerance.Distribution), GBWSpreadPct: s.Tolerance.GBWPct,
	}
	opt := verify.MonteCarloOptions{
		Trials: s.MonteCarlo.Trials, Seed: s.MonteCarlo.Seed, FreqHz: grid, Edges: edges,
	}
	if report, ok := ctx.Value(progressKey{}).(func(done, total int)); ok {
		total := s.MonteCarlo.Trials
		opt.Progress = func(done int) { report(done, total) }
	}
	r, err := verify.MonteCarlo(ctx, ch, tol, opt, meets)
	if err != nil {
		if ctx.Err() != nil {
			return ctx.Err()
		}
		return fmt.Errorf("synth: Monte Carlo: %w", err)
	}
	mc := &MonteCarloReport{
		Trials: r.Trials, Seed: r.Seed, Yield: r.Yield,
		Envelope: EnvelopeReport{FreqHz: r.Envelope.FreqHz, MinDB: floorDB(r.Envelope.MinDB),
			P01DB: floorDB(r.Envelope.P01DB), P99DB: floorDB(r.Envelope.P99DB), MaxDB: floorDB(r.Envelope.MaxDB)},
		EdgeLoss: map[string]HistogramReport{},
	}
	for _, st := range r.Stages {
		mc.Stages = append(mc.Stages, StageSpread{F0MeanHz: st.F0MeanHz, F0StdPct: st.F0StdPct, QMean: st.QMean, QStdPct: st.QStdPct})
	}
	for name, h := range r.EdgeLoss {
		mc.EdgeLoss[name] = HistogramReport{FreqHz: h.FreqHz, EdgesDB: h.EdgesDB, Counts: h.Counts}
	}
	d.MonteCarlo = mc
	return nil
}

func edgeName(base string, i, n int) string {
	if n == 1 {
		return base
	}
	return fmt.Sprintf("%s_%s", base, []string{"lo", "hi"}[i])
}

// maskRegions marks the grid points that lie in the spec's passband and
// stopband.
func (d *Design) maskRegions(grid []float64) (pass, stop []bool) {
	s := d.Spec
	p, st := s.PassbandHz, s.StopbandHz
	pass, stop = make([]bool, len(grid)), make([]bool, len(grid))
	for i, f := range grid {
		switch s.Response {
		case Lowpass:
			pass[i] = f <= p[0]
			stop[i] = s.HasStopband() && f >= st[0]
		case Highpass:
			pass[i] = f >= p[0]
			stop[i] = s.HasStopband() && f <= st[0]
		case Bandpass:
			pass[i] = f >= p[0] && f <= p[1]
			stop[i] = s.HasStopband() && (f <= st[0] || f >= st[1])
		case Bandstop:
			pass[i] = f <= p[0] || f >= p[1]
			stop[i] = s.HasStopband() && f >= st[0] && f <= st[1]
		}
	}
	return pass, stop
}

// progressKey is the context key of a Monte Carlo progress callback.
type progressKey struct{}

// WithProgress returns a context under which [Synthesize] reports the
// progress of the Monte Carlo the spec asks for: report(done, total) is
// called after each block of trials, never concurrently, with increasing
// done. A run without trials never calls it.
func WithProgress(ctx context.Context, report func(done, total int)) context.Context {
	return context.WithValue(ctx, progressKey{}, report)
}
