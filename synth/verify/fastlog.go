package verify

import "math"

// The split of ln 2 and the polynomial coefficients of lnNormal and
// dbInPlace (FreeBSD's e_log.c).
const (
	ln2Hi = 6.93147180369123816490e-01
	ln2Lo = 1.90821492927058770002e-10
	l1    = 6.666666666666735130e-01
	l2    = 3.999999999940941908e-01
	l3    = 2.857142874366239149e-01
	l4    = 2.222219843214978396e-01
	l5    = 1.818357216161805012e-01
	l6    = 1.531383769920937332e-01
	l7    = 1.479819860511658591e-01
)

// lnNormal returns ln x for a positive normal float64 x (not Inf), with
// the algorithm and coefficients of FreeBSD's e_log.c (Sun
// Microsystems, 1993), which Go's math.Log also uses: x = 2^k·(1+f) with
// √½ ≤ 1+f < √2, ln(1+f) = 2·atanh(s), s = f/(2+f), by a degree-14
// minimax polynomial in s; error below 1 ulp. Written here without the
// special cases; dbInPlace writes it out in its loop, so that the
// divisions of consecutive frequencies overlap (on amd64 math.Log is an
// assembly routine that cannot be inlined, about three times slower in
// such a loop). lnNormal itself is the reference the tests compare
// dbInPlace with.
func lnNormal(x float64) float64 {
	b := math.Float64bits(x)
	ki := int64(b>>52) - 1022
	f1 := math.Float64frombits(b&^(0x7ff<<52) | 1022<<52) // in [0.5, 1)
	if f1 < math.Sqrt2/2 {
		f1 *= 2
		ki--
	}
	f := f1 - 1
	k := float64(ki)
	s := f / (2 + f)
	s2 := s * s
	s4 := s2 * s2
	t1 := s2 * (l1 + s4*(l3+s4*(l5+s4*l7)))
	t2 := s4 * (l2 + s4*(l4+s4*l6))
	r := t1 + t2
	hfsq := 0.5 * f * f
	return k*ln2Hi - ((hfsq - (s*(hfsq+r) + k*ln2Lo)) - f)
}

// minNormal is the least positive normal float64.
const minNormal = 0x1p-1022

// dbInPlace replaces each squared magnitude v ≥ 0 of db by 10·log10(v),
// with 0 as −Inf and NaN (0·∞) as −Inf; negative values (markers of
// the caller's) are left alone. The logarithm of normal values is
// lnNormal's, written out in the loop so that consecutive values
// overlap.
func dbInPlace(db []float64) {
	for i, x := range db {
		if !(x >= minNormal && x <= math.MaxFloat64) {
			if !(x < 0) {
				db[i] = toDB(x, 0)
			}
			continue
		}
		b := math.Float64bits(x)
		ki := int64(b>>52) - 1022
		f1 := math.Float64frombits(b&^(0x7ff<<52) | 1022<<52)
		if f1 < math.Sqrt2/2 {
			f1 *= 2
			ki--
		}
		f := f1 - 1
		k := float64(ki)
		s := f / (2 + f)
		s2 := s * s
		s4 := s2 * s2
		t1 := s2 * (l1 + s4*(l3+s4*(l5+s4*l7)))
		t2 := s4 * (l2 + s4*(l4+s4*l6))
		r := t1 + t2
		hfsq := 0.5 * f * f
		db[i] = dbPerLn * (k*ln2Hi - ((hfsq - (s*(hfsq+r) + k*ln2Lo)) - f))
	}
}
