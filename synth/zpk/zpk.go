package zpk

import (
	"math"
	"math/cmplx"
)

// ZPK is a transfer function in zero/pole/gain form:
// H(s) = Gain·∏(s−Zeros[i]) / ∏(s−Poles[j]).
type ZPK struct {
	// Zeros are the finite zeros, conjugates included.
	Zeros []complex128
	// Poles are the poles, conjugates included.
	Poles []complex128
	// Gain is the multiplier K in front of the factored products.
	Gain float64
}

// At returns H(s). It returns ±Inf (complex infinity) at a pole.
func (h ZPK) At(s complex128) complex128 {
	v := complex(h.Gain, 0)
	for _, z := range h.Zeros {
		v *= s - z
	}
	for _, p := range h.Poles {
		v /= s - p
	}
	return v
}

// AtOmega returns H(jω) for ω in rad/s.
func (h ZPK) AtOmega(omegaRadPerSec float64) complex128 {
	return h.At(complex(0, omegaRadPerSec))
}

// MagnitudeAt returns |H(jω)|, computed as a product of distances so that it
// neither overflows nor underflows for high orders as long as the result is
// representable.
func (h ZPK) MagnitudeAt(omegaRadPerSec float64) float64 {
	s := complex(0, omegaRadPerSec)
	logMag := math.Log(math.Abs(h.Gain))
	for _, z := range h.Zeros {
		logMag += math.Log(cmplx.Abs(s - z))
	}
	for _, p := range h.Poles {
		logMag -= math.Log(cmplx.Abs(s - p))
	}
	return math.Exp(logMag)
}

// Order returns the number of poles.
func (h ZPK) Order() int { return len(h.Poles) }

// Clone returns a deep copy of h.
func (h ZPK) Clone() ZPK {
	return ZPK{
		Zeros: append([]complex128(nil), h.Zeros...),
		Poles: append([]complex128(nil), h.Poles...),
		Gain:  h.Gain,
	}
}

// Scale returns h with every zero and pole multiplied by factor, and the
// gain changed so that H'(s) = H(s/factor): the response moves up in
// frequency by factor and keeps its shape. It panics if factor is not
// positive.
func (h ZPK) Scale(factor float64) ZPK {
	if !(factor > 0) {
		panic("zpk: Scale factor must be positive")
	}
	out := ZPK{Zeros: make([]complex128, len(h.Zeros)), Poles: make([]complex128, len(h.Poles)), Gain: h.Gain}
	for i, z := range h.Zeros {
		out.Zeros[i] = z * complex(factor, 0)
	}
	for i, p := range h.Poles {
		out.Poles[i] = p * complex(factor, 0)
	}
	// H(s/a) = K·∏(s/a−z)/∏(s/a−p) = K·a^(np−nz)·∏(s−az)/∏(s−ap).
	out.Gain *= math.Pow(factor, float64(len(h.Poles)-len(h.Zeros)))
	return out
}
