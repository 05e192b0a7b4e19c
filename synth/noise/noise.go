package noise

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/circuit"
)

// Physical constant and defaults.
const (
	// BoltzmannJPerK is the Boltzmann constant k, exact in the SI since
	// 2019: 1.380649e-23 J/K.
	BoltzmannJPerK = 1.380649e-23
	// DefaultTempK is the temperature [Output] and [ThermalVPerRtHz] use
	// when given 0 K: 300 K.
	DefaultTempK = 300
	// DefaultVoltageVPerRtHz and DefaultCurrentAPerRtHz are the op-amp
	// noise densities of the spec's defaults (INTERFACE.md): 10 nV/√Hz
	// and 1 pA/√Hz.
	DefaultVoltageVPerRtHz = 10e-9
	DefaultCurrentAPerRtHz = 1e-12
	// MaxPoints is the largest number of frequencies [Output] accepts.
	MaxPoints = 100000
)

// ErrInvalid is wrapped by every error [Output] returns for bad input; an
// invalid chain's error also wraps [circuit.ErrInvalid].
var ErrInvalid = errors.New("noise: invalid input")

func invalidf(format string, args ...any) error {
	return fmt.Errorf("%w: %s", ErrInvalid, fmt.Sprintf(format, args...))
}

// OpAmpNoise holds an op-amp's white input noise densities. Both are used
// as given: zero is a noiseless source. [DefaultOpAmpNoise] returns the
// spec's defaults.
type OpAmpNoise struct {
	// VoltageVPerRtHz is the input voltage noise density en in V/√Hz, a
	// source in series with the non-inverting input.
	VoltageVPerRtHz float64
	// CurrentAPerRtHz is the input current noise density in in A/√Hz, one
	// uncorrelated source from each input to ground.
	CurrentAPerRtHz float64
	// CornerHz is the 1/f corner fc of both densities: each density
	// squared is white·(1 + fc/f). 0: white.
	CornerHz float64
	// FlickerFromHz is where the integrals start when CornerHz > 0 (the
	// 1/f power from 0 Hz is unbounded): [DefaultFlickerFromHz] when 0.
	// Bands that start below it start at it.
	FlickerFromHz float64
}

// DefaultFlickerFromHz is the lowest frequency of the noise integrals
// with 1/f noise: 0.01 Hz, the inverse of a 100 s observation (common
// practice takes the record length as the 1/f integral's lower limit; the
// choice is ours, and each decade below it would add en²·fc·ln 10).
const DefaultFlickerFromHz = 0.01

// flickerFrom returns the integrals' lower limit: 0 without 1/f noise.
func (on OpAmpNoise) flickerFrom() float64 {
	switch {
	case on.CornerHz == 0:
		return 0
	case on.FlickerFromHz > 0:
		return on.FlickerFromHz
	default:
		return DefaultFlickerFromHz
	}
}

// DefaultOpAmpNoise returns the spec's default densities,
// [DefaultVoltageVPerRtHz] and [DefaultCurrentAPerRtHz].
func DefaultOpAmpNoise() OpAmpNoise {
	return OpAmpNoise{VoltageVPerRtHz: DefaultVoltageVPerRtHz, CurrentAPerRtHz: DefaultCurrentAPerRtHz}
}

// Contributor is one part's share of the integrated output noise power.
type Contributor struct {
	// Ref is the chain-wide designator ([circuit.Chain.Ref]): a resistor
	// (its thermal noise) or an op-amp (its voltage and current noise
	// together).
	Ref string
	// Share is the part's fraction of the output noise power integrated
	// over the band, in [0, 1]; the shares sum to 1.
	Share float64
}

// Result is the output noise of a chain.
type Result struct {
	// FreqHz are the caller's frequencies and OutputVPerRtHz the output
	// noise density at each, in V/√Hz.
	FreqHz, OutputVPerRtHz []float64
	// OutputRMSV is the output noise integrated over BandHz, in V rms.
	OutputRMSV float64
	// BandHz is the integration band [lo, hi] in Hz.
	BandHz [2]float64
	// Contributors are every resistor and op-amp of the chain, largest
	// share first (ties in chain order).
	Contributors []Contributor
	// Sampled is the noise a converter's output words carry
	// ([OutputSampled]); nil from [Output].
	Sampled *Sampled
}

// ThermalVPerRtHz returns the open-circuit thermal (Johnson–Nyquist)
// noise density of a resistance, √(4kTR) in V/√Hz, at tempK kelvin (0
// selects [DefaultTempK]). It returns NaN for a negative or non-finite
// resistance or temperature.
func ThermalVPerRtHz(rOhm, tempK float64) float64 {
	if tempK == 0 {
		tempK = DefaultTempK
	}
	if !(rOhm >= 0) || math.IsInf(rOhm, 1) || !(tempK > 0) || math.IsInf(tempK, 1) {
		return math.NaN()
	}
	return math.Sqrt(4 * BoltzmannJPerK * tempK * rOhm)
}

// Output computes the output noise of the chain as built: the thermal
// noise 4kTR of every resistor (k = [BoltzmannJPerK], T = tempK, 0
// selecting [DefaultTempK]), and every op-amp's voltage noise (a source in
// series with its non-inverting input) and current noise (one source from
// each input to ground), all uncorrelated and white, with the chain's
// op-amp model (single pole or ideal, see package circuit) and noiseless
// capacitors.
//
// Each stage is analysed once, by the adjoint method: with the stage's
// nodal matrix A(s) (the layout of package circuit: node voltages, the
// input source's current, the op-amps' output currents), the solution y
// of Aᵀ·y = e_out gives the transfer of every source to the stage output
// at once — y_b − y_a for a current source from node a to node b, y_k for
// a voltage source in op-amp k's equation — and det A·y are polynomials
// in s, interpolated on circles into one rational function per source
// over the nodal determinant ([circuit.Stage.SourceTransfers]); a density
// is then Horner evaluations. The stage's input is driven by an ideal
// source (the previous op-amp's output), a short for noise. Each stage's
// output noise power then passes through the later stages' responses
// |H(jω)|² ([circuit.Chain.TransferFunctions]), which do not load it, and
// the powers add.
//
// OutputVPerRtHz is the density at each frequency of freqHz (finite and
// ≥ 0, at most [MaxPoints]; may be empty). OutputRMSV integrates the power
// density over bandHz (0 ≤ lo < hi, finite) by adaptive Gauss–Kronrod
// quadrature in ln f (see the package documentation): its relative error
// is below 1e-6 in power, 5e-7 in the RMS value. The same panels
// integrate each contributor's power for its share.
//
// It returns an error wrapping [ErrInvalid] for bad input (and
// [circuit.ErrInvalid] too for an invalid chain), and one wrapping
// [circuit.ErrSingular] when a nodal matrix is singular at a frequency
// (f = 0 with a node joined to the rest only by capacitors, for example).
func Output(ch circuit.Chain, on OpAmpNoise, tempK float64, freqHz []float64, bandHz [2]float64) (Result, error) {
	res, _, _, err := output(ch, on, tempK, freqHz, bandHz)
	return res, err
}

// output is [Output], returning the compiled chain and the band's power
// as well.
func output(ch circuit.Chain, on OpAmpNoise, tempK float64, freqHz []float64, bandHz [2]float64) (Result, *analysis, float64, error) {
	a, err := newAnalysis(ch, on, tempK)
	if err != nil {
		return Result{}, nil, 0, err
	}
	if len(freqHz) > MaxPoints {
		return Result{}, nil, 0, invalidf("%d frequencies, more than %d", len(freqHz), MaxPoints)
	}
	for i, f := range freqHz {
		if !(f >= 0) || math.IsInf(f, 1) {
			return Result{}, nil, 0, invalidf("freqHz[%d] = %v is not finite and >= 0", i, f)
		}
	}
	lo, hi := bandHz[0], bandHz[1]
	if !(lo >= 0) || !(hi > lo) || math.IsInf(hi, 1) {
		return Result{}, nil, 0, invalidf("bandHz [%v, %v] is not finite with 0 <= lo < hi", lo, hi)
	}
	res := Result{
		FreqHz:         slices.Clone(freqHz),
		OutputVPerRtHz: make([]float64, len(freqHz)),
		BandHz:         bandHz,
	}
	for i, f := range freqHz {
		p, err := a.psd(f, a.scratch)
		if err != nil {
			return Result{}, nil, 0, err
		}
		res.OutputVPerRtHz[i] = math.Sqrt(p)
	}
	power, perWho, err := a.integrate(lo, hi)
	if err != nil {
		return Result{}, nil, 0, err
	}
	res.OutputRMSV = math.Sqrt(power)
	res.Contributors = make([]Contributor, len(a.refs))
	for i, ref := range a.refs {
		share := 0.0
		if power > 0 {
			share = perWho[i] / power
		}
		res.Contributors[i] = Contributor{Ref: ref, Share: share}
	}
	slices.SortStableFunc(res.Contributors, func(x, y Contributor) int { return cmp.Compare(y.Share, x.Share) })
	return res, a, power, nil
}

// analysis is a compiled chain.
type analysis struct {
	stages  []*stageNoise
	tfs     circuit.Cascade
	refs    []string
	gain    []float64 // |H_k|² per stage, as loaded
	load    circuit.Loading
	fac2    []float64    // the loading's |factor|² per stage (circuit.Loading.Factor2At)
	scratch []float64    // per-contributor work
	poleHz  []float64    // pole magnitudes, breakpoints of the quadrature
	poles   []complex128 // the stages' poles in rad/s
	// flickerFrom is the integrals' lower limit with 1/f noise (0: none).
	flickerFrom float64
}

func newAnalysis(ch circuit.Chain, on OpAmpNoise, tempK float64) (*analysis, error) {
	if err := ch.Validate(); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrInvalid, err)
	}
	for _, v := range []struct {
		name string
		x    float64
	}{{"VoltageVPerRtHz", on.VoltageVPerRtHz}, {"CurrentAPerRtHz", on.CurrentAPerRtHz}, {"CornerHz", on.CornerHz}, {"FlickerFromHz", on.FlickerFromHz}} {
		if !(v.x >= 0) || math.IsInf(v.x, 1) {
			return nil, invalidf("op-amp noise: %s %v is not finite and >= 0", v.name, v.x)
		}
	}
	if tempK == 0 {
		tempK = DefaultTempK
	}
	if !(tempK > 0) || math.IsInf(tempK, 1) {
		return nil, invalidf("tempK %v is not finite and > 0", tempK)
	}
	tfs, err := ch.TransferFunctions()
	if err != nil {
		return nil, err
	}
	load, err := ch.Loading()
	if err != nil {
		return nil, err
	}
	a := &analysis{tfs: tfs, gain: make([]float64, len(ch.Stages)), load: load, flickerFrom: on.flickerFrom()}
	fourKT := 4 * BoltzmannJPerK * tempK
	for k := range ch.Stages {
		sn, err := newStageNoise(ch, k+1, on, fourKT, &a.refs)
		if err != nil {
			return nil, err
		}
		a.stages = append(a.stages, sn)
	}
	for _, r := range tfs {
		for _, p := range r.Poles() {
			if f := math.Hypot(real(p), imag(p)) / (2 * math.Pi); f > 0 && !math.IsInf(f, 0) {
				a.poleHz = append(a.poleHz, f)
				a.poles = append(a.poles, p)
			}
		}
	}
	a.scratch = make([]float64, len(a.refs))
	return a, nil
}

// psd returns the output noise power density at fHz, in V²/Hz, and adds
// each contributor's part to perWho.
func (a *analysis) psd(fHz float64, perWho []float64) (float64, error) {
	n := len(a.stages)
	loaded := !a.load.Empty()
	if loaded {
		a.fac2 = a.load.Factor2At(fHz, a.fac2)
	}
	for k := range n {
		h := a.tfs[k : k+1].AtHz(fHz)
		a.gain[k] = real(h)*real(h) + imag(h)*imag(h)
		if loaded {
			a.gain[k] *= a.fac2[k]
		}
	}
	w := 2 * math.Pi * fHz
	later := 1.0
	var total float64
	for k := n - 1; k >= 0; k-- {
		if later != 0 {
			// A source inside stage k reaches its output port through the
			// loading's factor, as the stage's input does (Thévenin).
			g := later
			if loaded {
				g *= a.fac2[k]
			}
			v, err := a.stages[k].accumulate(w, g, perWho)
			if err != nil {
				return 0, fmt.Errorf("stage %d: %w", k+1, err)
			}
			total += v
		}
		later *= a.gain[k]
	}
	return total, nil
}
