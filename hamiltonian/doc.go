// Package hamiltonian holds qubit Hamiltonians H = h_0·I + Σ_i h_i P_i with
// real coefficients on distinct non-identity Pauli strings, reads and writes
// them, builds common lattice models, and computes exact reference energies
// for small qubit counts.
//
// # Conventions
//
// Qubit q is character q of a dense Pauli string (see package pauli). A state
// vector's basis index is Σ_q bit_q·2^q: qubit 0 is the least significant bit.
// Coefficients are real; the library attaches no unit to them.
//
// A [Hamiltonian] is immutable once built by [New] (or read, or built by a
// model function). [New] merges repeated strings, folds identity terms into
// the offset and keeps terms in the order their strings first appear; that
// order is the term index used everywhere else in shotplan.
//
// # Text format
//
// One term per line: a real coefficient, white space, then a Pauli string,
// dense ("XIZY", qubit 0 first) or sparse ("X_0 Z_2 Y_3": each factor a
// letter, an underscore as the subscript mark, and its qubit, as a Pauli
// operator is written on paper; the unmarked "X0" is refused with a message
// naming X_0). "I" alone is the
// identity term; several identity lines add up. A "#" starts a comment that
// runs to the end of the line; blank lines are ignored. An optional line
// "qubits N" before the first term declares the width; without it the width
// is that of the dense strings, or one more than the highest sparse index.
//
//	# a two-site transverse-field Ising model
//	qubits 2
//	-0.5 I
//	-1 ZZ
//	-0.7 X_0
//	-0.7 X_1
//
// [Read] reports every bad line by number and reason: a bad or non-finite
// number, a complex coefficient, digit separators ("1_000"), a coefficient
// that underflows to zero ("1e-400"), an unknown letter, a qubit index
// beyond the declared count, strings of different widths. Input without a
// term is an error; a leading UTF-8 byte order mark is skipped. [Write] prints coefficients
// with the shortest decimal that reads back to the same float64, so a
// Hamiltonian survives a round trip exactly.
//
// # JSON form
//
//	{"qubits": 2, "offset": -0.5,
//	 "terms": [{"pauli": "ZZ", "coeff": -1}, {"pauli": "X_0", "coeff": -0.7}]}
//
// A term's "pauli" is dense or sparse, as in the text format. A coefficient
// must be a JSON number; an array, object or string (such as "1+2i") is
// rejected with an error naming the term and line. Keys are exact: an
// unknown key (an "imag" part, a misspelt "term", "Qubits") or a repeated
// one is an error naming its line.
//
// # Limits
//
// Reading either form rejects qubit counts and indices of [MaxReadQubits] or
// more, input beyond [MaxReadBytes], text lines beyond [MaxLineBytes], a NUL
// byte in the text format, and a Hamiltonian whose term table (distinct
// terms × 2⌈n/64⌉ words) would exceed [MaxReadWords], with the estimate in
// the message. Terms are held sparse and merged while reading, so memory
// follows the input's length and not its line count times its width.
//
// # Models
//
// A [Graph] lists sites (site q is qubit q) and weighted bonds; [Line],
// [Ring], [Sheet] and [Torus] build the common ones, and a bond's Weight scales the
// coupling on that bond. The builders write every sign out:
//
//	TransverseFieldIsing(l, J, h):  H = −J Σ_b w_b Z_i Z_j − h Σ_q X_q
//	Ising(l, J, hx, hz):            H = −J Σ_b w_b Z_i Z_j − Σ_q hx_q X_q − Σ_q hz_q Z_q
//	XXZ(l, Jxy, Jz, h):             H = Σ_b w_b [Jxy (X_i X_j + Y_i Y_j) + Jz Z_i Z_j] − h Σ_q Z_q
//	XXZFields(l, Jxy, Jz, h):       the same with a field h_q per site
//	Heisenberg(l, J):               H = J Σ_b w_b (X_i X_j + Y_i Y_j + Z_i Z_j) = 4J Σ_b w_b S_i·S_j
//
// [RandomLocal] draws a seeded random Hamiltonian for benchmarks.
//
// # Exact energies
//
// For up to [MaxExactQubits] qubits, [Hamiltonian.Apply] computes H·ψ
// without a matrix (MATH.md §7: P|b⟩ = i^{|x∧z|}(−1)^{|z∧b|}|b⊕x⟩), with the
// terms grouped by their X part so that each group is one pass over ψ.
// [GroundState] finds the lowest eigenpair by restarted Lanczos with full
// reorthogonalisation; [Hamiltonian.Energy] and [Expectation] give ⟨ψ|H|ψ⟩
// and ⟨ψ|P|ψ⟩. [Hamiltonian.Matrix] builds the dense matrix for up to
// [MaxMatrixQubits] qubits, for cross-checks with gonum's eigensolvers.
// Apply, Energy and GroundState use up to GOMAXPROCS goroutines for long
// vectors; nothing else in the package starts goroutines. Their sums run in
// a fixed order (per block of fixed size, blocks added in order), so results
// are bit-identical whatever GOMAXPROCS is.
//
// With EigenOptions.Sector, GroundState searches only the basis states of
// a [Sector]: for a molecule under Jordan–Wigner with interleaved spin
// orbitals, [ElectronSector] gives the states of N electrons and 2S_z (the
// NELEC and MS2 of an FCIDUMP) — the right ground state for cations,
// radicals and triplets, and small enough that 24-qubit molecules fit
// (853 776 states for 12 electrons in 12 orbitals instead of 2^24).
// GroundState refuses a Hamiltonian that does not conserve the sector, and
// refuses with its memory estimate any search beyond EigenOptions.MaxBytes
// (default [DefaultExactBytes], 4 GiB).
//
// # Panics
//
// Apply, Energy and Expectation panic when a state vector does not have 2^n
// amplitudes or n exceeds [MaxExactQubits] (a programmer error); everything
// that reads input returns an error instead.
package hamiltonian
