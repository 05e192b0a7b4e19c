package circuit

import (
	"fmt"
	"math"
	"math/cmplx"

	"github.com/polewright/polewright/synth/internal/lu"
)

// Loading is how much each stage's output is pulled down by the input of
// the stage it drives. With an op-amp output resistance Ro the output of
// a stage is not a perfect voltage source: seen from the next stage it
// has the Thévenin impedance Zout(s), which the stage's feedback holds
// small while its loop gain is large and which approaches Ro (and, with
// some networks, rises above it) where the loop gain falls. The next
// stage's input admittance Yin(s) loads it, and the voltage passed on is
// the stage's unloaded output times
//
//	L(s) = 1 / (1 + Zout(s)·Yin(s)).
//
// [Chain.TransferFunctions] gives each stage unloaded (its output open);
// the chain's response as built is their product times every boundary's
// L. Yin is the next stage's own, with its output open: the correction
// that the stage after it makes to that admittance passes back through
// the next stage's feedback and output impedance and is of second order
// in Ro (the tests compare the result with the whole chain in ngspice).
// Boundaries into or out of a differential pair are not corrected, nor is
// any boundary when Ro is zero or the op-amp ideal (Zout is then zero).
type Loading struct {
	bounds []boundary
}

// boundary is the loading between two stages: Zout of the driving stage
// in Ω, Yin of the driven one in S, each a rational function on its own
// stage's scale.
type boundary struct {
	zout, yin Rational
}

// Empty reports whether no boundary is corrected (L = 1 everywhere).
func (l Loading) Empty() bool { return len(l.bounds) == 0 }

// AtHz returns the product of the boundaries' factors L at fHz.
func (l Loading) AtHz(fHz float64) complex128 {
	h := complex(1, 0)
	w := 2 * math.Pi * fHz
	for _, b := range l.bounds {
		zn, zd := b.zout.axis(w / b.zout.ScaleRadPerSec)
		yn, yd := b.yin.axis(w / b.yin.ScaleRadPerSec)
		// 1/(1 + (zn/zd)(yn/yd)) = zd·yd / (zd·yd + zn·yn)
		d := zd * yd
		h = div(h*d, d+zn*yn)
	}
	return h
}

// Apply multiplies dst[i] by the loading at freqHz[i].
func (l Loading) Apply(dst []complex128, freqHz []float64) {
	if l.Empty() {
		return
	}
	for i, f := range freqHz {
		dst[i] *= l.AtHz(f)
	}
}

// DBAt returns 20·log10|L| at fHz, the product of the boundaries'
// factors, with one logarithm: |L|² = Π |zd·yd|² / |zd·yd + zn·yn|².
func (l Loading) DBAt(fHz float64) float64 {
	if l.Empty() {
		return 0
	}
	w := 2 * math.Pi * fHz
	num, den := 1.0, 1.0
	for _, b := range l.bounds {
		zn, zd := b.zout.axis(w / b.zout.ScaleRadPerSec)
		yn, yd := b.yin.axis(w / b.yin.ScaleRadPerSec)
		d := zd * yd
		e := d + zn*yn
		num *= real(d)*real(d) + imag(d)*imag(d)
		den *= real(e)*real(e) + imag(e)*imag(e)
	}
	if num > 1e-300 && num < 1e300 && den > 1e-300 && den < 1e300 {
		return dbPerLn10 * lnRatio(num, den)
	}
	// Out of range (a determinant's zero on the axis, or huge values):
	// the factors one by one.
	return 20 * math.Log10(cmplx.Abs(l.AtHz(fHz)))
}

// dbPerLn10 is 10/ln 10: 10·log10(v) = dbPerLn10·ln(v).
const dbPerLn10 = 10 / math.Ln10

// ApplyDB adds the loading's 20·log10|L| at freqHz[i] to dst[i], as
// [Loading.DBAt] does one frequency at a time, but boundary by boundary
// over the whole grid (each polynomial split into even and odd powers
// once, as sweepStage does) with one logarithm per frequency.
func (l Loading) ApplyDB(dst []float64, freqHz []float64) {
	if l.Empty() {
		return
	}
	n := len(freqHz)
	buf := make([]float64, 2*n)
	num, den := buf[:n], buf[n:]
	for i := range num {
		num[i], den[i] = 1, 1
	}
	var split [8][maxSplit / 2]float64
	for _, b := range l.bounds {
		if len(b.zout.Num) > maxSplit || len(b.zout.Den) > maxSplit || len(b.yin.Num) > maxSplit || len(b.yin.Den) > maxSplit {
			for i, f := range freqHz {
				w := 2 * math.Pi * f
				zn, zd := b.zout.axis(w / b.zout.ScaleRadPerSec)
				yn, yd := b.yin.axis(w / b.yin.ScaleRadPerSec)
				d := zd * yd
				e := d + zn*yn
				num[i] *= real(d)*real(d) + imag(d)*imag(d)
				den[i] *= real(e)*real(e) + imag(e)*imag(e)
			}
			continue
		}
		zne, zno := evenOdd(b.zout.Num, split[0][:0], split[1][:0])
		zde, zdo := evenOdd(b.zout.Den, split[2][:0], split[3][:0])
		yne, yno := evenOdd(b.yin.Num, split[4][:0], split[5][:0])
		yde, ydo := evenOdd(b.yin.Den, split[6][:0], split[7][:0])
		kz, ky := 2*math.Pi/b.zout.ScaleRadPerSec, 2*math.Pi/b.yin.ScaleRadPerSec
		for i, f := range freqHz {
			xz, xy := kz*f, ky*f
			uz, uy := -xz*xz, -xy*xy
			znr, zni := hornerU(zne, uz), hornerU(zno, uz)*xz
			zdr, zdi := hornerU(zde, uz), hornerU(zdo, uz)*xz
			ynr, yni := hornerU(yne, uy), hornerU(yno, uy)*xy
			ydr, ydi := hornerU(yde, uy), hornerU(ydo, uy)*xy
			dr, di := zdr*ydr-zdi*ydi, zdr*ydi+zdi*ydr
			er, ei := dr+znr*ynr-zni*yni, di+znr*yni+zni*ynr
			num[i] *= dr*dr + di*di
			den[i] *= er*er + ei*ei
		}
	}
	for i, f := range freqHz {
		if a, b := num[i], den[i]; a > 1e-300 && a < 1e300 && b > 1e-300 && b < 1e300 {
			dst[i] += dbPerLn10 * lnRatio(a, b)
		} else {
			dst[i] += 20 * math.Log10(cmplx.Abs(l.AtHz(f)))
		}
	}
}

// lnRatio returns ln(a/b) for positive a and b. The loading is mostly a
// factor within a part in a thousand of 1, where the series of ln(1+x) to
// x⁶ is exact to rounding (its remainder is below x⁷/7 < 1.5e-22) and
// costs less than a logarithm.
func lnRatio(a, b float64) float64 {
	x := (a - b) / b
	if math.Abs(x) < 1e-3 {
		return x * (1 - x*(1.0/2-x*(1.0/3-x*(1.0/4-x*(1.0/5-x*(1.0/6))))))
	}
	return math.Log(a / b)
}

// evenOdd splits c (ascending) into its even and odd powers' coefficients.
func evenOdd(c, even, odd []float64) ([]float64, []float64) {
	for i, v := range c {
		if i%2 == 0 {
			even = append(even, v)
		} else {
			odd = append(odd, v)
		}
	}
	return even, odd
}

// hornerU evaluates Σ c_m·u^m.
func hornerU(c []float64, u float64) float64 {
	var v float64
	for j := len(c) - 1; j >= 0; j-- {
		v = v*u + c[j]
	}
	return v
}

// Loading returns the chain's inter-stage loading (see [Loading]); it is
// empty unless the model has an output resistance and a finite gain. It
// returns an error wrapping [ErrInvalid] for an invalid chain, or one
// wrapping [ErrSingular].
func (c Chain) Loading() (Loading, error) {
	m := c.Model
	if !(m.OutputResistanceOhm > 0) || m.Ideal || len(c.Stages) < 2 {
		return Loading{}, nil
	}
	if err := m.Validate(); err != nil {
		return Loading{}, err
	}
	// Each stage's ports once (a middle stage is both driven and driving).
	type port struct {
		zout, yin Rational
		done      bool
	}
	ports := make([]port, len(c.Stages))
	get := func(k int) (port, error) {
		if !ports[k].done {
			z, y, err := c.Memo.ports(c.Stages[k], m)
			if err != nil {
				return port{}, fmt.Errorf("stage %d (%s): ports: %w", k+1, c.Stages[k].Topology, err)
			}
			ports[k] = port{zout: z, yin: y, done: true}
		}
		return ports[k], nil
	}
	var l Loading
	for k := 0; k+1 < len(c.Stages); k++ {
		if c.Stages[k].Differential() || c.Stages[k+1].DiffIn {
			continue
		}
		from, err := get(k)
		if err != nil {
			return Loading{}, err
		}
		to, err := get(k + 1)
		if err != nil {
			return Loading{}, err
		}
		l.bounds = append(l.bounds, boundary{zout: from.zout, yin: to.yin})
	}
	return l, nil
}

// ports returns a single-ended stage's output impedance Zout(s) in Ω (its
// input held at 0 V) and input admittance Yin(s) in S (its output open),
// with the model's parasitics, as rational functions sharing the nodal
// determinant as denominator.
func (st Stage) ports(m Model) (zout, yin Rational, err error) {
	t, err := st.check()
	if err != nil {
		return Rational{}, Rational{}, err
	}
	_, zout, yin, err = st.nodeTransferPorts(m, t, 0, st.Out, true)
	return zout, yin, err
}

// interpolatePorts is interpolate with two more polynomials from the same
// factorisations: the numerators of V(Out) with 1 injected into Out's
// balance and the input at 0 (nz), and of the source's current unknown
// under the unit drive (ny). It returns an error wrapping [ErrSingular]
// when A is exactly singular at a sample point (interpolate alone then
// falls back on Cramer's rule).
func (sys *system) interpolatePorts() (num, den, nz, ny []float64, err error) {
	out := sys.outCol
	src := sys.srcRow // the source's current unknown has the source row's index
	var singular bool
	c := sys.interpolateAll(4, func(p complex128, v []complex128) {
		sys.fill(p)
		det := lu.Factor(sys.a, sys.n, sys.piv)
		if det == 0 {
			singular = true
			v[0], v[1], v[2], v[3] = 0, 0, 0, 0
			return
		}
		clear(sys.x)
		sys.x[sys.srcRow] = 1
		lu.Solve(sys.a, sys.n, sys.piv, sys.x)
		h, y := sys.x[out], sys.x[src]
		clear(sys.x)
		sys.x[out] = 1
		lu.Solve(sys.a, sys.n, sys.piv, sys.x)
		v[0], v[1], v[2], v[3] = det*h, det, det*sys.x[out], det*y
	})
	if singular {
		return nil, nil, nil, nil, fmt.Errorf("%w: nodal matrix is singular on an interpolation circle", ErrSingular)
	}
	return c[0], c[1], c[2], c[3], nil
}

// portRationals forms Zout = rn·nz/den (Ω) and Yin = −ny/(rn·den) (S) at
// scale rad/s per unit p: the source's current unknown is −rn times the
// current into the stage's input, and a unit entry in Out's balance
// injects 1/rn A. den is copied (the caller goes on to scale its own).
func portRationals(den, nz, ny []float64, rn, scale float64) (zout, yin Rational) {
	d := trimPoly(append([]float64(nil), den...))
	z := make([]float64, len(nz))
	y := make([]float64, len(ny))
	for i := range nz {
		z[i] = nz[i] * rn
	}
	for i := range ny {
		y[i] = -ny[i] / rn
	}
	return Rational{Num: trimPoly(z), Den: d, ScaleRadPerSec: scale},
		Rational{Num: trimPoly(y), Den: d, ScaleRadPerSec: scale}
}
