package verify

import (
	"slices"
)

// compiled is an expansion laid out for evaluation once per trial: the
// sum of the same monomials as [evalExpansion] with fewer operations and
// short chains of dependent ones.
//
//   - The parts are split in two halves, A (the first nA parts) and B, and
//     a monomial's product of admittances is PA[a]·PB[b], a and b the
//     bit masks of its parts in each half, PA and PB the products over
//     every subset of each half ([subsetProducts], computed once per
//     trial and stage and shared by the numerator and the denominator).
//     A monomial then costs two multiplications and an addition, all
//     independent of the monomial before.
//   - The monomials are grouped by their set of op-amp factors, and within
//     a group by their power of p: each group's polynomial Σ coef·Π y·p^caps
//     is formed first and multiplied by its Π (alpha + beta_u·p) once,
//     instead of once per monomial (a state-variable notch stage has a few
//     hundred monomials but at most sixteen sets of its four op-amps).
//
// The sum is the same as evalExpansion's up to rounding (the products and
// the sums are formed in another order).
type compiled struct {
	nA, nB int // the parts in each half: nA + nB parts in all
	groups []opGroup
	coef   []float64 // per monomial
	a, b   []uint16  // its masks of parts in halves A and B
}

// opGroup is the monomials of compiled that share the op-amp set ops; runs
// are ranges of them with one power of p.
type opGroup struct {
	ops     []int32
	runs    []capsRun
	maxCaps int
}

// capsRun is the range [lo, hi) of monomials of compiled with p^caps.
type capsRun struct {
	lo, hi, caps int
}

// compile lays out e, an expansion in nParts parts, for evaluation.
func compile(e expansion, nParts int) compiled {
	c := compiled{nA: nParts / 2, nB: nParts - nParts/2}
	ts := slices.Clone(e)
	key := func(t term) uint32 {
		var m uint32
		for _, u := range t.ops {
			m |= 1 << u
		}
		return m
	}
	slices.SortStableFunc(ts, func(x, y term) int {
		if kx, ky := key(x), key(y); kx != ky {
			if kx < ky {
				return -1
			}
			return 1
		}
		return x.caps - y.caps
	})
	for i, t := range ts {
		if i == 0 || key(t) != key(ts[i-1]) {
			c.groups = append(c.groups, opGroup{ops: t.ops})
		}
		g := &c.groups[len(c.groups)-1]
		if len(g.runs) == 0 || g.runs[len(g.runs)-1].caps != t.caps {
			g.runs = append(g.runs, capsRun{lo: i, caps: t.caps})
		}
		g.runs[len(g.runs)-1].hi = i + 1
		g.maxCaps = max(g.maxCaps, t.caps)
		var a, b uint16
		for _, v := range t.vars {
			if int(v) < c.nA {
				a |= 1 << v
			} else {
				b |= 1 << (int(v) - c.nA)
			}
		}
		c.coef = append(c.coef, t.coef)
		c.a = append(c.a, a)
		c.b = append(c.b, b)
	}
	return c
}

// subsetProducts writes into dst (length 2^len(y)) the product of y over
// every subset of its indices, dst[m] for the subset of the bits of m.
func subsetProducts(dst, y []float64) {
	dst[0] = 1
	for i, v := range y {
		half := dst[1<<i : 2<<i]
		for m, p := range dst[:1<<i] {
			half[m] = p * v
		}
	}
}

// eval writes the coefficients (ascending powers of p) of the compiled
// expansion into dst (length ≥ its degree + 1, cleared here), with pa and
// pb the subset products of the normalised admittances of the two halves
// of the parts (subsetProducts of y[:nA] and y[nA:nA+nB]), and alpha and
// beta as for evalExpansion.
func (c *compiled) eval(dst []float64, pa, pb []float64, alpha float64, beta []float64) {
	clear(dst)
	coef, ma, mb := c.coef, c.a, c.b
	for gi := range c.groups {
		g := &c.groups[gi]
		var acc [maxDegree + 2]float64
		for _, r := range g.runs {
			// Two sums, to halve the chain of dependent additions.
			var s0, s1 float64
			t := r.lo
			for ; t+1 < r.hi; t += 2 {
				s0 += coef[t] * pa[ma[t]] * pb[mb[t]]
				s1 += coef[t+1] * pa[ma[t+1]] * pb[mb[t+1]]
			}
			if t < r.hi {
				s0 += coef[t] * pa[ma[t]] * pb[mb[t]]
			}
			acc[r.caps] = s0 + s1
		}
		// acc · Π (alpha + beta_u·p), degree maxCaps + len(ops).
		d := g.maxCaps
		for _, u := range g.ops {
			b := beta[u]
			acc[d+1] = acc[d] * b
			for j := d; j > 0; j-- {
				acc[j] = acc[j]*alpha + acc[j-1]*b
			}
			acc[0] *= alpha
			d++
		}
		for j := 0; j <= d; j++ {
			dst[j] += acc[j]
		}
	}
}
