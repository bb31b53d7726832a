// Package fermion holds fermionic operators — sums of products of creation
// and annihilation operators with complex coefficients — and maps them to
// qubit Hamiltonians with the Jordan–Wigner, Bravyi–Kitaev and parity
// encodings. It also builds the spinful Fermi–Hubbard model.
//
// # Operators
//
// An [Operator] on n modes is a list of [Term]s, each a coefficient times an
// ordered product of ladder operators ([Create] for a†_j, [Annihilate] for
// a_j), leftmost first. [Operator.NormalOrder] rewrites it with the
// canonical anticommutation relations {a_i, a_j†} = δ_ij, {a_i, a_j} = 0 into
// merged normal-ordered products: creators left of annihilators, creators by
// increasing mode, annihilators by decreasing mode. [Operator.Adjoint] is the
// Hermitian conjugate and [Operator.IsHermitian] compares the two normal
// forms.
//
// # Encodings
//
// Mode j maps to qubit j. Each encoding stores on the qubits b = β f (mod 2)
// for occupations f, with β lower triangular (Seeley, Richard & Love,
// arXiv:1208.5986):
//
//   - [JordanWigner]: β = I, qubit j holds f_j;
//     a_j† = Z_0 ⋯ Z_{j−1} (X_j − iY_j)/2.
//   - [Parity]: qubit j holds f_0 ⊕ ⋯ ⊕ f_j;
//     a_j† = ½ X_{j+1} ⋯ X_{n−1} (Z_{j−1} X_j − iY_j).
//   - [BravyiKitaev]: qubit j holds f_l for j+1−lowbit(j+1) ≤ l ≤ j (a
//     Fenwick tree); for n not a power of two this is the leading n×n block
//     of β for the next power of two.
//
// In all three a_j† = ½ X_U(j) X_j Z_P(j) − (i/2) X_U(j) Y_j Z_R(j) with the
// update set U(j) (the other qubits that hold f_j), the parity set P(j)
// (qubits whose parity is f_0 ⊕ ⋯ ⊕ f_{j−1}), the flip set F(j) (f_j is b_j
// plus the parity of F(j)) and R(j) = P(j) Δ F(j). [Encoding.Ladder] returns
// these two terms. Occupied is |1⟩ in Jordan–Wigner, and Z|1⟩ = −|1⟩, so
// n_j = (I − Z_j)/2.
//
// # Mapping
//
// [Operator.QubitOperator] returns the image with complex coefficients;
// [Operator.QubitHamiltonian] returns a [hamiltonian.Hamiltonian] and fails,
// naming the Pauli term, when an imaginary part exceeds [ImagTolerance].
//
// Products are first grouped: a product whose creators stand left of its
// annihilators is sorted with the sign of the permutation, and a product
// and its adjoint share one entry, because the image of R† has the same
// Pauli strings as that of R with conjugate coefficients. Each distinct
// product of k ladder operators is then expanded once into its 2^k Pauli
// products, computed on the symplectic words directly and accumulated in a
// map keyed by the words, with no allocation per product; contributions that
// are exactly zero (half of them for a Hermitian operator with real
// coefficients) are skipped. A merged coefficient smaller than 1.4e-14 times
// the sum of the magnitudes of its contributions is rounding residue of an
// exact cancellation and is dropped. Output terms keep the order in which
// their strings first appear, which is deterministic.
//
// # Spin orbitals
//
// [SpinOrder] numbers spin orbitals as modes: [Interleaved] (the default,
// mode 2p+σ: 0↑ 0↓ 1↑ 1↓ …) or [SpinBlocks] (all ↑ first: mode p + σ·n).
// [Hubbard] and the molecule package use it.
//
// # Hubbard model
//
// [Hubbard] builds −t Σ (a†_{iσ} a_{jσ} + h.c.) + U Σ n_{i↑} n_{i↓} − μ Σ n_{iσ}
// on chains and rectangles with open or periodic sides. The mapped operator
// acts on the whole Fock space; to study a fixed electron number, choose μ so
// that the wanted sector holds the lowest state (at half filling μ = U/2,
// the particle–hole symmetric point) and add μN back to the energy.
//
// # Panics
//
// Building an operator is under the caller's control: [Operator.Add] and
// [Encoding.Ladder] panic for a mode out of range, [NewOperator] for a
// negative mode count, [Encoding.Ladder] and [Operator.QubitOperator] for an
// undefined [Encoding] (one not among the constants), which
// [Operator.QubitHamiltonian] returns as an error. Every other problem is
// returned as an error.
package fermion
