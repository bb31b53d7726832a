package hamiltonian

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// davidson finds the lowest eigenpair of the Hermitian operator apply on
// dim amplitudes, whose diagonal is diag, by Davidson's method (E. R.
// Davidson, J. Comput. Phys. 17, 87 (1975)): the search space grows by the
// residual preconditioned with the diagonal, (θ − D)⁻¹ r, and restarts from
// the current Ritz vector after m vectors. The start vector is the basis
// state of lowest diagonal element plus a small seeded random part, so that
// no symmetry hides the ground state from the search. It returns what
// lanczos returns. Molecular Hamiltonians in an electron sector are
// diagonally dominant in the determinant basis, where this needs far fewer
// products H·ψ than Lanczos.
func davidson(dim, m int, apply func(dst, src []complex128), diag []float64, s EigenOptions) ([]complex128, float64, float64, int, bool) {
	m = max(m, 3)
	rng := rand.New(rand.NewPCG(s.Seed, 0xda51d))
	start := make([]complex128, dim)
	lowest := 0
	for i, d := range diag {
		if d < diag[lowest] {
			lowest = i
		}
	}
	for i := range start {
		start[i] = complex(1e-3*rng.NormFloat64()/math.Sqrt(float64(dim)), 0)
	}
	start[lowest] += 1
	scale(start, complex(1/norm(start), 0))

	g := make([]complex128, m*m) // ⟨v_i|H|v_j⟩, row-major
	coef := make([]complex128, m)
	vb := make([][]complex128, m)
	wb := make([][]complex128, m)
	vb[0] = start
	x := make([]complex128, dim)
	hx := make([]complex128, dim)
	r := make([]complex128, dim)
	applies, k := 0, 0
	converged := false
	for {
		if wb[k] == nil {
			wb[k] = make([]complex128, dim)
		}
		apply(wb[k], vb[k])
		applies++
		for i := 0; i <= k; i++ {
			c := dot(vb[i], wb[k])
			if i == k {
				c = complex(real(c), 0)
			}
			g[i*m+k], g[k*m+i] = c, complex(real(c), -imag(c))
		}
		k++
		theta, y := lowestHermitian(g, k, m)
		clear(x)
		clear(hx)
		for i := range k {
			axpy(x, y[i], vb[i])
			axpy(hx, y[i], wb[i])
		}
		copy(r, hx)
		axpy(r, complex(-theta, 0), x)
		if norm(r) <= s.Tolerance {
			converged = true
			break
		}
		if applies >= s.MaxApply {
			break
		}
		if k == m {
			// Restart from the Ritz vector and its image.
			copy(vb[0], x)
			copy(wb[0], hx)
			clear(g)
			g[0] = complex(theta, 0)
			k = 1
		}
		// Preconditioned correction t = r/(θ − D), orthogonalised twice.
		floor := 1e-8 * max(1, math.Abs(theta))
		for i, ri := range r {
			d := theta - diag[i]
			if math.Abs(d) < floor {
				d = math.Copysign(floor, d)
			}
			r[i] = ri / complex(d, 0)
		}
		for range 2 {
			reorth(r, vb[:k], coef[:k])
		}
		nn := norm(r)
		if !(nn > 1e-12) {
			break
		}
		if vb[k] == nil {
			vb[k] = make([]complex128, dim)
		}
		copy(vb[k], r)
		scale(vb[k], complex(1/nn, 0))
	}
	scale(x, complex(1/norm(x), 0))
	apply(hx, x)
	applies++
	e := real(dot(x, hx))
	axpy(hx, complex(-e, 0), x)
	return x, e, norm(hx), applies, converged
}

// lowestHermitian returns the lowest eigenvalue and a unit eigenvector of the
// k×k leading block of the Hermitian matrix g (row stride m), through the
// real symmetric matrix [[Re, −Im], [Im, Re]] of twice the size, whose
// eigenvalues are those of g, each twice (gonum's EigenSym).
func lowestHermitian(g []complex128, k, m int) (float64, []complex128) {
	t := mat.NewSymDense(2*k, nil)
	for i := range k {
		for j := i; j < k; j++ {
			c := g[i*m+j]
			t.SetSym(i, j, real(c))
			t.SetSym(k+i, k+j, real(c))
			t.SetSym(i, k+j, -imag(c))
			t.SetSym(j, k+i, imag(c))
		}
	}
	e, vecs, best := lowestSymEigen(t)
	y := make([]complex128, k)
	n := 0.0
	for i := range k {
		y[i] = complex(vecs.At(i, best), vecs.At(k+i, best))
		n += real(y[i])*real(y[i]) + imag(y[i])*imag(y[i])
	}
	scale(y, complex(1/math.Sqrt(n), 0))
	return e, y
}
