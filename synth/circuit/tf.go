package circuit

import (
	"fmt"
	"github.com/polewright/polewright/synth/internal/lu"
	"math"
	"slices"
)

// Interpolation tuning (see the package documentation, # Analysis).
const (
	// extraBins is the least number of DFT bins above the degree bound:
	// their values, which are zero but for rounding, measure the noise.
	extraBins = 2
	// acceptRel: a coefficient whose estimated relative error (noise floor
	// over its term) is at most this is final after one circle.
	acceptRel = 1e-12
	// noiseFactor: a coefficient whose term is below noiseFactor times the
	// noise floor on the circle where it matters most is rounding noise and
	// is set to exactly zero.
	noiseFactor = 100
	// negligibleRatio: a coefficient whose (estimated) term stays below
	// this fraction of the largest term everywhere in the window is set to
	// zero without another circle.
	negligibleRatio = 1e-12
	// windowDecades bounds the radii, |p| in 10^±windowDecades, over which
	// coefficients are resolved.
	windowDecades = 8
)

// TransferFunction returns the stage's voltage transfer V(Out)/V(In) with
// the op-amp model m as an exact rational function of s, in the variable
// s/ScaleRadPerSec with the stage's own scale 1/(R·C) (R, C the geometric
// means of its resistors and capacitors; ωt for a stage without
// capacitors). See [Stage.TransferFunctionScaled] and the package
// documentation (# Analysis) for how it is computed.
func (st Stage) TransferFunction(m Model) (Rational, error) {
	return st.TransferFunctionScaled(m, 0)
}

// TransferFunctionScaled is [Stage.TransferFunction] with the caller's
// scale in rad/s, for instance 2π times the section's design f0; 0 selects
// the stage's own scale. The numerator and denominator are the nodal
// cofactor and determinant, of degree at most the number of capacitors
// plus single-pole op-amps, interpolated from their values on circles
// |s| = ρ·scale. It returns an error wrapping [ErrInvalid] for an invalid
// stage, model or scale, and one wrapping [ErrSingular] when the nodal
// determinant vanishes identically.
func (st Stage) TransferFunctionScaled(m Model, scaleRadPerSec float64) (Rational, error) {
	if err := m.Validate(); err != nil {
		return Rational{}, err
	}
	t, err := st.check()
	if err != nil {
		return Rational{}, err
	}
	return st.transferFunction(m, t, scaleRadPerSec)
}

// transferFunction is TransferFunctionScaled for a valid stage with node
// table t and a valid model.
func (st Stage) transferFunction(m Model, t *nodeTable, scale float64) (Rational, error) {
	natural, _ := stageScale(st, m)
	if scale == 0 {
		scale = natural
	}
	if !finitePositive(scale) {
		return Rational{}, invalidf("scale %v rad/s is not finite and > 0", scale)
	}
	// Interpolate at the stage's natural scale, where the matrix entries
	// are of order one on the unit circle, then change variable exactly:
	// p_natural = p·(scale/natural).
	sys := compile(st, m, t, natural)
	num, den := sys.interpolate()
	if k := scale / natural; k != 1 {
		kj := 1.0
		for j := range num {
			num[j] *= kj
			den[j] *= kj
			kj *= k
		}
	}
	lo := slices.IndexFunc(den, func(v float64) bool { return v != 0 })
	if lo < 0 {
		return Rational{}, fmt.Errorf("%w: the nodal determinant is identically zero", ErrSingular)
	}
	d := den[lo]
	for i := range num {
		num[i] /= d
		den[i] /= d
		if math.IsInf(num[i], 0) || math.IsNaN(num[i]) || math.IsInf(den[i], 0) || math.IsNaN(den[i]) {
			return Rational{}, invalidf("scale %v rad/s is too far from the stage's natural scale %v rad/s", scale, natural)
		}
	}
	r := Rational{Num: trimPoly(num), Den: trimPoly(den), ScaleRadPerSec: scale}
	r.SectionOrder = len(r.Den) - 1
	if !m.Ideal {
		r.SectionOrder = max(0, r.SectionOrder-len(st.OpAmps))
	}
	return r, nil
}

// trimPoly drops trailing zero coefficients, keeping at least one.
func trimPoly(c []float64) []float64 {
	n := len(c)
	for n > 1 && c[n-1] == 0 {
		n--
	}
	return c[:n:n]
}

// circle holds one interpolation pass at radius rho: the coefficients of
// each polynomial and the noise floor of each, in value units (the
// rounding error of a term c_j·rho^j).
type circle struct {
	rho   float64
	coef  [][]float64
	noise []float64
}

// sampler sets v[i] to the value of polynomial i at p; len(v) is the
// number of polynomials interpolated together.
type sampler func(p complex128, v []complex128)

// onCircle samples the polynomials of sample (np of them, degree at most
// sys.deg: det A(p) and cofactors of A(p)) at m points (m even,
// m ≥ deg+1+extraBins) p_k = rho·e^(iθ_k), θ_k = π(2k+1)/m, and inverts the
// discrete Fourier transform. The points avoid the real axis, where real
// poles lie, and come in conjugate pairs (θ_m−1−k = 2π − θ_k), so only the
// upper half is evaluated: the polynomials are real, so their values at
// conjugate points are conjugate. With degree < m there is no aliasing:
// the coefficients are exact up to rounding, and the transform, unitary
// up to the factor m, spreads the samples' rounding errors evenly over
// the m bins. The bins above the degree bound hold nothing else, so their
// largest magnitude (or ε times the largest sample, if more) is the noise
// floor of every bin of that polynomial. It is measured, not bounded,
// because at radii far from the stage's scale a low-degree cofactor of a
// matrix with large entries is small by cancellation and its error is far
// above ε·|value|. vals holds m·np values and w m values of scratch.
func (sys *system) onCircle(rho float64, m, np int, sample sampler, vals, w []complex128) circle {
	deg := sys.deg
	c := circle{rho: rho, coef: make([][]float64, np), noise: make([]float64, np)}
	for i := range c.coef {
		c.coef[i] = make([]float64, deg+1)
	}
	half := m / 2
	pw := w[half:] // w[:half] holds e^(−iθ_k), k < half
	maxV := make([]float64, np)
	for k := 0; k < half; k++ {
		sin, cos := math.Sincos(math.Pi * float64(2*k+1) / float64(m))
		v := vals[k*np : k*np+np]
		sample(complex(rho*cos, rho*sin), v)
		w[k] = complex(cos, -sin)
		for i, x := range v {
			maxV[i] = math.Max(maxV[i], lu.Abs1(x))
		}
	}
	const eps = 0x1p-52
	for i := range c.noise {
		c.noise[i] = eps * maxV[i]
	}
	// c_j·rho^j = (1/m)·Σ_k v_k·e^(−ijθ_k) = (2/m)·Re Σ_{k<m/2} v_k·e^(−ijθ_k).
	for k := range half {
		pw[k] = 1
	}
	sum := maxV // reused: the sums of bin j
	rj := 1.0
	for j := 0; j < m; j++ {
		clear(sum)
		for k := 0; k < half; k++ {
			for i, x := range vals[k*np : k*np+np] {
				sum[i] += real(x * pw[k])
			}
			pw[k] *= w[k]
		}
		for i := range sum {
			sum[i] *= 2 / float64(m)
		}
		if j > deg {
			for i, s := range sum {
				c.noise[i] = math.Max(c.noise[i], math.Abs(s))
			}
			continue
		}
		for i, s := range sum {
			c.coef[i][j] = s / rj
		}
		rj *= rho
	}
	return c
}

// interpolate returns the numerator and denominator coefficients
// (ascending powers of p, length deg+1) of V(Out) = num/det.
func (sys *system) interpolate() (num, den []float64) {
	c := sys.interpolateAll(2, func(p complex128, v []complex128) {
		v[0], v[1] = sys.detNum(p)
	})
	return c[1], c[0]
}

// interpolateAll returns the coefficients (ascending powers of p, length
// deg+1) of the np polynomials of sample.
//
// One circle at |p| = 1 settles every coefficient whose term there is well
// above the noise floor (relative error ≤ acceptRel). Any other (the
// op-amps' far poles, or a structural zero showing as noise) is measured
// again on the circle where its term is largest relative to the others of
// its polynomial, as estimated from the first pass, and there it is either
// accurate or below noiseFactor times that circle's noise floor, and then
// exactly zero; so is a coefficient whose estimate is negligible
// everywhere in the window.
func (sys *system) interpolateAll(np int, sample sampler) [][]float64 {
	m := (sys.deg + 2 + extraBins) &^ 1 // even, ≥ deg+1+extraBins
	vals := make([]complex128, m*np)
	w := make([]complex128, m)
	base := sys.onCircle(1, m, np, sample, vals, w)
	coef := base.coef

	type redo struct {
		key  int // radius 10^(key/2)
		poly int
		j    int
	}
	var todo []redo
	logs := make([]float64, sys.deg+1)
	for pi, c := range coef {
		noise := base.noise[pi]
		for i, v := range c {
			logs[i] = math.Log(math.Abs(v))
		}
		for j, v := range c {
			if v == 0 || noise <= acceptRel*math.Abs(v) {
				continue
			}
			x, r := bestLogRadius(logs, j)
			key := int(math.Round(2 * x / math.Ln10))
			switch {
			case r < negligibleRatio:
				c[j] = 0
			case key == 0:
				if math.Abs(v) < noiseFactor*noise {
					c[j] = 0
				}
			default:
				todo = append(todo, redo{key: key, poly: pi, j: j})
			}
		}
	}
	slices.SortFunc(todo, func(a, b redo) int { return a.key - b.key })
	for i := 0; i < len(todo); {
		key := todo[i].key
		c := sys.onCircle(math.Pow(10, float64(key)/2), m, np, sample, vals, w)
		for ; i < len(todo) && todo[i].key == key; i++ {
			t := todo[i]
			v := c.coef[t.poly][t.j]
			if math.Abs(v)*math.Pow(c.rho, float64(t.j)) < noiseFactor*c.noise[t.poly] {
				v = 0
			}
			coef[t.poly][t.j] = v
		}
	}
	return coef
}

// bestLogRadius returns the log-radius x in the window at which term j of
// a polynomial with log-magnitude coefficients logs is largest relative to
// the largest term, preferring the x nearest 0 among the best, and that
// ratio. Terms with log −Inf (exact zeros) are ignored.
func bestLogRadius(logs []float64, j int) (x, ratio float64) {
	lim := windowDecades * math.Ln10
	cands := []float64{0, -lim, lim}
	for i := range logs {
		for k := i + 1; k < len(logs); k++ {
			if math.IsInf(logs[i], -1) || math.IsInf(logs[k], -1) {
				continue
			}
			if b := (logs[i] - logs[k]) / float64(k-i); b > -lim && b < lim {
				cands = append(cands, b)
			}
		}
	}
	const tie = 1e-9
	best := math.Inf(-1)
	for _, xc := range cands {
		top := math.Inf(-1)
		for i, l := range logs {
			top = math.Max(top, l+float64(i)*xc)
		}
		f := logs[j] + float64(j)*xc - top
		switch {
		case f > best+tie:
			best, x = f, xc
		case f > best-tie && math.Abs(xc) < math.Abs(x):
			best, x = math.Max(best, f), xc
		}
	}
	return x, math.Exp(best)
}
