package hamiltonian

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// ErrNotConverged is returned by [GroundState] when the residual did not fall
// below the tolerance within the allowed number of products H·ψ. The
// Eigenpair returned with it is the best estimate found.
var ErrNotConverged = errors.New("hamiltonian: ground state did not converge")

// EigenOptions tunes [GroundState]. A nil *EigenOptions, or the zero value
// of any field, means the default.
type EigenOptions struct {
	// Tolerance is the residual ‖Hψ − Eψ‖ (ψ normalised) at which the
	// search stops. Zero means 1e-10·max(1, |h_0| + ‖h‖₁). The energy error
	// is at most the residual, and at most residual²/gap once the residual
	// is below the gap to the next eigenvalue (Kato–Temple bound).
	Tolerance float64

	// KrylovDim is the number of Lanczos (or, in a sector, Davidson)
	// vectors built before a restart (capped at the dimension). Memory is
	// about (KrylovDim+2)·2^n complex128 values, or (2·KrylovDim+3)·d for a
	// sector of d states. Zero means 40, lowered so that everything stays
	// within MaxBytes (13 at 24 qubits without a sector).
	KrylovDim int

	// MaxApply bounds the number of products H·ψ. Zero means 5000.
	MaxApply int

	// Seed seeds the random start vector; the same seed gives the same
	// result. Zero is a valid seed.
	Seed uint64

	// Sector, if not nil, restricts the search to the basis states of the
	// sector (for molecules, an electron number and 2S_z; see
	// [ElectronSector]): the result is the lowest eigenvalue within it.
	// The Hamiltonian must conserve the sector's counts; GroundState
	// refuses it otherwise. Vectors then hold the sector's amplitudes only,
	// so larger Krylov spaces and wider molecules fit.
	Sector *Sector

	// MaxBytes bounds the memory the search may use (Krylov vectors,
	// diagonal, sector tables and the returned state). Zero means
	// [DefaultExactBytes]. GroundState refuses, with its estimate, when even
	// the smallest Krylov space would exceed it.
	MaxBytes int64
}

// DefaultExactBytes is the memory [GroundState] may use unless
// EigenOptions.MaxBytes says otherwise: 4 GiB.
const DefaultExactBytes int64 = 4 << 30

// minKrylov is the smallest Krylov space GroundState accepts when it lowers
// the default to fit the memory bound.
const minKrylov = 6

// Eigenpair is an eigenvalue of a Hamiltonian with its normalised
// eigenvector; State[a] is the amplitude of the basis state with bit q of a on
// qubit q.
type Eigenpair struct {
	Energy   float64      // ⟨ψ|H|ψ⟩ of the returned state
	State    []complex128 // normalised, 2^n amplitudes
	Residual float64      // ‖Hψ − Energy·ψ‖
	Products int          // products H·ψ the search used
}

// GroundState returns the lowest eigenvalue of h and an eigenvector, found by
// the Lanczos method with full reorthogonalisation (classical Gram–Schmidt
// applied twice), restarted from the current Ritz vector every KrylovDim
// steps. The small tridiagonal eigenproblems are solved with gonum's
// mat.EigenSym. H is never stored as a matrix: each step is one
// [Hamiltonian.Apply].
//
// Restarting from the Ritz vector alone (rather than keeping several, as
// thick-restart Lanczos does) was measured to take more products H·ψ but
// less time on the spin rings of the tests: keeping k vectors costs k·m
// vector updates per restart, more than the products it saves when H has
// few terms.
//
// Near-degenerate ground states (a tiny gap) converge in energy long before
// the vector is pinned down; compare energies, not vectors.
//
// With EigenOptions.Sector the search runs on the sector's basis states
// only, by Davidson's method with the diagonal as preconditioner (see
// davidson.go), which needs far fewer products on molecular Hamiltonians
// in their electron sector (12 instead of about 200 for H2O/STO-3G); the
// state returned still has 2^n amplitudes, zero outside the sector.
//
// GroundState returns an error for a nil h, for more than [MaxExactQubits] qubits, for
// invalid settings, and [ErrNotConverged] (with the best pair found) when
// MaxApply products were not enough.
func GroundState(h *Hamiltonian, opts *EigenOptions) (Eigenpair, error) {
	if h == nil {
		return Eigenpair{}, fmt.Errorf("hamiltonian: nil Hamiltonian")
	}
	if h.n > MaxExactQubits {
		return Eigenpair{}, fmt.Errorf("hamiltonian: %d qubits exceed the maximum of %d", h.n, MaxExactQubits)
	}
	if h.n > MaxExactQubits {
		return Eigenpair{}, fmt.Errorf("hamiltonian: %d qubits exceed the maximum of %d", h.n, MaxExactQubits)
	}
	var s EigenOptions
	if opts != nil {
		s = *opts
	}
	if s.Tolerance < 0 || math.IsNaN(s.Tolerance) || s.KrylovDim < 0 || s.MaxApply < 0 || s.MaxBytes < 0 {
		return Eigenpair{}, fmt.Errorf("hamiltonian: negative or NaN setting in %+v", s)
	}
	if s.Tolerance == 0 {
		s.Tolerance = 1e-10 * max(1, math.Abs(h.offset)+h.OneNorm())
	}
	if s.MaxApply == 0 {
		s.MaxApply = 5000
	}
	if s.MaxBytes == 0 {
		s.MaxBytes = DefaultExactBytes
	}
	full := int64(1) << h.n
	op := newOperator(h, false)
	var (
		dim   int64
		fixed int64 // bytes besides the Krylov vectors
		leak  float64
		sec   *sectorOp
	)
	if s.Sector != nil {
		if err := s.Sector.check(h.n); err != nil {
			return Eigenpair{}, fmt.Errorf("hamiltonian: %w", err)
		}
		rest := widthMask(h.n) &^ s.Sector.Mask
		la, lb := op.leak(s.Sector.Mask), op.leak(rest)
		leak = math.Hypot(la, lb)
		if leak > s.Tolerance {
			return Eigenpair{}, fmt.Errorf("hamiltonian: the Hamiltonian does not conserve the sector (%v): ‖[H, N]‖₁ = %.3g on the mask, %.3g on the rest, above the tolerance %.3g (sectors need a Jordan–Wigner Hamiltonian with spin orbitals interleaved α, β)", *s.Sector, la, lb, s.Tolerance)
		}
		dim = s.Sector.Dim(h.n)
		// The returned state (2^n amplitudes) and the sector tables.
		fixed = 16*full + sectorBytes(op, *s.Sector)
	} else {
		dim = full
		fixed = 8 * full // the precomputed diagonal
	}
	// Vectors kept besides the m of the search space: Lanczos keeps m+2
	// in all; Davidson (in a sector) keeps m vectors and their images and
	// three more.
	vectors := func(m int64) int64 {
		if s.Sector != nil {
			return 2*m + 3
		}
		return m + 2
	}
	m := int64(s.KrylovDim)
	if m == 0 {
		m = 40
		for m > minKrylov && fixed+vectors(m)*16*dim > s.MaxBytes {
			m--
		}
	}
	m = min(max(m, 2), dim)
	if need := fixed + vectors(m)*16*dim; need > s.MaxBytes {
		return Eigenpair{}, fmt.Errorf("hamiltonian: needs about %s (%d vectors of %d amplitudes), above the limit of %s; raise EigenOptions.MaxBytes or restrict to a sector", byteSize(need), vectors(m), dim, byteSize(s.MaxBytes))
	}
	var apply func(dst, src []complex128)
	if s.Sector != nil {
		sec = newSectorOp(op, *s.Sector)
		apply = sec.apply
	} else {
		op.withDiag()
		apply = op.apply
	}
	var (
		x         []complex128
		e, res    float64
		applies   int
		converged bool
	)
	if sec != nil {
		x, e, res, applies, converged = davidson(int(dim), int(m), apply, sec.diag, s)
	} else {
		x, e, res, applies, converged = lanczos(int(dim), int(m), apply, s)
	}
	if sec != nil {
		x = sec.expand(x)
		// The part of Hψ outside the sector is at most leak (see leak).
		res = math.Hypot(res, leak)
	}
	pair := Eigenpair{Energy: e, State: x, Residual: res, Products: applies}
	if pair.Residual > s.Tolerance && !converged {
		return pair, fmt.Errorf("%w after %d products H·ψ: residual %.3g > tolerance %.3g", ErrNotConverged, applies, pair.Residual, s.Tolerance)
	}
	return pair, nil
}

// byteSize formats a byte count in MiB or GiB.
func byteSize(b int64) string {
	if b >= 1<<30 {
		return fmt.Sprintf("%.1f GiB", float64(b)/(1<<30))
	}
	return fmt.Sprintf("%.0f MiB", math.Ceil(float64(b)/(1<<20)))
}

// lanczos runs restarted Lanczos with Krylov spaces of m vectors of dim
// amplitudes for the operator apply, and returns the normalised Ritz
// vector, its Rayleigh quotient and residual, the number of products used
// and whether the tolerance was met inside the iteration.
func lanczos(dim, m int, apply func(dst, src []complex128), s EigenOptions) ([]complex128, float64, float64, int, bool) {
	rng := rand.New(rand.NewPCG(s.Seed, 0x1a2c05))
	v := make([][]complex128, m+1)
	v[0] = make([]complex128, dim)
	for i := range v[0] {
		v[0][i] = complex(rng.NormFloat64(), rng.NormFloat64())
	}
	scale(v[0], complex(1/norm(v[0]), 0))

	x := make([]complex128, dim) // Ritz vector
	alpha := make([]float64, 0, m)
	beta := make([]float64, 0, m)
	coef := make([]complex128, m)
	applies := 0
	converged := false
	for !converged {
		alpha, beta = alpha[:0], beta[:0]
		var y []float64
		k := 0
		for j := 0; j < m; j++ {
			if v[j+1] == nil {
				v[j+1] = make([]complex128, dim)
			}
			w := v[j+1]
			apply(w, v[j])
			applies++
			a := real(dot(v[j], w))
			alpha = append(alpha, a)
			axpy(w, complex(-a, 0), v[j])
			if j > 0 {
				axpy(w, complex(-beta[j-1], 0), v[j-1])
			}
			// Full reorthogonalisation by classical Gram–Schmidt against
			// every basis vector, repeated when the first pass removed most
			// of w (Kahan–Parlett "twice is enough" criterion, as in
			// Giraud, Langou & Rozložník 2005). It keeps the basis
			// orthonormal to working precision, so no ghost eigenvalues
			// appear.
			before := norm(w)
			for pass := 0; pass < 2; pass++ {
				reorth(w, v[:j+1], coef[:j+1])
				after := norm(w)
				if after > 0.7*before {
					break
				}
				before = after
			}
			b := norm(w)
			k = j + 1
			_, y = lowestTridiag(alpha, beta)
			res := b * math.Abs(y[k-1])
			if res <= s.Tolerance || b <= 1e-14*max(1, math.Abs(a)) {
				converged = true
				break
			}
			if applies >= s.MaxApply {
				break
			}
			if j+1 < m {
				beta = append(beta, b)
				scale(w, complex(1/b, 0))
			}
		}
		// Ritz vector x = Σ y_i v_i, the next start vector.
		clear(x)
		for i := 0; i < k; i++ {
			axpy(x, complex(y[i], 0), v[i])
		}
		scale(x, complex(1/norm(x), 0))
		copy(v[0], x)
		if applies >= s.MaxApply {
			break
		}
	}
	// Report the Rayleigh quotient and the true residual of x.
	hx := v[1]
	if hx == nil {
		hx = make([]complex128, dim)
	}
	apply(hx, x)
	e := real(dot(x, hx))
	axpy(hx, complex(-e, 0), x)
	return x, e, norm(hx), applies, converged
}

// lowestTridiag returns the lowest eigenvalue and its unit eigenvector of the
// symmetric tridiagonal matrix with diagonal alpha and off-diagonal beta
// (len(beta) = len(alpha)−1), using gonum's dense symmetric eigensolver.
func lowestTridiag(alpha, beta []float64) (float64, []float64) {
	k := len(alpha)
	t := mat.NewSymDense(k, nil)
	for i, a := range alpha {
		t.SetSym(i, i, a)
	}
	for i, b := range beta[:k-1] {
		t.SetSym(i, i+1, b)
	}
	e, vecs, best := lowestSymEigen(t)
	return e, mat.Col(nil, best, vecs)
}

// lowestSymEigen returns the lowest eigenvalue of the symmetric matrix t, all
// its eigenvectors (as columns) and the column of the lowest, by gonum's
// dense symmetric eigensolver.
func lowestSymEigen(t *mat.SymDense) (float64, *mat.Dense, int) {
	var eig mat.EigenSym
	if !eig.Factorize(t, true) {
		panic("hamiltonian: dense symmetric eigensolver failed")
	}
	vals := eig.Values(nil)
	best := 0
	for i, v := range vals {
		if v < vals[best] {
			best = i
		}
	}
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	return vals[best], &vecs, best
}

// reorth subtracts from w its components along the orthonormal vectors vs:
// w −= Σ_i ⟨v_i|w⟩ v_i, with every ⟨v_i|w⟩ taken from the same w (classical
// Gram–Schmidt). Both sweeps go block by block so that a block of w stays in
// cache while every v_i passes, and blocks are shared among goroutines. The
// inner products are summed per block of fixed size and the blocks in
// order, so the result does not depend on the number of goroutines.
func reorth(w []complex128, vs [][]complex128, coef []complex128) {
	blocks := (len(w) + chunk - 1) / chunk
	part := make([]complex128, blocks*len(vs))
	parallel(len(w), func(lo, hi int) {
		for c := lo; c < hi; c += chunk {
			e := min(c+chunk, hi)
			p := part[c/chunk*len(vs):]
			for i, v := range vs {
				p[i] = dot(v[c:e], w[c:e])
			}
		}
	})
	clear(coef)
	for b := range blocks {
		for i, p := range part[b*len(vs) : (b+1)*len(vs)] {
			coef[i] += p
		}
	}
	parallel(len(w), func(lo, hi int) {
		for c := lo; c < hi; c += chunk {
			e := min(c+chunk, hi)
			for i, v := range vs {
				axpy(w[c:e], -coef[i], v[c:e])
			}
		}
	})
}

// dot returns ⟨a|b⟩ = Σ conj(a_i) b_i.
func dot(a, b []complex128) complex128 {
	var sr, si float64
	b = b[:len(a)]
	for i, v := range a {
		ar, ai, br, bi := real(v), imag(v), real(b[i]), imag(b[i])
		sr += ar*br + ai*bi
		si += ar*bi - ai*br
	}
	return complex(sr, si)
}

// axpy sets y += a·x.
func axpy(y []complex128, a complex128, x []complex128) {
	ar, ai := real(a), imag(a)
	x = x[:len(y)]
	for i, v := range x {
		xr, xi := real(v), imag(v)
		y[i] += complex(ar*xr-ai*xi, ar*xi+ai*xr)
	}
}

func norm(a []complex128) float64 {
	s := 0.0
	for _, v := range a {
		s += real(v)*real(v) + imag(v)*imag(v)
	}
	return math.Sqrt(s)
}

func scale(a []complex128, c complex128) {
	for i := range a {
		a[i] *= c
	}
}

// MaxMatrixQubits is the widest Hamiltonian [Hamiltonian.Matrix] builds: a
// 4096×4096 complex matrix (256 MiB) at 12 qubits.
const MaxMatrixQubits = 12

// Matrix returns H as a dense 2^n×2^n complex matrix, with row and column
// index a meaning the basis state with bit q of a on qubit q. It is meant for
// cross-checks on small n and returns an error for a nil h and above
// [MaxMatrixQubits].
func (h *Hamiltonian) Matrix() (*mat.CDense, error) {
	if h == nil {
		return nil, fmt.Errorf("hamiltonian: nil Hamiltonian")
	}
	if h.n > MaxMatrixQubits {
		return nil, fmt.Errorf("hamiltonian: %d qubits exceed the maximum of %d", h.n, MaxMatrixQubits)
	}
	dim := 1 << h.n
	m := mat.NewCDense(dim, dim, nil)
	for b := range dim {
		m.Set(b, b, complex(h.offset, 0))
	}
	t := h.Table()
	for i, c := range h.coef {
		xs, zs := t.Words(i)
		var x, z uint64
		if h.n > 0 {
			x, z = xs[0], zs[0]
		}
		// P|b⟩ = i^{|x∧z|} (−1)^{|z∧b|} |b⊕x⟩ (MATH.md §7).
		ph := [4]complex128{1, 1i, -1, -1i}[bits.OnesCount64(x&z)&3]
		for b := range uint64(dim) {
			v := complex(c, 0) * ph
			if bits.OnesCount64(z&b)&1 == 1 {
				v = -v
			}
			a := int(b ^ x)
			m.Set(a, int(b), m.At(a, int(b))+v)
		}
	}
	return m, nil
}
