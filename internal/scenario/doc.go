// Package scenario holds the built-in Hamiltonian that the examples run on
// when given no input: a two-leg ladder of twelve coupled spins in a
// transverse field, an invented model of the kind a lab might study on an
// analog simulator. The file ladder.txt, in the hamiltonian text format, is
// embedded in every binary that imports this package.
package scenario
