package verify

import (
	"fmt"
	"math"
	"slices"

	"github.com/polewright/polewright/synth/circuit"
)

// sensDelta is the relative step of the central differences: each part
// is scaled by e^(±sensDelta), a symmetric step in ln x.
//
// The truncation error of a central difference is δ²/6·∂³ln y/∂(ln x)³:
// about 2e-11 for third log-derivatives of order one at δ = 1e-5
// (measured: 1.3e-8 at δ = 1e-3 and 1.3e-10 at 1e-4 against the
// Sallen-Key closed forms, falling as δ²). The rounding error is ε_y/δ
// with ε_y the relative accuracy of the pole pair from the circuit's
// rational form, about 1e-16..1e-15 here, so some 1e-11. The Sallen-Key
// closed forms are met to 2.5e-11 at δ = 1e-5; the tests require 1e-7.
const sensDelta = 1e-5

// Sensitivity is the normalised sensitivity S = ∂ln y/∂ln x of a stage's
// f0 and Q to one of its parts.
type Sensitivity struct {
	// Ref is the part's stage-local designator.
	Ref string
	// F0 and Q are S^f0_x and S^Q_x. Q is 0 for a first-order stage,
	// whose Q is 0.
	F0, Q float64
}

// Sensitivities returns the normalised sensitivities of the stage's f0
// and Q, from its section's pole pair ([circuit.Rational.DominantPair])
// as the circuit model computes it with op-amp model m, to each of its
// parts, ranked by max(|F0|, |Q|), largest first (ties in part order).
//
// They are central differences in ln x: every part in turn is scaled by
// e^(±1e-5) and the stage's transfer function recomputed; the error is
// about 1e-11 (see sensDelta). A stage without a pole (a gain stage) has no
// f0 or Q and returns an empty slice. An invalid stage or model returns
// the circuit package's error.
func Sensitivities(st circuit.Stage, m circuit.Model) ([]Sensitivity, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	if err := st.Validate(); err != nil {
		return nil, err
	}
	order := -1 // the nominal stage's section order
	pair := func(s circuit.Stage) (f0, q float64, ok bool, err error) {
		r, err := s.TransferFunction(m)
		if err != nil {
			return 0, 0, false, err
		}
		// A perturbed stage keeps the nominal's section order: its
		// rational form can come out a degree short when a far op-amp
		// coefficient is taken for rounding noise, which would make the
		// section look first order.
		if order < 0 {
			order = r.SectionOrder
		}
		r.SectionOrder = order
		f0, q, ok = r.DominantPair()
		return f0, q, ok, nil
	}
	_, q0, ok, err := pair(st)
	if err != nil {
		return nil, err
	}
	if !ok {
		return []Sensitivity{}, nil
	}
	out := make([]Sensitivity, len(st.Parts))
	parts := slices.Clone(st.Parts)
	pert := st
	pert.Parts = parts
	up, down := math.Exp(sensDelta), math.Exp(-sensDelta)
	for i, p := range st.Parts {
		parts[i].Value = p.Value * up
		fu, qu, oku, err := pair(pert)
		if err != nil {
			return nil, fmt.Errorf("part %s: %w", p.Ref, err)
		}
		parts[i].Value = p.Value * down
		fd, qd, okd, err := pair(pert)
		if err != nil {
			return nil, fmt.Errorf("part %s: %w", p.Ref, err)
		}
		parts[i].Value = p.Value
		if !oku || !okd {
			return nil, fmt.Errorf("%w: part %s: the stage's pole pair is lost at ±%g relative change", circuit.ErrSingular, p.Ref, sensDelta)
		}
		s := Sensitivity{Ref: p.Ref, F0: (math.Log(fu) - math.Log(fd)) / (2 * sensDelta)}
		if q0 != 0 {
			s.Q = (math.Log(math.Abs(qu)) - math.Log(math.Abs(qd))) / (2 * sensDelta)
		}
		out[i] = s
	}
	slices.SortStableFunc(out, func(a, b Sensitivity) int {
		ka := math.Max(math.Abs(a.F0), math.Abs(a.Q))
		kb := math.Max(math.Abs(b.F0), math.Abs(b.Q))
		switch {
		case ka > kb:
			return -1
		case ka < kb:
			return 1
		}
		return 0
	})
	return out, nil
}

// Allocation says how [RequiredTolerancePct] shares a stage's error
// budget among its parts.
type Allocation string

// The allocations.
const (
	// EqualTolerance gives every part of the stage the same tolerance,
	// the largest that keeps the budget: σ = σ_y/√(Σ S_x²) for each
	// quantity y, the smaller of the two. This is what buying one series
	// for the whole stage means.
	EqualTolerance Allocation = "equal"
	// InverseSensitivity gives each part an equal share of the variance
	// budget, σ_x = σ_y/(|S_x|·√n_y) (n_y the parts with S_x ≠ 0 for y),
	// the smaller over f0 and Q: a part that matters little may be
	// loose, a sensitive one must be tight. Also the default ("").
	InverseSensitivity Allocation = "inverse-sensitivity"
)

// ToleranceTarget is what [RequiredTolerancePct] designs for.
type ToleranceTarget struct {
	// F0Pct and QPct are the allowed deviations of the stage's f0 and Q
	// from their values as built, in percent; > 0, or 0 to leave that
	// quantity unconstrained (not both).
	F0Pct, QPct float64
	// Yield is the share of boards whose stage must keep within both
	// limits, in (0, 1).
	Yield float64
	// Distribution is how the parts spread (Uniform for "").
	Distribution Distribution
	// Allocation shares the budget (InverseSensitivity for "").
	Allocation Allocation
}

// MaxRequiredTolerancePct caps [RequiredTolerancePct]: a part to which
// neither f0 nor Q is sensitive gets this, which reads "no requirement";
// the first-order analysis means nothing at such spreads anyway.
const MaxRequiredTolerancePct = 100

// PartTolerance is the tolerance one part needs.
type PartTolerance struct {
	// Ref is the part's stage-local designator.
	Ref string
	// TolerancePct is the tolerance, in percent, capped at
	// MaxRequiredTolerancePct.
	TolerancePct float64
}

// RequiredTolerancePct returns the tolerance each part of a stage needs so
// that the stage's f0 and Q stay within target's limits on a share
// target.Yield of the boards, from the stage's sensitivities (as
// [Sensitivities] returns them), in the order given.
//
// The design is first order. The relative deviations of f0 and Q are
// sums of the parts' independent relative deviations weighted by the
// sensitivities, so their standard deviations are σ_y = √(Σ S_yx²·σ_x²);
// they are taken as normal (the central limit theorem; for uniform parts
// the true tails are lighter, so this errs safe). The two limits are
// combined by Bonferroni's inequality: each may fail on at most half of
// the allowed share 1 − Yield, so each needs |Δy/y| ≤ limit_y with
// probability 1 − (1 − Yield)/2, which is limit_y = z·σ_y with z =
// Φ⁻¹(1 − (1 − Yield)/4) (z = Φ⁻¹(1 − (1 − Yield)/2) with one limit). The
// budget σ_y = limit_y/z is then shared as target.Allocation says, and a
// part's σ_x becomes a tolerance through its distribution:
// tolerance = σ_x/[Distribution.Sigma] (√3·σ uniform, 3σ/0.986578 for the
// truncated gaussian). Each part's tolerance keeps every constrained
// quantity within its budget on its own share, so the stage meets both
// limits with all parts at their tolerances together.
//
// Invalid limits (negative, NaN, both zero, Yield outside (0, 1)) or an
// unknown distribution or allocation return an error wrapping
// [ErrInvalid].
func RequiredTolerancePct(sens []Sensitivity, target ToleranceTarget) ([]PartTolerance, error) {
	t := target
	if !(t.F0Pct >= 0) || math.IsInf(t.F0Pct, 1) || !(t.QPct >= 0) || math.IsInf(t.QPct, 1) || t.F0Pct == 0 && t.QPct == 0 {
		return nil, invalidf("tolerance target: F0Pct %v and QPct %v must be finite, >= 0 and not both 0", t.F0Pct, t.QPct)
	}
	if !(t.Yield > 0 && t.Yield < 1) {
		return nil, invalidf("tolerance target: Yield %v is not in (0, 1)", t.Yield)
	}
	unit := t.Distribution.Sigma()
	if math.IsNaN(unit) {
		return nil, invalidf("tolerance target: distribution %q is neither %q nor %q", t.Distribution, Uniform, Gaussian)
	}
	if t.Allocation != "" && t.Allocation != EqualTolerance && t.Allocation != InverseSensitivity {
		return nil, invalidf("tolerance target: allocation %q is neither %q nor %q", t.Allocation, EqualTolerance, InverseSensitivity)
	}
	for _, s := range sens {
		if math.IsNaN(s.F0) || math.IsInf(s.F0, 0) || math.IsNaN(s.Q) || math.IsInf(s.Q, 0) {
			return nil, invalidf("tolerance target: sensitivity of %s is not finite", s.Ref)
		}
	}
	fail := 1 - t.Yield
	if t.F0Pct > 0 && t.QPct > 0 {
		fail /= 2
	}
	z := normalQuantile(1 - fail/2)
	type quantity struct {
		budget float64 // allowed σ as a fraction; 0: unconstrained
		s      func(Sensitivity) float64
	}
	qs := []quantity{
		{t.F0Pct / 100 / z, func(s Sensitivity) float64 { return s.F0 }},
		{t.QPct / 100 / z, func(s Sensitivity) float64 { return s.Q }},
	}
	const zero = 1e-9 // |S| below this: insensitive
	out := make([]PartTolerance, len(sens))
	sigma := make([]float64, len(sens))
	for i := range sigma {
		sigma[i] = math.Inf(1)
	}
	for _, q := range qs {
		if q.budget == 0 {
			continue
		}
		var sum2 float64
		var n int
		for _, s := range sens {
			if v := math.Abs(q.s(s)); v > zero {
				sum2 += v * v
				n++
			}
		}
		if n == 0 {
			continue
		}
		for i, s := range sens {
			switch t.Allocation {
			case EqualTolerance:
				sigma[i] = math.Min(sigma[i], q.budget/math.Sqrt(sum2))
			default:
				if v := math.Abs(q.s(s)); v > zero {
					sigma[i] = math.Min(sigma[i], q.budget/(v*math.Sqrt(float64(n))))
				}
			}
		}
	}
	for i, s := range sens {
		out[i] = PartTolerance{Ref: s.Ref, TolerancePct: math.Min(MaxRequiredTolerancePct, 100*sigma[i]/unit)}
	}
	return out, nil
}

// normalQuantile is Φ⁻¹(p) for p in (0, 1), by the inverse error function.
func normalQuantile(p float64) float64 { return math.Sqrt2 * math.Erfinv(2*p-1) }
