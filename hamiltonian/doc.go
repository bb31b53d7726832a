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
// dense ("XIZY", qubit 0 first) or sparse ("X0 Z2 Y3"). "I" alone is the
// identity term; several identity lines add up. A "#" starts a comment that
// runs to the end of the line; blank lines are ignored. An optional line
// "qubits N" before the first term declares the width; without it the width
// is that of the dense strings, or one more than the highest sparse index.
//
//	# a two-site transverse-field Ising model
//	qubits 2
//	-0.5 I
//	-1 ZZ
//	-0.7 X0
//	-0.7 X1
//
// [Read] reports every bad line by number and reason: a bad or non-finite
// number, a complex coefficient, an unknown letter, a qubit index beyond the
// declared count, strings of different widths. [Write] prints coefficients
// with the shortest decimal that reads back to the same float64, so a
// Hamiltonian survives a round trip exactly.
//
// # JSON form
//
//	{"qubits": 2, "offset": -0.5,
//	 "terms": [{"pauli": "ZZ", "coeff": -1}, {"pauli": "X0", "coeff": -0.7}]}
//
// A term's "pauli" is dense or sparse, as in the text format.
package hamiltonian
