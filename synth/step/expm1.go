package step

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// padeLow are the Padé approximants of degree 3, 5, 7 and 9 for exp and
// the 1-norms up to which each is accurate to double precision, as in
// [mat.Dense.Exp].
var padeLow = []struct {
	theta float64
	b     []float64
}{
	{0.015, []float64{120, 60, 12, 1}},
	{0.25, []float64{30240, 15120, 3360, 420, 30, 1}},
	{0.95, []float64{17297280, 8648640, 1995840, 277200, 25200, 1512, 56, 1}},
	{2.1, []float64{17643225600, 8821612800, 2075673600, 302702400, 30270240, 2162160, 110880, 3960, 90, 1}},
}

// pade13 is the degree-13 approximant, accurate up to a 1-norm of theta13.
var pade13 = [...]float64{
	64764752532480000, 32382376266240000, 7771770303897600, 1187353796428800,
	129060195264000, 10559470521600, 670442572800, 33522128640,
	1323241920, 40840800, 960960, 16380, 182, 1,
}

const theta13 = 5.4

// expm1 sets e to exp(a) − I for the square matrix a, which must be block
// lower triangular with diagonal blocks of the given sizes (1 or 2).
//
// It is the scaling-and-squaring algorithm with Padé approximants of
// [mat.Dense.Exp] (Higham, "The scaling and squaring method for the matrix
// exponential revisited", SIAM J. Matrix Anal. Appl. 26(4), 2005), carried
// out on E = exp − I throughout: the approximant r = (V−U)⁻¹(V+U) gives
// E = (V−U)⁻¹·2U with no cancellation, and each squaring
// (I+E)² = I + (2E + E²) keeps E to full relative precision. A fast pole
// forces many squarings, and the scaled exponential of the slow modes is
// then I plus a tiny E; forming I + E would round E away and lose about as
// many digits as there are squarings, which this form avoids. Products of
// block lower-triangular matrices keep the structure, and the one solve is
// done by block forward substitution rather than an LU factorisation with
// row pivoting, so that the rows of a slow block are never mixed with
// those of a fast one (a pivot row taken from a fast block would carry its
// rounding errors, relative to its large entries, into the slow block).
//
// The element-wise steps work on the raw data (c·X + Y in one pass, the
// identity's multiples added on the diagonal) and the products never
// alias their operands, which keeps the small matrices here free of
// gonum's generic paths and temporary copies; every sum is rounded as in
// the plain form with mat.Dense.Scale and Add.
func expm1(e, a *mat.Dense, sizes []int) {
	r, _ := a.Dims()
	n1 := mat.Norm(a, 1)
	var u, v, a2 mat.Dense
	for _, p := range padeLow {
		if n1 > p.theta {
			continue
		}
		// U = A·Σ b_{2j+1}·A^{2j}, V = Σ b_{2j}·A^{2j}.
		a2.Mul(a, a)
		us, vs := mat.NewDense(r, r, nil), mat.NewDense(r, r, nil)
		addDiag(us, p.b[1])
		addDiag(vs, p.b[0])
		var pw, next mat.Dense
		pw.CloneFrom(&a2)
		for j := 1; 2*j < len(p.b); j++ {
			if j > 1 {
				next.Mul(&pw, &a2)
				pw, next = next, pw
			}
			addScaled(vs, p.b[2*j], &pw)
			addScaled(us, p.b[2*j+1], &pw)
		}
		u.Mul(a, us)
		solveE(e, vs, &u, sizes)
		return
	}

	var a1 mat.Dense
	a1.CloneFrom(a)
	s := 0
	if n1 > theta13 {
		s = int(math.Ceil(math.Log2(n1 / theta13)))
		a1.Scale(math.Ldexp(1, -s), &a1)
	}
	b := pade13
	var a4, a6 mat.Dense
	a2.Mul(&a1, &a1)
	a4.Mul(&a2, &a2)
	a6.Mul(&a2, &a4)
	// V = A6·(b12·A6 + b10·A4 + b8·A2) + b6·A6 + b4·A4 + b2·A2 + b0·I.
	lin := func(dst *mat.Dense, c6, c4, c2, c0 float64) {
		if dst.IsEmpty() {
			dst.ReuseAs(r, r)
		}
		d, x6, x4, x2 := dst.RawMatrix(), a6.RawMatrix(), a4.RawMatrix(), a2.RawMatrix()
		for i := range r {
			for j := range r {
				w := c6 * x6.Data[i*x6.Stride+j]
				w += c4 * x4.Data[i*x4.Stride+j]
				w += c2 * x2.Data[i*x2.Stride+j]
				d.Data[i*d.Stride+j] = w
			}
		}
		addDiag(dst, c0)
	}
	var hi, lo, w mat.Dense
	lin(&hi, b[12], b[10], b[8], 0)
	lin(&lo, b[6], b[4], b[2], b[0])
	v.Mul(&a6, &hi)
	addScaled(&v, 1, &lo)
	// U = A·(A6·(b13·A6 + b11·A4 + b9·A2) + b7·A6 + b5·A4 + b3·A2 + b1·I).
	lin(&hi, b[13], b[11], b[9], 0)
	lin(&lo, b[7], b[5], b[3], b[1])
	w.Mul(&a6, &hi)
	addScaled(&w, 1, &lo)
	u.Mul(&a1, &w)
	solveE(e, &v, &u, sizes)
	// (I + E)² = I + (2E + E²).
	var sq mat.Dense
	for range s {
		sq.Mul(e, e)
		er, sr := e.RawMatrix(), sq.RawMatrix()
		for i := range r {
			row, sqr := er.Data[i*er.Stride:i*er.Stride+r], sr.Data[i*sr.Stride:i*sr.Stride+r]
			for j, x := range row {
				row[j] = 2*x + sqr[j]
			}
		}
	}
}

// addScaled sets dst to dst + c·x, element-wise.
func addScaled(dst *mat.Dense, c float64, x *mat.Dense) {
	r, cols := dst.Dims()
	d, xr := dst.RawMatrix(), x.RawMatrix()
	for i := range r {
		row, xrow := d.Data[i*d.Stride:i*d.Stride+cols], xr.Data[i*xr.Stride:i*xr.Stride+cols]
		for j, v := range xrow {
			row[j] += c * v
		}
	}
}

// addDiag adds c to the diagonal of the square dst.
func addDiag(dst *mat.Dense, c float64) {
	r, _ := dst.Dims()
	d := dst.RawMatrix()
	for i := range r {
		d.Data[i*d.Stride+i] += c
	}
}

// solveE sets e to (V−U)⁻¹·2U, the approximant less I.
func solveE(e, v, u *mat.Dense, sizes []int) {
	var q mat.Dense
	q.Sub(v, u)
	e.Scale(2, u)
	solveLower(&q, e, sizes)
}

// solveLower overwrites x (r×c) with q⁻¹·x for q (r×r) block lower
// triangular with diagonal blocks of the given sizes (1 or 2), by block
// forward substitution. Each 2×2 diagonal block is solved with partial
// pivoting inside the block. The diagonal blocks of V−U are the Padé
// denominators of the scaled diagonal blocks of A, well conditioned for
// the norms the approximants are used at.
func solveLower(q, x *mat.Dense, sizes []int) {
	qr, xr := q.RawMatrix(), x.RawMatrix()
	_, c := x.Dims()
	qa := func(i, j int) float64 { return qr.Data[i*qr.Stride+j] }
	row := func(i int) []float64 { return xr.Data[i*xr.Stride : i*xr.Stride+c] }
	o := 0
	for _, k := range sizes {
		for i := o; i < o+k; i++ {
			ri := row(i)
			for j := range o {
				if f := qa(i, j); f != 0 {
					rj := row(j)
					for col := range ri {
						ri[col] -= f * rj[col]
					}
				}
			}
		}
		if k == 1 {
			d := qa(o, o)
			for col, v := range row(o) {
				row(o)[col] = v / d
			}
		} else {
			a, b, cc, d := qa(o, o), qa(o, o+1), qa(o+1, o), qa(o+1, o+1)
			swap := math.Abs(cc) > math.Abs(a)
			if swap {
				a, b, cc, d = cc, d, a, b
			}
			m := cc / a
			piv := d - m*b
			r0, r1 := row(o), row(o+1)
			for col := range r0 {
				f0, f1 := r0[col], r1[col]
				if swap {
					f0, f1 = f1, f0
				}
				y1 := (f1 - m*f0) / piv
				r0[col], r1[col] = (f0-b*y1)/a, y1
			}
		}
		o += k
	}
}
