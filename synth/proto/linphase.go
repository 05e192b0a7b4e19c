package proto

import (
	"fmt"
	"math"
	"math/cmplx"
	"sync"

	"github.com/polewright/polewright/synth/zpk"
)

// The linear-phase prototype with equiripple phase error is the all-pole
// H(s) = 1/D(s), D(0) = 1, whose phase follows a unit delay, −ω, with an
// error that reaches ±δ alternately at n frequencies 0 < ω_1 < … < ω_n
// and stays within ±δ from 0 up to the band edge beyond ω_n where it
// leaves the band (the phase error of D, e(ω) = arg D(jω) − ω, is +δ at
// ω_n, −δ at ω_{n−1}, …). As δ → 0 it becomes the Bessel filter.
//
// Method (a Remez exchange on the phase, as in the equal-ripple delay
// approximations of Ulbrich and Piloty): D(jω) = E(ω) + j·O(ω) with E even
// and O odd, both kept in the Chebyshev basis of u = ω/Ω, Ω the current
// last extremum, so that no power-basis coefficient is formed. For trial
// points ω_i the conditions arg D(jω_i) = ω_i + e_i (e_i = ±δ) read
// E(ω_i)·sin(ω_i+e_i) − O(ω_i)·cos(ω_i+e_i) = 0, which together with
// E(0) = 1 is a linear system for the n+1 coefficients. The new trial
// points are the extrema of the resulting error, located on a grid and
// refined by golden-section search; the exchange stops when every
// extremum is ±δ to 1e-9·δ. Each order starts from the previous order's
// extrema (continuation from n = 1), which keeps every exchange inside
// its basin; the family for one δ is computed once and cached. The poles
// are the zeros of D, found by the Aberth–Ehrlich iteration on the
// Chebyshev series from the unit-delay Bessel poles, and are finally
// scaled so that the loss at 1 rad/s is rippleDB.

// DefaultPhaseErrorDeg is the phase ripple of the linear-phase prototype
// when none is given, in degrees.
const DefaultPhaseErrorDeg = 0.05

// MinPhaseErrorDeg and MaxPhaseErrorDeg bound the phase ripple accepted
// for the linear-phase prototype, in degrees: the range over which the
// exchange was checked to converge at every order up to
// [LinearPhaseMaxOrder] and the magnitude checked to fall monotonically.
const (
	MinPhaseErrorDeg = 0.01
	MaxPhaseErrorDeg = 2
)

// LinearPhaseMaxOrder is the highest order of the linear-phase prototype.
const LinearPhaseMaxOrder = 20

// linPhase is one member of the family: Chebyshev coefficients c (in
// u = ω/om) of D(jω) = Σ c_j·(j odd ? i : 1)·T_j(u), its extrema ext and
// its band edge (unit-delay scale).
type linPhase struct {
	c    []float64
	om   float64
	ext  []float64
	band float64

	// poles (canonical order, unit-delay scale) and dip, the lowest loss
	// below DC (allPoleDipDB), filled once by unitPolesDip.
	once  sync.Once
	poles []complex128
	dip   float64
}

// unitPolesDip returns the member's poles on the unit-delay scale and its
// dip, computing them on first use; poles is nil if the zeros of D could
// not be found in the left half plane. The caller must not modify poles.
func (l *linPhase) unitPolesDip(n int) ([]complex128, float64) {
	l.once.Do(func() {
		upper, reals, ok := l.unitPoles(n)
		if !ok || 2*len(upper)+len(reals) != n {
			return
		}
		l.poles = assemble(upper, reals...)
		l.dip = allPoleDipDB(l.poles)
	})
	return l.poles, l.dip
}

// eo returns E(ω) and O(ω) with D(jω) = E + j·O.
func (l *linPhase) eo(w float64) (e, o float64) {
	u := w / l.om
	t0, t1 := 1.0, u
	e = l.c[0]
	if len(l.c) > 1 {
		o = l.c[1] * u
	}
	for j := 2; j < len(l.c); j++ {
		t0, t1 = t1, 2*u*t1-t0
		if j%2 == 0 {
			e += l.c[j] * t1
		} else {
			o += l.c[j] * t1
		}
	}
	return e, o
}

// phaseNear returns arg D(jω), the branch nearest to ref.
func (l *linPhase) phaseNear(w, ref float64) float64 {
	e, o := l.eo(w)
	p := math.Atan2(o, e)
	return p + 2*math.Pi*math.Round((ref-p)/(2*math.Pi))
}

// fitLinPhase solves the linear conditions for trial points w (ascending)
// and ripple delta; om is w[n−1].
func fitLinPhase(w []float64, delta float64) *linPhase {
	n := len(w)
	om := w[n-1]
	a := make([]float64, (n+1)*(n+1))
	b := make([]float64, n+1)
	// Row 0: E(0) = Σ_{j even} c_j·T_j(0) = Σ c_j·(−1)^(j/2) = 1.
	for j := 0; j <= n; j += 2 {
		a[j] = 1 - 2*float64((j/2)%2)
	}
	b[0] = 1
	for i := 1; i <= n; i++ {
		s := delta
		if (n-i)%2 == 1 {
			s = -delta
		}
		th := w[i-1] + s
		sn, cs := math.Sincos(th)
		u := w[i-1] / om
		row := a[i*(n+1) : (i+1)*(n+1)]
		t0, t1 := 1.0, u
		for j := 0; j <= n; j++ {
			var t float64
			switch j {
			case 0:
				t = t0
			case 1:
				t = t1
			default:
				t0, t1 = t1, 2*u*t1-t0
				t = t1
			}
			if j%2 == 0 {
				row[j] = t * sn
			} else {
				row[j] = -t * cs
			}
		}
	}
	c, ok := solveDense(a, b, n+1)
	if !ok {
		return nil
	}
	return &linPhase{c: c, om: om}
}

// solveDense solves the m×m system a·x = b (row-major, overwritten) by
// Gaussian elimination with partial pivoting.
func solveDense(a, b []float64, m int) ([]float64, bool) {
	for k := range m {
		p := k
		for i := k + 1; i < m; i++ {
			if math.Abs(a[i*m+k]) > math.Abs(a[p*m+k]) {
				p = i
			}
		}
		if a[p*m+k] == 0 {
			return nil, false
		}
		if p != k {
			for j := range m {
				a[k*m+j], a[p*m+j] = a[p*m+j], a[k*m+j]
			}
			b[k], b[p] = b[p], b[k]
		}
		for i := k + 1; i < m; i++ {
			f := a[i*m+k] / a[k*m+k]
			if f == 0 {
				continue
			}
			for j := k; j < m; j++ {
				a[i*m+j] -= f * a[k*m+j]
			}
			b[i] -= f * b[k]
		}
	}
	x := make([]float64, m)
	for i := m - 1; i >= 0; i-- {
		s := b[i]
		for j := i + 1; j < m; j++ {
			s -= a[i*m+j] * x[j]
		}
		x[i] = s / a[i*m+i]
	}
	for _, v := range x {
		if !finite(v) {
			return nil, false
		}
	}
	return x, true
}

// extrema returns the first n local extrema of the phase error of l on
// (0, 3·om], refined by golden-section search, with the error at each,
// and the band edge: where, beyond the last extremum, the error first
// reaches −δ. ok is false if fewer than n extrema exist, the phase jumps
// (a zero of D near the jω axis), or the error leaves ±(δ + 1 rad).
func (l *linPhase) extrema(n int, delta float64) (ext, val []float64, band float64, ok bool) {
	hi := 3 * l.om
	m := 24 * (n + 4)
	h := hi / float64(m)
	errAt := func(w, ref float64) (float64, float64) {
		p := l.phaseNear(w, ref)
		return p - w, p
	}
	prevE, prevP := 0.0, 0.0
	dir := 0.0
	for i := 1; i <= m; i++ {
		w := h * float64(i)
		e, p := errAt(w, prevP+h)
		if math.Abs(p-prevP) > 1.5 {
			return nil, nil, 0, false // phase jump: not a delay approximation
		}
		d := e - prevE
		if dir != 0 && d*dir < 0 && len(ext) < n {
			// prevE at w−h is an extremum: refine in [w−2h, w].
			x, v := goldenExtremum(func(x float64) float64 {
				ee, _ := errAt(x, prevP+(x-w+h))
				return ee
			}, w-2*h, w, dir > 0)
			ext = append(ext, x)
			val = append(val, v)
		}
		if len(ext) == n && band == 0 && e <= -delta {
			// Bisect the crossing of −δ in [w−h, w].
			lo, up := w-h, w
			for range 60 {
				mid := (lo + up) / 2
				if ee, _ := errAt(mid, prevP); ee > -delta {
					lo = mid
				} else {
					up = mid
				}
			}
			band = (lo + up) / 2
			break
		}
		if d != 0 {
			dir = d
		}
		prevE, prevP = e, p
	}
	if len(ext) < n || band == 0 {
		return nil, nil, 0, false
	}
	for _, v := range val {
		if math.Abs(v) > delta+1 {
			return nil, nil, 0, false
		}
	}
	return ext, val, band, true
}

// goldenExtremum returns the location and value of the maximum (max) or
// minimum of f in [a, b] by golden-section search.
func goldenExtremum(f func(float64) float64, a, b float64, max bool) (float64, float64) {
	g := (math.Sqrt(5) - 1) / 2
	sign := 1.0
	if !max {
		sign = -1
	}
	x1, x2 := b-g*(b-a), a+g*(b-a)
	f1, f2 := sign*f(x1), sign*f(x2)
	for range 80 {
		// The value at an extremum is quadratic in the location: 1e-7
		// relative in ω leaves about 1e-13 of δ.
		if b-a <= 1e-7*b {
			break
		}
		if f1 > f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - g*(b-a)
			f1 = sign * f(x1)
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + g*(b-a)
			f2 = sign * f(x2)
		}
	}
	if f1 > f2 {
		return x1, sign * f1
	}
	return x2, sign * f2
}

// remezLinPhase runs the exchange for order n = len(w) from trial points
// w; nil if it does not settle in 30 exchanges.
func remezLinPhase(w []float64, delta float64) *linPhase {
	n := len(w)
	w = append([]float64(nil), w...)
	for range 30 {
		l := fitLinPhase(w, delta)
		if l == nil {
			return nil
		}
		ext, val, band, ok := l.extrema(n, delta)
		if !ok {
			return nil
		}
		worst := 0.0
		for i, v := range val {
			s := 1.0
			if (n-1-i)%2 == 1 {
				s = -1
			}
			worst = math.Max(worst, math.Abs(s*v/delta-1))
		}
		if worst < 1e-9 {
			l.ext, l.band = ext, band
			return l
		}
		if worst > 1e3 {
			return nil
		}
		copy(w, ext)
	}
	return nil
}

// linPhaseFamily holds the solutions of orders 1…len(sols) for one δ.
type linPhaseFamily struct {
	delta float64
	mu    sync.Mutex
	sols  []*linPhase
	// failed is the first order whose exchange did not settle (0: none).
	failed int
}

// upTo extends the family to order n and returns that member, or nil if
// the exchange failed at or below n.
func (f *linPhaseFamily) upTo(n int) *linPhase {
	f.mu.Lock()
	defer f.mu.Unlock()
	for len(f.sols) < n {
		if f.failed != 0 {
			return nil
		}
		k := len(f.sols) + 1
		var w []float64
		if k == 1 {
			w = []float64{0.5}
		} else {
			// Predictor: the previous extrema stretched by 1 + 1/(2k),
			// one more beyond the last at one and a half spacings.
			prev := f.sols[k-2].ext
			r := 1 + 0.5/float64(k)
			step := 1.2
			if len(prev) >= 2 {
				step = prev[len(prev)-1] - prev[len(prev)-2]
			}
			for _, x := range prev {
				w = append(w, x*r)
			}
			w = append(w, prev[len(prev)-1]*r+1.5*step)
		}
		l := remezLinPhase(w, f.delta)
		if l == nil {
			f.failed = k
			return nil
		}
		f.sols = append(f.sols, l)
	}
	return f.sols[n-1]
}

// linPhaseCache keeps the families of the most recent few δ (the default
// 0.05° among them in practice); each costs at most 20 exchanges to build.
var linPhaseCache struct {
	mu   sync.Mutex
	fams []*linPhaseFamily
}

const linPhaseCacheSize = 8

func linPhaseFamilyFor(deltaRad float64) *linPhaseFamily {
	c := &linPhaseCache
	c.mu.Lock()
	defer c.mu.Unlock()
	for i, f := range c.fams {
		if f.delta == deltaRad {
			// Move to the front.
			copy(c.fams[1:i+1], c.fams[:i])
			c.fams[0] = f
			return f
		}
	}
	f := &linPhaseFamily{delta: deltaRad}
	if len(c.fams) < linPhaseCacheSize {
		c.fams = append(c.fams, nil)
	}
	copy(c.fams[1:], c.fams[:len(c.fams)-1])
	c.fams[0] = f
	return f
}

// linPhaseUnit returns the unit-delay member of order n for phase ripple
// phaseErrorDeg, or nil if it cannot be computed.
func linPhaseUnit(n int, phaseErrorDeg float64) *linPhase {
	return linPhaseFamilyFor(phaseErrorDeg * math.Pi / 180).upTo(n)
}

// unitPoles returns the zeros of D for the order-n member l, as upper
// members of conjugate pairs and real zeros.
func (l *linPhase) unitPoles(n int) (upper []complex128, reals []float64, ok bool) {
	// p(u) = Σ c_j·(j odd ? i : 1)·T_j(u), with s = i·om·u.
	step := func(u complex128) complex128 {
		t0, t1 := complex128(1), u
		d0, d1 := complex128(0), complex128(1)
		v := complex(l.c[0], 0)
		var dv complex128
		if n >= 1 {
			v += complex(0, l.c[1]) * u
			dv = complex(0, l.c[1])
		}
		for j := 2; j <= n; j++ {
			t0, t1 = t1, 2*u*t1-t0
			d0, d1 = d1, 2*t0+2*u*d1-d0
			cj := complex(l.c[j], 0)
			if j%2 == 1 {
				cj = complex(0, l.c[j])
			}
			v += cj * t1
			dv += cj * d1
		}
		return v / dv
	}
	z := besselRoots(n)
	jom := complex(0, l.om)
	for i, s := range z {
		z[i] = s / jom
	}
	if !aberthAll(z, step, 1e-14, 1e-9, 200) {
		return nil, nil, false
	}
	for i, u := range z {
		z[i] = u * jom
		if !(real(z[i]) < 0) {
			return nil, nil, false
		}
	}
	return splitConjugates(z)
}

// allPoleLossDB returns the loss in dB at ω of the all-pole filter with
// the given poles (|H(0)| = 1) and its derivative in ω.
func allPoleLossDB(poles []complex128, w float64) (l, dl float64) {
	for _, p := range poles {
		d := complex(0, w) - p
		m := real(d)*real(d) + imag(d)*imag(d)
		l += math.Log(m / (real(p)*real(p) + imag(p)*imag(p)))
		dl += 2 * imag(d) / m
	}
	return l * (10 / math.Ln10), dl * (10 / math.Ln10)
}

// allPoleOmega returns the lowest ω > 0 where the all-pole filter's loss
// reaches lossDB: doubling from below, then Newton with bisection.
func allPoleOmega(poles []complex128, lossDB float64) float64 {
	lo, hi := 0.0, 1e-3
	for range 2000 {
		if l, _ := allPoleLossDB(poles, hi); l >= lossDB {
			break
		}
		lo, hi = hi, 2*hi
	}
	x := (lo + hi) / 2
	for range 200 {
		l, dl := allPoleLossDB(poles, x)
		if l < lossDB {
			lo = x
		} else {
			hi = x
		}
		next := x - (l-lossDB)/dl
		if !(next > lo && next < hi) {
			next = (lo + hi) / 2
		}
		if math.Abs(next-x) <= 1e-16*x || hi-lo <= 1e-16*hi {
			return next
		}
		x = next
	}
	return x
}

// allPoleDipDB returns the lowest loss in dB (≤ 0) of the all-pole filter
// with the given poles (|H(0)| = 1) below the frequency where its loss
// first reaches 3 dB: some linear-phase prototypes (the larger δ, the
// higher n) rise a little above their DC gain before they fall.
func allPoleDipDB(poles []complex128) float64 {
	top := allPoleOmega(poles, 3)
	const m = 256
	best, at := 0.0, 0.0
	for i := 1; i <= m; i++ {
		w := top * float64(i) / m
		if l, _ := allPoleLossDB(poles, w); l < best {
			best, at = l, w
		}
	}
	if best == 0 {
		return 0
	}
	h := top / m
	_, v := goldenExtremum(func(w float64) float64 {
		l, _ := allPoleLossDB(poles, w)
		return l
	}, math.Max(0, at-h), at+h, false)
	return math.Min(best, v)
}

// linearPhase returns the linear-phase prototype normalised to rippleDB
// at 1 rad/s (relative to its passband maximum), the frequency scale w0
// (1 rad/s of the prototype is w0 on the unit-delay scale, so its delay
// is w0 seconds at 1 rad/s) and the dip d ≤ 0 of its loss below DC in dB
// (|H(0)| = 10^(d/20)). w0 is 0 if the prototype cannot be computed or
// rippleDB is not above −d (dip is then still reported).
func linearPhase(n int, rippleDB, phaseErrorDeg float64) (h zpk.ZPK, w0, dip float64) {
	bad := zpk.ZPK{Gain: math.NaN()}
	l := linPhaseUnit(n, phaseErrorDeg)
	if l == nil {
		return bad, 0, 0
	}
	unit, dip := l.unitPolesDip(n)
	if unit == nil {
		return bad, 0, 0
	}
	poles := append([]complex128(nil), unit...)
	if !(rippleDB+dip > 0) {
		return bad, 0, dip
	}
	w0 = allPoleOmega(poles, rippleDB+dip)
	lg := dip * (math.Ln10 / 20)
	for i, p := range poles {
		poles[i] = p / complex(w0, 0)
		lg += math.Log(cmplx.Abs(poles[i]))
	}
	return zpk.ZPK{Poles: poles, Gain: math.Exp(lg)}, w0, dip
}

// linearPhaseLossAt returns the loss in dB at ratio of the order-n
// linear-phase prototype normalised to rippleDB at 1 rad/s, or NaN.
func linearPhaseLossAt(n int, rippleDB, ratio, phaseErrorDeg float64) float64 {
	h, w0, dip := linearPhase(n, rippleDB, phaseErrorDeg)
	if w0 == 0 {
		return math.NaN()
	}
	l, _ := allPoleLossDB(h.Poles, ratio)
	return l - dip
}

// linearPhaseEdge returns the normalised frequency where the order-n
// linear-phase prototype's loss reaches attenDB.
func linearPhaseEdge(n int, rippleDB, attenDB, phaseErrorDeg float64) float64 {
	h, w0, dip := linearPhase(n, rippleDB, phaseErrorDeg)
	if w0 == 0 {
		return math.NaN()
	}
	return allPoleOmega(h.Poles, attenDB+dip)
}

// LinearPhaseDelay returns, for the order-n linear-phase prototype
// normalised as by [Lowpass] with phase ripple phaseErrorDeg, the delay
// its phase follows (seconds on the prototype's scale, 1 rad/s passband
// edge) and the band edge in rad/s up to which the phase error stays
// within ±phaseErrorDeg. Arguments are validated as for [Lowpass]; errors
// wrap [ErrBadArgument] or [ErrNotRepresentable].
func LinearPhaseDelay(n int, rippleDB, phaseErrorDeg float64) (delayS, bandRadPerSec float64, err error) {
	if err := checkOrder(n); err != nil {
		return 0, 0, err
	}
	if err := checkRipple(rippleDB); err != nil {
		return 0, 0, err
	}
	if _, err := collect(LinearPhase, []Option{PhaseErrorDeg(phaseErrorDeg)}); err != nil {
		return 0, 0, err
	}
	_, w0, _ := linearPhase(n, rippleDB, phaseErrorDeg)
	if w0 == 0 {
		return 0, 0, fmt.Errorf("%w: linear-phase order %d, rippleDB %g, phase error %g°", ErrNotRepresentable, n, rippleDB, phaseErrorDeg)
	}
	return w0, linPhaseUnit(n, phaseErrorDeg).band / w0, nil
}

// linearPhaseMinOrder searches n = 1…LinearPhaseMaxOrder for the first
// order whose loss at ratio reaches attenDB. Like Bessel's, the loss at a
// fixed ratio can rise with n to a maximum and fall back; once it falls
// without having reached attenDB no higher order is tried.
func linearPhaseMinOrder(rippleDB, attenDB, ratio, phaseErrorDeg float64) (int, error) {
	peak := math.Inf(-1)
	for n := 1; n <= LinearPhaseMaxOrder; n++ {
		l := linearPhaseLossAt(n, rippleDB, ratio, phaseErrorDeg)
		if math.IsNaN(l) {
			return 0, badArg("the linear-phase prototype of order %d with phase error %g° cannot be computed", n, phaseErrorDeg)
		}
		if l >= attenDB {
			if n <= MaxOrder {
				return n, nil
			}
			return 0, &OrderError{Needed: n, Max: MaxOrder}
		}
		if l < peak*(1-1e-12) {
			return 0, &OrderError{Max: MaxOrder, Unreachable: true, limitDB: peak}
		}
		peak = math.Max(peak, l)
	}
	return 0, &OrderError{Needed: LinearPhaseMaxOrder + 1, Max: MaxOrder, atLeast: true}
}
