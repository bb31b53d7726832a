// Package shotplan is the root of a library for estimating the energy of a
// qubit Hamiltonian, a real-weighted sum of Pauli strings, on hardware that
// can only rotate single qubits (or, where it can, run a short Clifford
// circuit) and read them out. It plans the measurement setting of every shot
// within a budget, certifies the plan before any shot, estimates the energy
// from the bit-strings with an error bar, tightens the certificate with the
// data, and simulates the device exactly so that experiment code can be
// tested against exact answers. This package holds no code; it documents the
// whole.
//
// # Packages
//
// The work flows through these packages, each importing only those before
// it:
//
//   - [github.com/shotplan/shotplan/pauli]: Pauli strings as symplectic bit
//     words, measured bit-strings, measurement settings (local, or a
//     commuting family with its Clifford circuit), the column store [pauli.Table]
//     for hot loops, Clifford circuits and the stabilizer tableau.
//   - [github.com/shotplan/shotplan/hamiltonian]: the Hamiltonian value, its
//     text and JSON forms, lattice spin models, matrix-free H·ψ and Lanczos
//     ground states; [github.com/shotplan/shotplan/hamiltonian/fermion] maps
//     fermion operators and Fermi–Hubbard models to qubits (Jordan–Wigner,
//     Bravyi–Kitaev, parity), and [github.com/shotplan/shotplan/hamiltonian/molecule]
//     reads FCIDUMP integrals and cuts active spaces.
//   - [github.com/shotplan/shotplan/allocate]: the Allocator interface, the
//     driver [allocate.Run] that runs any strategy to a budget, the published
//     strategies, and plan files; [github.com/shotplan/shotplan/allocate/allocatetest]
//     is the conformance suite for strategies, ours and yours.
//   - [github.com/shotplan/shotplan/estimate]: shot records and their files,
//     the grouped estimator and the inverse-probability ones, the Device
//     interface a hardware adapter implements, a state-vector simulator with
//     readout error, and OpenQASM 3 export.
//   - [github.com/shotplan/shotplan/guarantee]: bounds that hold for any
//     state — a-priori certificates from the plan alone, data-dependent
//     bounds after the shots, truncation advice, budget planning, and
//     sequential and anytime-valid drivers that stop once a target accuracy
//     is certified.
//
// # Conventions
//
// Qubit q is character q of a dense Pauli string, read left to right; a
// measured bit 0 means eigenvalue +1; a state vector's basis index is
// Σ_q bit_q·2^q. Coefficients are real and carry no unit. Randomness always
// comes from a caller's seed. Bad input is an error naming the line or term;
// panics are for programmer errors only. Files are written atomically.
//
// # What a guarantee covers
//
// Every bound covers the shot noise of independent, identically prepared
// copies of the state with ideal readout. Device noise, drift and
// state-preparation error are not covered; approximate (normal) intervals
// are labelled as such and are never guarantees.
//
// The runnable programs under examples/ show the whole job: quickstart (one
// command on a built-in scenario), compare (every strategy side by side),
// custom (a strategy of your own) and shotplan (the file-based workflow).
package shotplan
