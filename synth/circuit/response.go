package circuit

import (
	"fmt"
	"math"
	"math/cmplx"
)

// Cascade is a chain of transfer functions whose response is the product
// of theirs, as for stages that each drive the next from an op-amp output.
type Cascade []Rational

// TransferFunctions validates the chain and returns each stage's
// [Stage.TransferFunction] with the chain's model, in stage order, each
// with its output open. The chain's response is their product, times the
// inter-stage loading of [Chain.Loading] when the op-amps have an output
// resistance.
func (c Chain) TransferFunctions() (Cascade, error) {
	if len(c.Stages) == 0 {
		return nil, invalidf("chain has no stages")
	}
	if err := c.Model.Validate(); err != nil {
		return nil, err
	}
	tfs := make(Cascade, len(c.Stages))
	for k, st := range c.Stages {
		t, err := st.check()
		if err == nil {
			tfs[k], err = c.Memo.transfer(st, c.Model, t, 0, st.output())
		}
		if err != nil {
			return nil, fmt.Errorf("stage %d (%s): %w", k+1, st.Topology, err)
		}
	}
	return tfs, nil
}

// AtHz returns the cascade's response H(j2πf) at fHz.
func (cs Cascade) AtHz(fHz float64) complex128 {
	h := complex(1, 0)
	w := 2 * math.Pi * fHz
	for _, r := range cs {
		n, d := r.axis(w / r.ScaleRadPerSec)
		h = div(h*n, d)
	}
	return h
}

// Response returns H(j2πf) for each f in freqHz, in dst: if len(dst) <
// len(freqHz) a new slice is allocated, and the result is dst[:len(freqHz)]
// (with a long enough dst it does not allocate). Each stage costs two
// real Horner evaluations (even and odd powers of p = jx) and one complex
// division per frequency.
func (cs Cascade) Response(dst []complex128, freqHz []float64) []complex128 {
	if len(dst) < len(freqHz) {
		dst = make([]complex128, len(freqHz))
	}
	dst = dst[:len(freqHz)]
	for i := range dst {
		dst[i] = 1
	}
	// Stage by stage: the frequencies are independent, which keeps the
	// inner loop free of a dependency chain through the stages.
	for _, r := range cs {
		sweepStage(dst, freqHz, r)
	}
	return dst
}

// maxSplit is the largest polynomial length sweepStage splits on the stack.
const maxSplit = 32

// sweepStage multiplies dst[i] by r(j2π·freqHz[i]). The coefficients are
// split into even and odd powers once, so that each frequency costs two
// real Horner evaluations in u = −x² per polynomial, where p = jx.
func sweepStage(dst []complex128, freqHz []float64, r Rational) {
	if len(r.Num) > maxSplit || len(r.Den) > maxSplit {
		k := 2 * math.Pi / r.ScaleRadPerSec
		for i, f := range freqHz {
			n, d := r.axis(k * f)
			dst[i] = div(dst[i]*n, d)
		}
		return
	}
	if len(r.Num) <= 4 && len(r.Den) <= 4 {
		sweepCubic(dst, freqHz, r)
		return
	}
	var buf [4 * maxSplit / 2]float64
	const h = maxSplit / 2
	ne, no := evenOdd(r.Num, buf[0:0:h], buf[h:h:2*h])
	de, do := evenOdd(r.Den, buf[2*h:2*h:3*h], buf[3*h:3*h:4*h])
	k := 2 * math.Pi / r.ScaleRadPerSec
	dst = dst[:len(freqHz)]
	for i, f := range freqHz {
		x := k * f
		u := -x * x
		var a, b, c, d float64 // N = a + jb, D = c + jd
		for j := len(ne) - 1; j >= 0; j-- {
			a = a*u + ne[j]
		}
		for j := len(no) - 1; j >= 0; j-- {
			b = b*u + no[j]
		}
		for j := len(de) - 1; j >= 0; j-- {
			c = c*u + de[j]
		}
		for j := len(do) - 1; j >= 0; j-- {
			d = d*u + do[j]
		}
		b *= x
		d *= x
		hr, hi := real(dst[i]), imag(dst[i])
		nr, ni := hr*a-hi*b, hr*b+hi*a
		if m := c*c + d*d; m > 1e-280 && m < 1e280 {
			inv := 1 / m
			dst[i] = complex((nr*c+ni*d)*inv, (ni*c-nr*d)*inv)
		} else {
			dst[i] = div(complex(nr, ni), complex(c, d))
		}
	}
}

// sweepCubic is sweepStage for polynomials of degree ≤ 3 (a second-order
// section and one op-amp pole, the most common stage), padded with zero
// coefficients and unrolled: the same operations in the same order, less
// the loops' overhead.
func sweepCubic(dst []complex128, freqHz []float64, r Rational) {
	var n, d [4]float64
	copy(n[:], r.Num)
	copy(d[:], r.Den)
	k := 2 * math.Pi / r.ScaleRadPerSec
	dst = dst[:len(freqHz)]
	for i, f := range freqHz {
		x := k * f
		u := -x * x
		a := n[0] + u*n[2]
		b := (n[1] + u*n[3]) * x
		c := d[0] + u*d[2]
		e := (d[1] + u*d[3]) * x
		hr, hi := real(dst[i]), imag(dst[i])
		nr, ni := hr*a-hi*b, hr*b+hi*a
		if m := c*c + e*e; m > 1e-280 && m < 1e280 {
			inv := 1 / m
			dst[i] = complex((nr*c+ni*e)*inv, (ni*c-nr*e)*inv)
		} else {
			dst[i] = div(complex(nr, ni), complex(c, e))
		}
	}
}

// MagnitudeDB returns 20·log10|H(j2πf)| for each f in freqHz, in dst (as
// for [Cascade.Response]). A zero of H exactly at a grid frequency gives
// −Inf, as in package response; callers clamp.
func (cs Cascade) MagnitudeDB(dst []float64, freqHz []float64) []float64 {
	if len(dst) < len(freqHz) {
		dst = make([]float64, len(freqHz))
	}
	dst = dst[:len(freqHz)]
	var buf [256]complex128
	for lo := 0; lo < len(freqHz); lo += len(buf) {
		f := freqHz[lo:min(lo+len(buf), len(freqHz))]
		h := cs.Response(buf[:], f)
		for i, v := range h {
			dst[lo+i] = 20 * math.Log10(cmplx.Abs(v))
		}
	}
	return dst
}

// checkFreqs reports a frequency that is not finite and ≥ 0.
func checkFreqs(freqHz []float64) error {
	for i, f := range freqHz {
		if !(f >= 0) || math.IsInf(f, 1) {
			return invalidf("freqHz[%d] = %v is not finite and >= 0", i, f)
		}
	}
	return nil
}

// Response returns the chain's voltage transfer V(out)/V(in) at each
// frequency of freqHz (finite, ≥ 0), in dst as for [Cascade.Response]. It
// computes every stage's rational transfer function once (see
// [Chain.TransferFunctions]) and evaluates their product, times the
// inter-stage loading (see [Chain.Loading]); callers that
// sweep the same chain repeatedly can keep the [Cascade] instead. It
// returns an error wrapping [ErrInvalid] for an invalid chain or
// frequency, or one wrapping [ErrSingular].
func (c Chain) Response(dst []complex128, freqHz []float64) ([]complex128, error) {
	if err := checkFreqs(freqHz); err != nil {
		return nil, err
	}
	tfs, err := c.TransferFunctions()
	if err != nil {
		return nil, err
	}
	load, err := c.Loading()
	if err != nil {
		return nil, err
	}
	dst = tfs.Response(dst, freqHz)
	load.Apply(dst, freqHz)
	return dst, nil
}

// MagnitudeDB returns 20·log10|V(out)/V(in)| at each frequency of freqHz,
// in dst, as [Chain.Response] and [Cascade.MagnitudeDB].
func (c Chain) MagnitudeDB(dst []float64, freqHz []float64) ([]float64, error) {
	if err := checkFreqs(freqHz); err != nil {
		return nil, err
	}
	tfs, err := c.TransferFunctions()
	if err != nil {
		return nil, err
	}
	load, err := c.Loading()
	if err != nil {
		return nil, err
	}
	dst = tfs.MagnitudeDB(dst, freqHz)
	load.ApplyDB(dst, freqHz)
	return dst, nil
}
