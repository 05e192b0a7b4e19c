package circuit

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"strconv"

	"github.com/polewright/polewright/synth/internal/lu"
)

// DriverNode is the local node, in the last stage, of the converter
// driver's capacitor: the converter's input.
const DriverNode = "drv"

// HasDriver reports whether the stage carries converter driver parts.
func (st Stage) HasDriver() bool {
	return slices.ContainsFunc(st.Parts, func(p Part) bool { return p.Driver })
}

// drivesOut reports whether Out is a node of a driver part.
func (st Stage) drivesOut() bool {
	return slices.ContainsFunc(st.Parts, func(p Part) bool { return p.Driver && (p.A == st.Out || p.B == st.Out) })
}

// WithDriver returns st with the converter driver appended: resistor r
// from the stage's output to [DriverNode] and capacitor c from there to
// ground, both marked Driver, under the next free designators of their
// letters; Out moves to [DriverNode]. Only Value, Exact, Series and
// TolerancePct of r and c are used. The stage must not carry a driver
// already (it panics otherwise: a programmer error).
func (st Stage) WithDriver(r, c Part) Stage {
	if st.HasDriver() {
		panic("circuit: WithDriver on a stage that has a driver")
	}
	next := map[byte]int{'R': 1, 'C': 1}
	for _, p := range st.Parts {
		if l, n, ok := parseLocalRef(p.Ref); ok && n >= next[l] {
			next[l] = n + 1
		}
	}
	aug := st
	aug.Parts = slices.Clip(slices.Clone(st.Parts))
	r.Ref, r.Kind, r.A, r.B, r.Driver, r.Parasitic = "R"+strconv.Itoa(next['R']), Resistor, st.Out, DriverNode, true, false
	c.Ref, c.Kind, c.A, c.B, c.Driver, c.Parasitic = "C"+strconv.Itoa(next['C']), Capacitor, DriverNode, Ground, true, false
	aug.Parts = append(aug.Parts, r, c)
	aug.Out = DriverNode
	return aug
}

// WithoutDriver returns st without its converter driver parts and with
// Out back on the op-amp output the driver's resistor hangs on; st itself
// when it has none.
func (st Stage) WithoutDriver() Stage {
	if !st.HasDriver() {
		return st
	}
	out := st.Out
	parts := make([]Part, 0, len(st.Parts))
	for _, p := range st.Parts {
		switch {
		case p.Driver && p.Kind == Resistor && p.B == st.Out:
			out = p.A
		case p.Driver:
		default:
			parts = append(parts, p)
		}
	}
	st.Parts, st.Out = parts, out
	return st
}

// LoopGain returns the loop gain of op-amp k (1-based, in the order of
// Stage.OpAmps) of the stage at the complex frequency s (rad/s), with the
// model's parasitics (the output resistance sits between the amplifier
// and its loads): the loop is broken at the amplifier's output, a test
// source drives that (internal) node, the stage input is held at 0 V,
// and the loop gain is −A(s)·(V(+) − V(−)) per volt of the test source,
// by a direct nodal analysis at s. For negative feedback it is positive
// at low frequencies; the phase margin is 180° plus its phase where its
// magnitude crosses 1. The model must not be ideal (an ideal op-amp's
// loop gain is infinite). It returns an error wrapping [ErrInvalid] for
// an invalid stage or model, an ideal model, k out of range, a fully
// differential op-amp k or a non-finite s, and one wrapping [ErrSingular] when the broken loop's
// nodal matrix is singular at s.
func (st Stage) LoopGain(m Model, k int, s complex128) (complex128, error) {
	if cmplx.IsNaN(s) || cmplx.IsInf(s) {
		return 0, invalidf("s %v is not finite", s)
	}
	l, err := st.newLoop(m, k)
	if err != nil {
		return 0, err
	}
	return l.at(s)
}

// loop is a stage compiled for the loop gain of one op-amp.
type loop struct {
	sys    *system
	row, o int
	pl, mi int
	rho    float64 // −Ro/rn (see compile)
	invA0  float64
	invWt  float64
	scale  float64
}

// newLoop checks and compiles the stage for op-amp k's loop gain.
func (st Stage) newLoop(m Model, k int) (*loop, error) {
	if err := m.Validate(); err != nil {
		return nil, err
	}
	if m.Ideal {
		return nil, invalidf("loop gain: the model is ideal")
	}
	t, err := st.check()
	if err != nil {
		return nil, err
	}
	if k < 1 || k > len(st.OpAmps) {
		return nil, invalidf("loop gain: no op-amp %d", k)
	}
	if st.OpAmps[k-1].FullyDifferential() {
		return nil, invalidf("loop gain: op-amp %d is fully differential (its loop is not broken here)", k)
	}
	st, t = st.withParasitics(m, t)
	scale, rn := stageScale(st, m)
	u := st.OpAmps[k-1]
	return &loop{sys: compile(st, m, t, scale), row: len(t.names) - 1 + k, o: t.unknown(u.Out), rho: -m.OutputResistanceOhm / rn,
		pl: t.unknown(u.Plus), mi: t.unknown(u.Minus), invA0: 1 / m.a0(), invWt: 1 / (2 * math.Pi * m.GBWHz), scale: scale}, nil
}

// at returns the loop gain at s (rad/s).
func (l *loop) at(s complex128) (complex128, error) {
	sys := l.sys
	sys.fill(s / complex(l.scale, 0))
	n := sys.n
	// The op-amp's equation becomes V(internal) = V(out) + ρ·I = 1: the
	// test source.
	for j := range n {
		sys.a[l.row*n+j] = 0
	}
	sys.a[l.row*n+l.o] = 1
	sys.a[l.row*n+l.row] += complex(l.rho, 0)
	if err := factorSolve(sys, l.row); err != nil {
		return 0, err
	}
	vd := complex128(0)
	if l.pl >= 0 {
		vd += sys.x[l.pl]
	}
	if l.mi >= 0 {
		vd -= sys.x[l.mi]
	}
	invA := complex(l.invA0, 0) + s*complex(l.invWt, 0)
	return -vd / invA, nil
}

// PhaseMarginDeg returns the phase margin of op-amp k's loop (see
// [Stage.LoopGain]) and its crossover frequency: 180° plus the loop
// gain's phase, unwrapped from the grid's first point, at the lowest
// frequency where its magnitude falls through 1, found on a logarithmic
// grid from 1e-6 to 1e3 times the gain-bandwidth (20 points a decade) and
// refined by bisection in log frequency. ok is false when the loop gain is
// below 1 at the grid's first point or never falls through 1 on the grid.
// Errors are those of [Stage.LoopGain].
func (st Stage) PhaseMarginDeg(m Model, k int) (pmDeg, crossHz float64, ok bool, err error) {
	const perDecade, decades = 20, 9
	lo := m.GBWHz * 1e-6
	l, err := st.newLoop(m, k)
	if err != nil {
		return 0, 0, false, err
	}
	at := func(f float64) (complex128, error) { return l.at(complex(0, 2*math.Pi*f)) }
	prev, err := at(lo)
	if err != nil {
		return 0, 0, false, err
	}
	if cmplx.Abs(prev) < 1 {
		return 0, 0, false, nil
	}
	phase := cmplx.Phase(prev)
	fPrev := lo
	for i := 1; i <= perDecade*decades; i++ {
		f := lo * math.Pow(10, float64(i)/perDecade)
		v, err := at(f)
		if err != nil {
			return 0, 0, false, err
		}
		if cmplx.Abs(v) >= 1 {
			phase += remainder(cmplx.Phase(v) - cmplx.Phase(prev))
			prev, fPrev = v, f
			continue
		}
		a, b := fPrev, f
		for b/a > 1+1e-9 {
			mid := math.Sqrt(a * b)
			vm, err := at(mid)
			if err != nil {
				return 0, 0, false, err
			}
			if cmplx.Abs(vm) >= 1 {
				a = mid
			} else {
				b = mid
			}
		}
		fc := math.Sqrt(a * b)
		vc, err := at(fc)
		if err != nil {
			return 0, 0, false, err
		}
		phc := phase + remainder(cmplx.Phase(vc)-cmplx.Phase(prev))
		return 180 + phc*180/math.Pi, fc, true, nil
	}
	return 0, 0, false, nil
}

// remainder wraps an angle difference into (−π, π].
func remainder(d float64) float64 {
	d = math.Mod(d, 2*math.Pi)
	switch {
	case d > math.Pi:
		d -= 2 * math.Pi
	case d <= -math.Pi:
		d += 2 * math.Pi
	}
	return d
}

// factorSolve factors sys.a and solves for the unit right-hand side at
// row, leaving the solution in sys.x.
func factorSolve(sys *system, row int) error {
	if lu.Factor(sys.a, sys.n, sys.piv) == 0 {
		return fmt.Errorf("%w: the broken loop's nodal matrix is singular", ErrSingular)
	}
	clear(sys.x)
	sys.x[row] = 1
	lu.Solve(sys.a, sys.n, sys.piv, sys.x)
	return nil
}
