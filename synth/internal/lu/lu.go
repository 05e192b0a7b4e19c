// Package lu factors and solves small dense complex systems by Gaussian
// elimination with partial pivoting: the nodal systems of the circuit,
// noise and verification code.
package lu

import "math"

// Abs1 is |Re z| + |Im z|, the pivot size LAPACK's complex routines use.
func Abs1(z complex128) float64 { return math.Abs(real(z)) + math.Abs(imag(z)) }

// Factor factors the n×n row-major matrix a in place as P·a = L·U with
// partial pivoting (L unit lower triangular, stored below the diagonal; U
// on and above it); piv[k] is the row exchanged with row k at step k. It
// returns det(a), which is exactly 0 when a pivot is exactly zero; the
// factors are then unusable for solving.
func Factor(a []complex128, n int, piv []int) complex128 {
	det := complex(1, 0)
	for k := 0; k < n; k++ {
		p, big := k, Abs1(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := Abs1(a[i*n+k]); v > big {
				p, big = i, v
			}
		}
		piv[k] = p
		if big == 0 {
			return 0
		}
		if p != k {
			swapRows(a, n, k, p)
			det = -det
		}
		det *= a[k*n+k]
		eliminate(a, n, k)
	}
	return det
}

// swapRows exchanges rows k and p of the n×n matrix a.
func swapRows(a []complex128, n, k, p int) {
	rk, rp := a[k*n:k*n+n], a[p*n:p*n+n]
	for j := range rk {
		rk[j], rp[j] = rp[j], rk[j]
	}
}

// eliminate does step k of the elimination: the multipliers below the
// (non-zero) pivot a[k][k] and the update of the rows below.
func eliminate(a []complex128, n, k int) {
	inv := 1 / a[k*n+k]
	rk := a[k*n+k+1 : k*n+n]
	for i := k + 1; i < n; i++ {
		ri := a[i*n+k : i*n+n]
		l := ri[0] * inv
		ri[0] = l
		if l == 0 {
			continue
		}
		ri = ri[1:]
		for j, u := range rk {
			ri[j] -= l * u
		}
	}
}

// FactorGuarded is [Factor] for a matrix that is singular to rounding (an
// inverse iteration's): a pivot that is exactly zero is replaced by 2^-60
// times big, the size of the largest entry, so that the factors can
// solve. It returns the smallest |pivot| (as [Abs1]) before any
// replacement.
func FactorGuarded(a []complex128, n int, piv []int, big float64) float64 {
	small := math.Inf(1)
	tiny := complex(big*0x1p-60, 0)
	if big == 0 {
		tiny = complex(0x1p-60, 0)
	}
	for k := 0; k < n; k++ {
		p, m := k, Abs1(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := Abs1(a[i*n+k]); v > m {
				p, m = i, v
			}
		}
		piv[k] = p
		small = math.Min(small, m)
		if p != k {
			swapRows(a, n, k, p)
		}
		if m == 0 {
			a[k*n+k] = tiny
		}
		eliminate(a, n, k)
	}
	return small
}

// SolveTransposed solves aᵀ·x = b (the plain transpose) in place in b,
// with a and piv from [Factor] or [FactorGuarded]: P·a = L·U, so
// aᵀ = Uᵀ·Lᵀ·P.
func SolveTransposed(a []complex128, n int, piv []int, b []complex128) {
	// Uᵀ·z = b: forward.
	for i := 0; i < n; i++ {
		s := b[i]
		for k := 0; k < i; k++ {
			s -= a[k*n+i] * b[k]
		}
		b[i] = s / a[i*n+i]
	}
	// Lᵀ·y = z: backward, L unit lower.
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		for k := i + 1; k < n; k++ {
			s -= a[k*n+i] * b[k]
		}
		b[i] = s
	}
	// x = Pᵀ·y: undo the exchanges in reverse order.
	for k := n - 1; k >= 0; k-- {
		if p := piv[k]; p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
}

// Solve solves a·x = b in place in b, with a and piv from a [Factor]
// that returned a non-zero determinant.
func Solve(a []complex128, n int, piv []int, b []complex128) {
	for k := 0; k < n; k++ {
		if p := piv[k]; p != k {
			b[k], b[p] = b[p], b[k]
		}
	}
	for i := 1; i < n; i++ {
		s := b[i]
		for j, l := range a[i*n : i*n+i] {
			s -= l * b[j]
		}
		b[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		row := a[i*n : i*n+n]
		for j := i + 1; j < n; j++ {
			s -= row[j] * b[j]
		}
		b[i] = s / row[i]
	}
}

// SolveUnit sets x (length n) to the solution of a·x = e_k, the k-th unit
// vector, with a and piv from a [Factor] that returned a non-zero
// determinant and invDiag the reciprocals of U's diagonal (a[i*n+i]). It
// skips the forward substitution's leading zeros, and multiplies by the
// reciprocals where [Solve] divides, so it agrees with Solve to rounding,
// not bit for bit.
func SolveUnit(a []complex128, n int, piv []int, invDiag []complex128, k int, x []complex128) {
	pos := k
	for i := 0; i < n; i++ {
		switch p := piv[i]; {
		case p == i:
		case pos == i:
			pos = p
		case pos == p:
			pos = i
		}
	}
	clear(x)
	x[pos] = 1
	for i := pos + 1; i < n; i++ {
		var s complex128
		for j, l := range a[i*n+pos : i*n+i] {
			s -= l * x[pos+j]
		}
		x[i] = s
	}
	for i := n - 1; i >= 0; i-- {
		s := x[i]
		row := a[i*n : i*n+n]
		for j := i + 1; j < n; j++ {
			s -= row[j] * x[j]
		}
		x[i] = s * invDiag[i]
	}
}
