// Package shotplan is the root of a library for estimating the energy of a
// qubit Hamiltonian, a real-weighted sum of Pauli strings, on hardware that
// can only rotate single qubits and read them out.
//
// The work flows through five packages, each importing only those before it:
//
//   - [github.com/shotplan/shotplan/pauli]: Pauli strings as symplectic bit
//     words, measurement settings, and a column store for hot loops.
//   - [github.com/shotplan/shotplan/hamiltonian]: the Hamiltonian value, its
//     text and JSON forms, model builders and exact reference energies.
//   - [github.com/shotplan/shotplan/allocate]: strategies that choose the
//     setting of every shot within a budget, and the driver that runs them.
//   - [github.com/shotplan/shotplan/estimate]: shot records, estimators with
//     data-based error bars, the Device interface and a simulator.
//   - [github.com/shotplan/shotplan/guarantee]: rigorous error bounds for a
//     plan before the shots and for the data after them.
//
// This package itself holds no code; it documents the whole.
package shotplan
