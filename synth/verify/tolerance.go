package verify

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/polewright/polewright/synth/circuit"
)

// Distribution names how a part's value is spread within its tolerance.
type Distribution string

// The distributions. Both stay within the tolerance: a part is never
// drawn outside the band its maker guarantees.
const (
	// Uniform spreads the value evenly over nominal·(1 ± tolerance):
	// σ = tolerance/√3.
	Uniform Distribution = "uniform"
	// Gaussian is a normal distribution with the tolerance as 3σ,
	// truncated at ±3σ (redrawn beyond, 0.27 % of draws), which makes its
	// standard deviation 0.986578·tolerance/3 ([Distribution.Sigma]).
	Gaussian Distribution = "gaussian"
)

// truncSigma is the standard deviation of a standard normal truncated to
// [−3, 3]: √(1 − 2·3·φ(3)/(2Φ(3) − 1)) (closed form; φ, Φ the standard
// normal density and distribution).
var truncSigma = func() float64 {
	phi := math.Exp(-4.5) / math.Sqrt(2*math.Pi)
	mass := math.Erf(3 / math.Sqrt2)
	return math.Sqrt(1 - 6*phi/mass)
}()

// Sigma returns the standard deviation of a part's relative deviation per
// unit of tolerance (the tolerance as a fraction): 1/√3 for [Uniform],
// 0.986578/3 for [Gaussian] (a 3σ normal truncated at the tolerance), and
// for "" the default, Uniform. It returns NaN for an unknown name.
func (d Distribution) Sigma() float64 {
	switch d {
	case Uniform, "":
		return 1 / math.Sqrt(3)
	case Gaussian:
		return truncSigma / 3
	}
	return math.NaN()
}

// MaxTolerancePct bounds every tolerance: a part must stay positive.
const MaxTolerancePct = 50

// Tolerance says how the parts of a chain spread in a Monte Carlo run.
// The zero value draws every part uniformly within its own TolerancePct
// and keeps the op-amps' GBW at the model's.
type Tolerance struct {
	// ResistorPct and CapacitorPct override the tolerance of every
	// resistor and capacitor, in percent; 0 keeps each part's own
	// circuit.Part.TolerancePct.
	ResistorPct, CapacitorPct float64
	// Distribution is Uniform (also for "") or Gaussian.
	Distribution Distribution
	// GBWSpreadPct spreads each single-pole op-amp's gain-bandwidth
	// product independently within ± this percentage, with the same
	// distribution; 0 keeps it. The ideal model ignores it.
	GBWSpreadPct float64
}

// Validate checks that every percentage is finite and in [0,
// MaxTolerancePct] and that the distribution is known.
func (t Tolerance) Validate() error {
	for _, f := range []struct {
		name string
		v    float64
	}{{"ResistorPct", t.ResistorPct}, {"CapacitorPct", t.CapacitorPct}, {"GBWSpreadPct", t.GBWSpreadPct}} {
		if !(f.v >= 0 && f.v <= MaxTolerancePct) {
			return fmt.Errorf("%w: tolerance: %s %v is not a number in [0, %d]", ErrInvalid, f.name, f.v, MaxTolerancePct)
		}
	}
	if math.IsNaN(t.Distribution.Sigma()) {
		return fmt.Errorf("%w: tolerance: distribution %q is neither %q nor %q", ErrInvalid, t.Distribution, Uniform, Gaussian)
	}
	return nil
}

// partTolerance returns the tolerance (a fraction) a part is drawn with.
func (t Tolerance) partTolerance(p circuit.Part) (float64, error) {
	pct := p.TolerancePct
	switch {
	case p.Kind == circuit.Resistor && t.ResistorPct > 0:
		pct = t.ResistorPct
	case p.Kind == circuit.Capacitor && t.CapacitorPct > 0:
		pct = t.CapacitorPct
	}
	if !(pct >= 0 && pct <= MaxTolerancePct) {
		return 0, fmt.Errorf("%w: part %s: tolerance %v %% is not in [0, %d]", ErrInvalid, p.Ref, pct, MaxTolerancePct)
	}
	return pct / 100, nil
}

// unitDraw returns a deviation in [−1, 1] per unit of tolerance: uniform,
// or a standard normal over 3 truncated to [−1, 1] by redrawing.
func unitDraw(r *rand.Rand, gaussian bool) float64 {
	if !gaussian {
		return 2*r.Float64() - 1
	}
	for {
		if z := r.NormFloat64(); z >= -3 && z <= 3 {
			return z / 3
		}
	}
}

// mix64 is the splitmix64 finaliser (Steele, Lea and Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014).
func mix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// trialSeed returns the two PCG seed words of trial i of a run with seed
// seed: every trial has its own stream, so that the draws do not depend
// on which worker runs it.
func trialSeed(seed uint64, i int) (uint64, uint64) {
	hi := mix64(seed ^ mix64(uint64(i)))
	lo := mix64(hi ^ uint64(i)*0xd1b54a32d192ed03)
	return hi, lo
}
