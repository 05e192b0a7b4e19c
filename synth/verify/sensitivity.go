package verify

import (
	"fmt"
	"math"
	"math/cmplx"
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
// parts, ranked by max(|F0|, |Q|), largest first (ties, to 1e-9, in part
// order). With the spec's op-amp they are the sensitivities of the stage as
// built.
//
// They are exact derivatives: the poles of the stage's transfer function
// with model m are differentiated through the adjoint of its nodal
// system (see sensitivity_adjoint.go), one complex LU factorisation per
// pole on top of one transfer function, whatever the number of parts.
// For a complex pair λ, S^f0 = Re(λ̇/λ) and S^Q = Re(λ̇/λ) − Re λ̇/Re λ
// (λ̇ = ∂λ/∂ln x); for an overdamped pair of real poles p1, p2 (f0 =
// √(p1·p2), Q = f0/−(p1 + p2)) the same from ṗ1 and ṗ2; for a single real
// pole S^f0 = ṗ/p. They agree with central differences of the circuit
// model to the differences' own error, about 1e-10. Only where that path
// does not apply — a pair within 1 % of a double pole (|Q − ½| below
// about 1e-5), where the two root derivatives lose digits — are they
// central differences in ln x (steps e^(±1e-5), about 1e-11; see
// sensDelta), which differentiate the same pair.
//
// A stage without a pole (a gain stage) has no f0 or Q and returns an
// empty slice. An invalid stage or model returns the circuit package's
// error.
func Sensitivities(st circuit.Stage, m circuit.Model) ([]Sensitivity, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	if err := st.Validate(); err != nil {
		return nil, err
	}
	r, err := st.TransferFunction(m)
	if err != nil {
		return nil, err
	}
	sel, ok := dominantRoots(r.Poles(), r.SectionOrder)
	if !ok {
		return []Sensitivity{}, nil
	}
	out, ok := adjointSensitivities(st, m, r.ScaleRadPerSec, sel)
	if !ok {
		if out, err = centralSensitivities(st, m); err != nil {
			return nil, err
		}
	}
	rankSensitivities(out)
	return out, nil
}

// dominantSel is the pole or poles that [circuit.Rational.DominantPair]
// reads f0 and Q from, in rad/s.
type dominantSel struct {
	kind  dominantKind
	roots [2]complex128 // kind pairComplex: the upper pole; kind pairReal: p1, p2; kind singleReal: p
}

// dominantKind says how f0 and Q follow from the selected poles.
type dominantKind int

const (
	singleReal  dominantKind = iota // f0 = |p|, Q = 0
	pairComplex                     // f0 = |λ|, Q = |λ|/(−2·Re λ)
	pairReal                        // f0 = √(p1·p2), Q = f0/−(p1 + p2)
)

// dominantRoots selects the poles of [circuit.Rational.DominantPair] by
// its rules, from poles as [circuit.Rational.Poles] returns them (sorted
// by magnitude, a conjugate pair's upper member first, real poles with an
// imaginary part of exactly 0). ok is false where DominantPair's is.
func dominantRoots(poles []complex128, sectionOrder int) (dominantSel, bool) {
	if sectionOrder < 1 {
		return dominantSel{}, false
	}
	var pair complex128
	var reals []float64
	bestKey := math.Inf(1)
	for _, p := range poles {
		mag := cmplx.Abs(p)
		switch {
		case mag == 0 || imag(p) < 0:
		case imag(p) == 0:
			reals = append(reals, real(p))
		case math.Abs(real(p))/mag < bestKey:
			pair, bestKey = p, math.Abs(real(p))/mag
		}
	}
	switch {
	case sectionOrder == 1 && len(reals) > 0:
		return dominantSel{kind: singleReal, roots: [2]complex128{complex(reals[0], 0)}}, true
	case !math.IsInf(bestKey, 1):
		return dominantSel{kind: pairComplex, roots: [2]complex128{pair}}, true
	case len(reals) >= 2:
		return dominantSel{kind: pairReal, roots: [2]complex128{complex(reals[0], 0), complex(reals[1], 0)}}, true
	case len(reals) == 1:
		return dominantSel{kind: singleReal, roots: [2]complex128{complex(reals[0], 0)}}, true
	}
	return dominantSel{}, false
}

// adjointSensitivities differentiates the selected poles (rad/s) of the
// stage, whose transfer function with model m has the natural scale
// scale, through the adjoint of its nodal system. ok is false when that
// does not apply (see adjointSplitTol and adjointSingularTol).
func adjointSensitivities(st circuit.Stage, m circuit.Model, scale float64, sel dominantSel) ([]Sensitivity, bool) {
	// The op-amp model's parasitic parts are in the nodal system (they
	// move the poles) but get no figure of their own.
	aug := st.WithParasitics(m)
	_, rn := stageScale(aug, m)
	ns := newNodal(aug, m, scale, rn)
	np := len(st.Parts)
	d1 := make([]complex128, len(aug.Parts))
	d2 := make([]complex128, len(aug.Parts))
	l1 := sel.roots[0] / complex(scale, 0)
	l2 := sel.roots[1] / complex(scale, 0)
	switch sel.kind {
	case pairComplex:
		if 2*imag(l1) <= adjointSplitTol*cmplx.Abs(l1) || !ns.rootDerivatives(l1, d1) {
			return nil, false
		}
	case pairReal:
		if math.Abs(real(l1)-real(l2)) <= adjointSplitTol*math.Abs(real(l2)) ||
			!ns.rootDerivatives(l1, d1) || !ns.rootDerivatives(l2, d2) {
			return nil, false
		}
	default:
		if !ns.rootDerivatives(l1, d1) {
			return nil, false
		}
	}
	out := make([]Sensitivity, np)
	for j, p := range st.Parts {
		s := Sensitivity{Ref: p.Ref}
		switch sel.kind {
		case pairComplex:
			// ln f0 = Re ln λ; ln Q = ln|λ| − ln(−Re λ).
			s.F0 = real(d1[j] / l1)
			s.Q = s.F0 - real(d1[j])/real(l1)
		case pairReal:
			p1, p2 := real(l1), real(l2)
			s.F0 = (real(d1[j])/p1 + real(d2[j])/p2) / 2
			s.Q = s.F0 - (real(d1[j])+real(d2[j]))/(p1+p2)
		default:
			s.F0 = real(d1[j]) / real(l1)
		}
		if math.IsNaN(s.F0) || math.IsNaN(s.Q) || math.IsInf(s.F0, 0) || math.IsInf(s.Q, 0) {
			return nil, false
		}
		out[j] = s
	}
	return out, true
}

// centralSensitivities is the central-difference path of Sensitivities,
// unranked: every part in turn is scaled by e^(±sensDelta) and the
// stage's transfer function recomputed.
func centralSensitivities(st circuit.Stage, m circuit.Model) ([]Sensitivity, error) {
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
	return out, nil
}

// rankSensitivities sorts by max(|F0|, |Q|), largest first, stably. The
// key is rounded to 1e-9 first, so that sensitivities that are equal
// analytically (the four −½ of a Sallen-Key stage's f0) tie whatever
// their rounding, and keep the part order.
func rankSensitivities(out []Sensitivity) {
	key := func(s Sensitivity) float64 {
		return math.Round(math.Max(math.Abs(s.F0), math.Abs(s.Q)) * 1e9)
	}
	slices.SortStableFunc(out, func(a, b Sensitivity) int {
		ka, kb := key(a), key(b)
		switch {
		case ka > kb:
			return -1
		case ka < kb:
			return 1
		}
		return 0
	})
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
