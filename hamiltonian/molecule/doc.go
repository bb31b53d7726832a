// Package molecule reads molecular integrals from FCIDUMP files, cuts them to
// an active space, and builds the electronic Hamiltonian as a fermion
// operator or, through an encoding of package fermion, as a qubit
// Hamiltonian.
//
// # Hamiltonian and spin orbitals
//
// With restricted (spin-independent) integrals over real spatial orbitals in
// chemists' notation,
//
//	H = E_core + Σ_{pq,σ} h_pq a†_{pσ} a_{qσ} + ½ Σ_{pqrs,στ} (pq|rs) a†_{pσ} a†_{rτ} a_{sτ} a_{qσ}.
//
// [Integrals.QubitHamiltonian] numbers spin orbitals interleaved: mode 2p is
// orbital p with spin α, mode 2p+1 the same orbital with spin β, and mode j
// is qubit j. [Integrals.FermionOperator] takes any [fermion.SpinOrder].
//
// # FCIDUMP
//
// The format of Knowles & Handy, Comput. Phys. Commun. 54, 75 (1989):
//
//   - A namelist header from "&FCI" to "&END" (or "/"), items NAME=value
//     separated by commas or white space, on one line or several, trailing
//     commas optional, names in any case. NORB and NELEC are required; MS2,
//     ISYM and ORBSYM (one label per orbital; "k*v" repeats v k times) are
//     read; UHF=.TRUE. is refused with [ErrUnrestricted]; other items are
//     ignored.
//   - Then one "value i j k l" per line, orbitals numbered from 1, values in
//     E or Fortran D notation: i j k l > 0 is the two-electron integral
//     (ij|kl), assigned to its 8 symmetric slots (a value listed again under
//     a symmetric order is not added; it must agree with the first listing
//     to 1e-10 relative, or the line is an error); "i j 0 0" is h_ij = h_ji;
//     "0 0 0 0" is the constant; "i 0 0 0" is an orbital energy, accepted
//     and ignored.
//
// A bad file returns errors naming each bad line and the reason — missing
// header item, index beyond NORB, non-numeric value, wrong field count — as
// [*LineError]s wrapping [ErrFormat]; the reader never panics. NORB is capped
// at [MaxOrbitals]. [WriteFCIDUMP] writes the same format back, each distinct
// integral once, exactly (shortest round-trip decimals), so an active space
// can be saved and reused.
//
// # Building integrals
//
// [New] returns zero integrals; [Integrals.SetOne] and [Integrals.SetTwo]
// fill them, keeping the symmetries of real orbitals. [Integrals.HartreeFock]
// is the closed-shell determinant energy, a quick check of a file.
//
// # Active spaces
//
// [Integrals.ActiveSpace] freezes the lowest spatial orbitals doubly occupied
// (their energy goes into the constant, their mean field into h) and keeps a
// window of active orbitals above them.
package molecule
