package hamiltonian

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/shotplan/shotplan/pauli"
)

// pauliMatrix holds the single-qubit Pauli matrices in the computational
// basis |0⟩, |1⟩ (Nielsen & Chuang, Quantum Computation and Quantum
// Information, §2.1.3; common practice), indexed [row][col].
var pauliMatrix = [4][2][2]complex128{
	pauli.I: {{1, 0}, {0, 1}},
	pauli.X: {{0, 1}, {1, 0}},
	pauli.Y: {{0, -1i}, {1i, 0}},
	pauli.Z: {{1, 0}, {0, -1}},
}

// kronMatrix builds H as Σ_i h_i σ_{n−1} ⊗ … ⊗ σ_0 entry by entry: with
// qubit q the bit of weight 2^q, ⟨a|P|b⟩ = Π_q σ_q[a_q][b_q]. It is the
// textbook definition, independent of the bit tricks of MATH.md §7.
func kronMatrix(h *Hamiltonian) [][]complex128 {
	n := h.Qubits()
	dim := 1 << n
	m := make([][]complex128, dim)
	for a := range m {
		m[a] = make([]complex128, dim)
		m[a][a] = complex(h.Offset(), 0)
	}
	for _, t := range h.Terms() {
		for a := range dim {
			for b := range dim {
				v := complex(t.Coeff, 0)
				for q := range n {
					v *= pauliMatrix[t.Pauli.At(q)][a>>q&1][b>>q&1]
				}
				m[a][b] += v
			}
		}
	}
	return m
}

func randomState(n int, seed uint64) []complex128 {
	rng := rand.New(rand.NewPCG(seed, 7))
	v := make([]complex128, 1<<n)
	s := 0.0
	for i := range v {
		v[i] = complex(rng.NormFloat64(), rng.NormFloat64())
		s += real(v[i])*real(v[i]) + imag(v[i])*imag(v[i])
	}
	for i := range v {
		v[i] /= complex(math.Sqrt(s), 0)
	}
	return v
}

func mustRandom(t testing.TB, n, terms, k int, seed uint64) *Hamiltonian {
	t.Helper()
	h, err := RandomLocal(n, terms, k, seed)
	if err != nil {
		t.Fatal(err)
	}
	// Give it an offset too.
	h, err = h.Add(mustNew(t, n, 0.375, nil))
	if err != nil {
		t.Fatal(err)
	}
	return h
}

func mustNew(t testing.TB, n int, offset float64, terms []Term) *Hamiltonian {
	t.Helper()
	h, err := New(n, offset, terms)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

func TestMatrixAndApplyMatchKronecker(t *testing.T) {
	// Tolerance 1e-12: sums of a few dozen O(1) products.
	for _, tc := range []struct {
		name        string
		n, terms, k int
		seed        uint64
	}{
		{"one qubit all letters", 1, 3, 1, 1},
		{"three qubits", 3, 20, 3, 2},
		{"five qubits 3-local", 5, 40, 3, 3},
		{"six qubits 6-local", 6, 60, 6, 4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			h := mustRandom(t, tc.n, tc.terms, tc.k, tc.seed)
			want := kronMatrix(h)
			got, err := h.Matrix()
			if err != nil {
				t.Fatal(err)
			}
			dim := 1 << tc.n
			for a := range dim {
				for b := range dim {
					if cmplx.Abs(got.At(a, b)-want[a][b]) > 1e-12 {
						t.Fatalf("Matrix()[%d][%d] = %v, want %v (Kronecker product)", a, b, got.At(a, b), want[a][b])
					}
				}
			}
			psi := randomState(tc.n, tc.seed)
			dst := make([]complex128, dim)
			h.Apply(dst, psi)
			for a := range dim {
				var w complex128
				for b := range dim {
					w += want[a][b] * psi[b]
				}
				if cmplx.Abs(dst[a]-w) > 1e-12 {
					t.Fatalf("Apply: (Hψ)[%d] = %v, want %v (Kronecker product)", a, dst[a], w)
				}
			}
		})
	}
}

func TestApplySingleQubitTextbook(t *testing.T) {
	// Y|0⟩ = i|1⟩, Y|1⟩ = −i|0⟩, Z|1⟩ = −|1⟩, X|0⟩ = |1⟩ (Nielsen & Chuang
	// §2.1.3; MATH.md §7 "check: Y|0⟩ = i|1⟩").
	for _, tc := range []struct {
		p       string
		in, out [2]complex128
	}{
		{"Y", [2]complex128{1, 0}, [2]complex128{0, 1i}},
		{"Y", [2]complex128{0, 1}, [2]complex128{-1i, 0}},
		{"Z", [2]complex128{0, 1}, [2]complex128{0, -1}},
		{"X", [2]complex128{1, 0}, [2]complex128{0, 1}},
	} {
		h := mustNew(t, 1, 0, []Term{{pauli.MustParse(tc.p), 1}})
		dst := make([]complex128, 2)
		h.Apply(dst, tc.in[:])
		if dst[0] != tc.out[0] || dst[1] != tc.out[1] {
			t.Errorf("%s·%v = %v, want %v", tc.p, tc.in, dst, tc.out)
		}
	}
}

func TestApplyLargeParallelMatchesSerial(t *testing.T) {
	// n = 16 is above parallelMin, so the work is split; compare with the
	// serial kernel term by term (tolerance 1e-12, sums of 200 terms).
	h := mustRandom(t, 16, 200, 4, 9)
	psi := randomState(16, 3)
	got := make([]complex128, len(psi))
	h.Apply(got, psi)
	op := newOperator(h, false)
	want := make([]complex128, len(psi))
	op.applyRange(want, psi, 0)
	for a := range got {
		if cmplx.Abs(got[a]-want[a]) > 1e-12 {
			t.Fatalf("Apply()[%d] = %v, serial %v", a, got[a], want[a])
		}
	}
	if e, w := h.Energy(psi), real(dot(psi, want)); math.Abs(e-w) > 1e-10 {
		t.Errorf("Energy = %v, ⟨ψ|Hψ⟩ = %v", e, w)
	}
}

func TestExpectationMatchesMatrix(t *testing.T) {
	// ⟨ψ|P|ψ⟩ from the Kronecker matrix of P, tolerance 1e-12.
	const n = 4
	psi := randomState(n, 11)
	rng := rand.New(rand.NewPCG(5, 5))
	for range 30 {
		ls := make([]pauli.Letter, n)
		for q := range ls {
			ls[q] = pauli.Letter(rng.IntN(4))
		}
		p := pauli.FromLetters(ls)
		var want complex128
		h := mustNew(t, n, 0, []Term{{p, 1}})
		if p.IsIdentity() {
			h = mustNew(t, n, 1, nil)
		}
		m := kronMatrix(h)
		for a := range m {
			for b := range m {
				want += cmplx.Conj(psi[a]) * m[a][b] * psi[b]
			}
		}
		if got := Expectation(psi, p); math.Abs(got-real(want)) > 1e-12 {
			t.Errorf("Expectation(ψ, %s) = %v, want %v", p, got, real(want))
		}
	}
	// |+⟩ = (|0⟩+|1⟩)/√2: ⟨X⟩ = 1, ⟨Z⟩ = 0; |0⟩: ⟨Z⟩ = 1 (textbook).
	plus := []complex128{complex(1/math.Sqrt2, 0), complex(1/math.Sqrt2, 0)}
	for _, tc := range []struct {
		name string
		psi  []complex128
		p    string
		want float64
	}{
		{"<+|X|+>", plus, "X", 1},
		{"<+|Z|+>", plus, "Z", 0},
		{"<+|Y|+>", plus, "Y", 0},
		{"<0|Z|0>", []complex128{1, 0}, "Z", 1},
		{"<1|Z|1>", []complex128{0, 1}, "Z", -1},
		{"<+i|Y|+i>", []complex128{complex(1/math.Sqrt2, 0), complex(0, 1/math.Sqrt2)}, "Y", 1},
	} {
		if got := Expectation(tc.psi, pauli.MustParse(tc.p)); math.Abs(got-tc.want) > 1e-15 {
			t.Errorf("%s = %v, want %v", tc.name, got, tc.want)
		}
	}
}

func TestEnergyIsSumOfExpectations(t *testing.T) {
	h := mustRandom(t, 7, 50, 3, 21)
	psi := randomState(7, 1)
	want := h.Offset()
	for _, tm := range h.Terms() {
		want += tm.Coeff * Expectation(psi, tm.Pauli)
	}
	if got := h.Energy(psi); math.Abs(got-want) > 1e-12 {
		t.Errorf("Energy = %v, Σ h_i⟨P_i⟩ + h_0 = %v", got, want)
	}
}

func ring(t testing.TB, n int) Graph {
	t.Helper()
	return Ring(n)
}

func groundEnergy(t *testing.T, h *Hamiltonian) float64 {
	t.Helper()
	e, err := GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	return e.Energy
}

func TestGroundStateTransverseFieldIsingTable(t *testing.T) {
	// testdata/REFERENCE_VALUES.md, "Transverse-field Ising ring, H = −J Σ
	// Z_i Z_{i+1} − h Σ X_i, periodic": "Computed by exact diagonalisation
	// (J = 1)", rows "| 4 | −4.271558410140 | …" to "| 8 | …". Tolerance 1e-9
	// as the table gives 12 decimals.
	table := []struct {
		n int
		e [3]float64 // h = 0.5, 1, 2
	}{
		{4, [3]float64{-4.271558410140, -5.226251859506, -8.543116820279}},
		{6, [3]float64{-6.384694563604, -7.727406610313, -12.769389127207}},
		{8, [3]float64{-8.509082235140, -10.251661790966, -17.018164470280}},
	}
	for _, row := range table {
		for k, field := range []float64{0.5, 1, 2} {
			t.Run(fmt.Sprintf("N=%d/h=%g", row.n, field), func(t *testing.T) {
				h, err := TransverseFieldIsing(ring(t, row.n), 1, field)
				if err != nil {
					t.Fatal(err)
				}
				if got := groundEnergy(t, h); math.Abs(got-row.e[k]) > 1e-9 {
					t.Errorf("ground energy = %.12f, want %.12f", got, row.e[k])
				}
			})
		}
	}
}

// pfeuty returns E0(N) = −2 Σ_{m=1}^{N/2} sqrt(J² + h² − 2Jh cos((2m−1)π/N)),
// testdata/REFERENCE_VALUES.md (Pfeuty, Ann. Phys. 57, 79 (1970)).
func pfeuty(n int, j, h float64) float64 {
	e := 0.0
	for m := 1; m <= n/2; m++ {
		e -= 2 * math.Sqrt(j*j+h*h-2*j*h*math.Cos(float64(2*m-1)*math.Pi/float64(n)))
	}
	return e
}

func TestGroundStateTransverseFieldIsingClosedForm(t *testing.T) {
	// testdata/REFERENCE_VALUES.md: "At J = h = 1 this is −2 / sin(π/(2N))"
	// (Pfeuty 1970). Tolerance 1e-9.
	for n := 4; n <= 16; n += 2 {
		t.Run(fmt.Sprintf("N=%d", n), func(t *testing.T) {
			if n > 12 && testing.Short() {
				t.Skip("N > 12 skipped under -short")
			}
			h, err := TransverseFieldIsing(ring(t, n), 1, 1)
			if err != nil {
				t.Fatal(err)
			}
			want := -2 / math.Sin(math.Pi/float64(2*n))
			if math.Abs(pfeuty(n, 1, 1)-want) > 1e-12 {
				t.Fatalf("the sum formula and the closed form disagree at N=%d", n)
			}
			if got := groundEnergy(t, h); math.Abs(got-want) > 1e-9 {
				t.Errorf("ground energy = %.12f, want −2/sin(π/%d) = %.12f", got, 2*n, want)
			}
		})
	}
}

func TestGroundStateTwentyQubits(t *testing.T) {
	// A wide case, 20 qubits: a 20-site ring at J = 1, h = 2,
	// against the sum formula E0(N) = −2 Σ_m sqrt(J² + h² − 2Jh
	// cos((2m−1)π/N)) (Pfeuty 1970, testdata/REFERENCE_VALUES.md). h = 2 is
	// gapped, so it converges in a few dozen products H·ψ. Tolerance 1e-8.
	if testing.Short() {
		t.Skip("20 qubits skipped under -short")
	}
	h, err := TransverseFieldIsing(ring(t, 20), 1, 2)
	if err != nil {
		t.Fatal(err)
	}
	want := pfeuty(20, 1, 2)
	if got := groundEnergy(t, h); math.Abs(got-want) > 1e-8 {
		t.Errorf("ground energy = %.12f, want %.12f", got, want)
	}
}

func TestGroundStatePfeutySum(t *testing.T) {
	// The general-h sum formula of testdata/REFERENCE_VALUES.md (Pfeuty
	// 1970) at sizes between the table's rows. Tolerance 1e-9.
	for _, n := range []int{6, 10} {
		for _, field := range []float64{0.7, 1.3, 3} {
			t.Run(fmt.Sprintf("N=%d/h=%g", n, field), func(t *testing.T) {
				h, err := TransverseFieldIsing(ring(t, n), 1, field)
				if err != nil {
					t.Fatal(err)
				}
				if got, want := groundEnergy(t, h), pfeuty(n, 1, field); math.Abs(got-want) > 1e-9 {
					t.Errorf("ground energy = %.12f, want %.12f", got, want)
				}
			})
		}
	}
}

func TestGroundStateHeisenbergRing(t *testing.T) {
	// testdata/REFERENCE_VALUES.md, "Heisenberg ring, H = Σ_i (X_i X_{i+1} +
	// Y_i Y_{i+1} + Z_i Z_{i+1}), periodic": "N = 4: −8 exactly; N = 6:
	// −2(2 + √13) = −11.2111025509; N = 8: −14.6043736357" (Sandvik's tables;
	// also computed). Tolerance 1e-9 (1e-10 is the table's last digit).
	for _, tc := range []struct {
		n    int
		want float64
	}{
		{4, -8},
		{6, -2 * (2 + math.Sqrt(13))},
		{8, -14.6043736357},
	} {
		t.Run(fmt.Sprintf("N=%d", tc.n), func(t *testing.T) {
			h, err := Heisenberg(ring(t, tc.n), 1)
			if err != nil {
				t.Fatal(err)
			}
			tol := 1e-9
			if tc.n == 8 {
				tol = 1e-9 // the table rounds to 10 decimals: ±5e-11
			}
			if got := groundEnergy(t, h); math.Abs(got-tc.want) > tol {
				t.Errorf("ground energy = %.12f, want %.12f", got, tc.want)
			}
		})
	}
}

// denseLowest returns the lowest eigenvalue of h from gonum's mat.EigenSym on
// the real symmetric embedding [[A, −B], [B, A]] of H = A + iB, whose
// spectrum is H's with every eigenvalue doubled.
func denseLowest(t *testing.T, h *Hamiltonian) float64 {
	t.Helper()
	m, err := h.Matrix()
	if err != nil {
		t.Fatal(err)
	}
	dim, _ := m.Dims()
	isReal := true
	for a := range dim {
		for b := range dim {
			isReal = isReal && imag(m.At(a, b)) == 0
		}
	}
	if isReal {
		// A real symmetric H needs no embedding.
		e := mat.NewSymDense(dim, nil)
		for a := range dim {
			for b := a; b < dim; b++ {
				e.SetSym(a, b, real(m.At(a, b)))
			}
		}
		return lowestSym(t, e)
	}
	e := mat.NewSymDense(2*dim, nil)
	for a := range dim {
		for b := a; b < dim; b++ {
			v := m.At(a, b)
			e.SetSym(a, b, real(v))
			e.SetSym(dim+a, dim+b, real(v))
			e.SetSym(a, dim+b, -imag(v))
			e.SetSym(b, dim+a, imag(v))
		}
	}
	return lowestSym(t, e)
}

func lowestSym(t *testing.T, e *mat.SymDense) float64 {
	t.Helper()
	var eig mat.EigenSym
	if !eig.Factorize(e, false) {
		t.Fatal("EigenSym failed")
	}
	vals := eig.Values(nil)
	lo := vals[0]
	for _, v := range vals {
		lo = min(lo, v)
	}
	return lo
}

func TestGroundStateMatchesDenseEigensolver(t *testing.T) {
	// Random Hamiltonians with Y letters (complex matrices) against gonum's
	// dense symmetric eigensolver on the real embedding. Tolerance 1e-9.
	for _, tc := range []struct {
		n, terms, k int
		seed        uint64
		long        bool
		real        bool // keep only strings with an even number of Y: H is real
	}{
		{2, 8, 2, 1, false, false},
		{4, 30, 3, 2, false, false},
		{6, 80, 4, 3, false, false},
		{8, 150, 3, 4, false, false},
		{8, 150, 3, 7, false, true},
		{9, 150, 3, 5, true, false},
		{10, 300, 4, 6, true, true},
	} {
		t.Run(fmt.Sprintf("n=%d/real=%v", tc.n, tc.real), func(t *testing.T) {
			if tc.long && testing.Short() {
				t.Skip("dense n ≥ 9 skipped under -short")
			}
			h := mustRandom(t, tc.n, tc.terms, tc.k, tc.seed)
			if tc.real {
				var terms []Term
				for _, tm := range h.Terms() {
					x, z := tm.Pauli.Words()
					if bits.OnesCount64(x[0]&z[0])%2 == 0 {
						terms = append(terms, tm)
					}
				}
				h = mustNew(t, tc.n, h.Offset(), terms)
			}
			want := denseLowest(t, h)
			got, err := GroundState(h, &EigenOptions{Seed: tc.seed})
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got.Energy-want) > 1e-9 {
				t.Errorf("GroundState energy = %.12f, dense EigenSym %.12f", got.Energy, want)
			}
			// The returned vector is normalised and an eigenvector.
			if nv := norm(got.State); math.Abs(nv-1) > 1e-12 {
				t.Errorf("‖ψ‖ = %v, want 1", nv)
			}
			hx := make([]complex128, len(got.State))
			h.Apply(hx, got.State)
			axpy(hx, complex(-got.Energy, 0), got.State)
			if r := norm(hx); r > 1e-7 {
				t.Errorf("‖Hψ − Eψ‖ = %g, want ≤ 1e-7", r)
			}
		})
	}
}

func TestGroundStateReproducible(t *testing.T) {
	h := mustRandom(t, 6, 40, 3, 8)
	a, err := GroundState(h, &EigenOptions{Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	b, err := GroundState(h, &EigenOptions{Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	if a.Energy != b.Energy {
		t.Errorf("same seed: energies %v and %v differ", a.Energy, b.Energy)
	}
	for i := range a.State {
		if a.State[i] != b.State[i] {
			t.Fatalf("same seed: states differ at %d", i)
		}
	}
}

func TestGroundStateSmallKrylovRestarts(t *testing.T) {
	// A Krylov dimension of 5 forces many restarts; the energy must still
	// reach the reference −2(2 + √13) for the 6-site Heisenberg ring
	// (testdata/REFERENCE_VALUES.md).
	h, err := Heisenberg(ring(t, 6), 1)
	if err != nil {
		t.Fatal(err)
	}
	got, err := GroundState(h, &EigenOptions{KrylovDim: 5})
	if err != nil {
		t.Fatal(err)
	}
	if want := -2 * (2 + math.Sqrt(13)); math.Abs(got.Energy-want) > 1e-9 {
		t.Errorf("energy = %.12f, want %.12f", got.Energy, want)
	}
}

func TestGroundStateTrivialSizes(t *testing.T) {
	// Zero qubits: H = h_0, eigenvalue h_0. One qubit −Z: eigenvalue −1.
	h0 := mustNew(t, 0, 2.5, nil)
	if e := groundEnergy(t, h0); math.Abs(e-2.5) > 1e-15 {
		t.Errorf("0 qubits: energy %v, want 2.5", e)
	}
	h1 := mustNew(t, 1, 0, []Term{{pauli.MustParse("Z"), -1}})
	if e := groundEnergy(t, h1); math.Abs(e+1) > 1e-12 {
		t.Errorf("−Z: energy %v, want −1", e)
	}
}

func TestGroundStateErrors(t *testing.T) {
	wide := mustNew(t, MaxExactQubits+1, 0, []Term{{pauli.Identity(MaxExactQubits+1).With(0, pauli.Z), 1}})
	if _, err := GroundState(wide, nil); err == nil {
		t.Errorf("GroundState on %d qubits: no error", MaxExactQubits+1)
	}
	small := mustNew(t, 3, 0, []Term{{pauli.MustParse("ZZI"), 1}})
	if _, err := GroundState(small, &EigenOptions{Tolerance: -1}); err == nil {
		t.Error("negative tolerance: no error")
	}
	h := mustRandom(t, 8, 100, 3, 1)
	_, err := GroundState(h, &EigenOptions{MaxApply: 3, Tolerance: 1e-14})
	if !errors.Is(err, ErrNotConverged) {
		t.Errorf("MaxApply 3: err = %v, want ErrNotConverged", err)
	}
	if _, err := mustNew(t, MaxMatrixQubits+1, 0, nil).Matrix(); err == nil {
		t.Errorf("Matrix on %d qubits: no error", MaxMatrixQubits+1)
	}
}

func TestApplyPanicsOnBadLength(t *testing.T) {
	h := mustNew(t, 3, 0, []Term{{pauli.MustParse("XYZ"), 1}})
	for _, tc := range []struct {
		name     string
		dst, src []complex128
	}{
		{"short src", make([]complex128, 8), make([]complex128, 7)},
		{"long dst", make([]complex128, 9), make([]complex128, 8)},
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("Apply with %s did not panic", tc.name)
				}
			}()
			h.Apply(tc.dst, tc.src)
		}()
	}
	v := make([]complex128, 8)
	func() {
		defer func() {
			if recover() == nil {
				t.Error("Apply(v, v) did not panic")
			}
		}()
		h.Apply(v, v)
	}()
}

func TestGroundStateDegenerate(t *testing.T) {
	// Exactly degenerate spectra end the Krylov space early; the eigenvalues
	// are known by inspection (each Pauli string has eigenvalues ±1).
	for _, tc := range []struct {
		name string
		h    *Hamiltonian
		want float64
	}{
		{"zero Hamiltonian", mustNew(t, 4, 0, nil), 0},
		{"offset only", mustNew(t, 3, -1.5, nil), -1.5},
		{"−X_0 on 3 qubits (4-fold)", mustNew(t, 3, 0, []Term{{ps("XII"), -1}}), -1},
		{"Z0Z1 on 5 qubits (16-fold)", mustNew(t, 5, 0, []Term{{ps("ZZIII"), 1}}), -1},
		{"commuting XX + ZZ (2-fold)", mustNew(t, 2, 0, []Term{{ps("XX"), 1}, {ps("ZZ"), 1}}), -2},
	} {
		gs, err := GroundState(tc.h, nil)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if math.Abs(gs.Energy-tc.want) > 1e-12 || math.IsNaN(norm(gs.State)) || math.Abs(norm(gs.State)-1) > 1e-12 {
			t.Errorf("%s: energy %v (‖ψ‖ = %v), want %v", tc.name, gs.Energy, norm(gs.State), tc.want)
		}
	}
}
