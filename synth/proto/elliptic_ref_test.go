package proto_test

import (
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/polewright/polewright/synth/proto"
)

// High-precision elliptic references, for designs where scipy's own float64
// route is not accurate enough to judge the small real parts of the poles
// next to the band edge. Computed with mpmath 1.2.1 (Debian python3-mpmath)
// at 60 significant digits straight from the definitions, independently of
// this package's algorithm:
//
//	ep, es = sqrt(10**(ap/10)-1), sqrt(10**(as/10)-1); k1 = ep/es
//	K1, K1p = ellipk(k1**2), ellipk(1-k1**2)
//	k = kfrom(q=exp(-pi*K1p/(N*K1))); K = ellipk(k**2)
//	v0 = ellipf(atan(1/ep), 1-k1**2)/K1/N
//	poles j*ellipfun('cd', (u-j*v0)*K, m=k**2), u = (2i-1)/N
//	(and j*ellipfun('sn', j*v0*K, m=k**2) for odd N)
//	zeros j/(k*ellipfun('cd', u*K, m=k**2))
//
// and rounded to 20 digits. Upper-half-plane members only.
var ellipticRefs = []struct {
	n          int
	ap, as     float64
	poles      []complex128
	zeros      []float64 // imaginary parts
	stopbandWs float64   // 1/k
}{
	{
		// ωs − 1 = 2.6e-8: very selective.
		n: 14, ap: 1.079, as: 13.41,
		poles: []complex128{
			complex(-2.3343283724332042975e-8, 1.00000000353755506),
			complex(-4.051819210106786671e-7, 0.99999986616251816454),
			complex(-6.6044212840038081898e-6, 0.99999761902717272737),
			complex(-0.00010762296161545759681, 0.99996099409346686865),
			complex(-0.001752795215448625236, 0.99936289981270958076),
			complex(-0.028282480733391252038, 0.98929054524286108685),
			complex(-0.37861824487242555288, 0.76299154666572436503),
		},
		zeros:      []float64{1.0000000411818333297, 1.0000004442861752364, 1.0000070381045659641, 1.0001144997736228066, 1.001867343000010643, 1.0308712366693273764, 1.6585766876304779678},
		stopbandWs: 1 / 0.99999997378860787743,
	},
	{
		// k = 2.5e-4: barely selective, tiny ripple.
		n: 2, ap: 0.001, as: 120,
		poles:      []complex128{complex(-4.0281742635504551581, 4.0897702690655507739)},
		zeros:      []float64{5740.0884299271753945},
		stopbandWs: 1 / 0.00024637487190429738798,
	},
	{
		n: 7, ap: 0.1, as: 80,
		poles: []complex128{
			complex(-0.064533858885591121387, 1.0345655750644746022),
			complex(-0.2067434820459138092, 0.87647786255706518813),
			complex(-0.35556098835223791444, 0.52457950219492893843),
			complex(-0.42774122994395854669, 0),
		},
		zeros:      []float64{1.6901507447490130374, 2.0327689989368632635, 3.4944170884877950484},
		stopbandWs: 1 / 0.60375434512618578158,
	},
}

func TestEllipticMatchesMpmath(t *testing.T) {
	t.Parallel()
	for _, c := range ellipticRefs {
		t.Run(fmt.Sprintf("n=%d/ap=%g/as=%g", c.n, c.ap, c.as), func(t *testing.T) {
			t.Parallel()
			h, err := proto.Lowpass(proto.Elliptic, c.n, c.ap, c.as)
			require.NoError(t, err)
			// Our canonical order: pairs by increasing imaginary part,
			// upper member first, then the real pole.
			var upper []complex128
			for i, p := range h.Poles {
				if imag(p) > 0 || (imag(p) == 0 && i == len(h.Poles)-1) {
					upper = append(upper, p)
				}
			}
			require.Len(t, upper, len(c.poles))
			for _, want := range c.poles {
				best := upper[0]
				for _, p := range upper {
					if math.Abs(imag(p)-imag(want)) < math.Abs(imag(best)-imag(want)) {
						best = p
					}
				}
				// Each part relative to itself: the real parts of the
				// poles next to ω = 1 are what the band-edge loss hangs on.
				require.InEpsilon(t, real(want), real(best), 1e-12, "real part, pole %v", want)
				if imag(want) != 0 {
					require.InEpsilon(t, imag(want), imag(best), 1e-14, "imaginary part, pole %v", want)
				} else {
					require.Zero(t, imag(best))
				}
			}
			require.Len(t, h.Zeros, 2*len(c.zeros))
			// The selectivity k comes from the nome exp(−π·K′/K), whose
			// relative error is π·K′/K (about 20 for the n = 2 case) times
			// that of K′/K: hence 1e-13 for what scales with 1/k.
			for i, want := range c.zeros {
				// Zeros come in increasing order too.
				require.InEpsilon(t, want, imag(h.Zeros[2*i]), 1e-13, "zero %d", i)
			}
			ws, err := proto.StopbandEdge(proto.Elliptic, c.n, c.ap, c.as)
			require.NoError(t, err)
			require.InEpsilon(t, c.stopbandWs, ws, 1e-13)
		})
	}
}
