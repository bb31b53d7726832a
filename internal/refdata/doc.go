// Package refdata embeds reference data made outside this project — STO-3G
// molecular integrals with their full-CI energies, and independently computed
// H2 qubit Hamiltonians — for the tests of every package. README.md names the
// source of each file.
package refdata
