// Package hamiltoniantest provides reference Hamiltonians with ground-state
// energies made outside this module, for the tests of programs that use
// shotplan (as gonum exports its test functions) and of shotplan itself.
//
// The molecules are STO-3G integrals in FCIDUMP form with their full-CI
// energies, computed with psi4 1.3.2 ([Molecule], [FCIDUMP], [FullCI]), and
// the 15-term H2 qubit Hamiltonians of three encodings computed by an
// independent script ([H2Qubit]); README.md in the package directory names
// how each file was made. The spin models are rings whose ground energies
// have closed forms or published values: the transverse-field Ising ring
// (Pfeuty 1970, [IsingRing]) and the spin-½ Heisenberg antiferromagnet
// (Bethe ansatz values, [HeisenbergRing]).
//
// Every Hamiltonian is built afresh on each call; callers may keep it.
package hamiltoniantest
