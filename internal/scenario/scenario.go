package scenario

import (
	_ "embed"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
)

//go:embed ladder.txt
var ladder string

// Name describes the built-in scenario in one line.
const Name = "two-leg spin ladder, 12 qubits, transverse field (energies in units of the leg coupling)"

// Ladder returns the built-in scenario's Hamiltonian. It panics only if the
// embedded file is corrupt, which the package tests rule out.
func Ladder() *hamiltonian.Hamiltonian {
	h, err := hamiltonian.Read(strings.NewReader(ladder))
	if err != nil {
		panic("scenario: embedded ladder.txt: " + err.Error())
	}
	return h
}

// Text returns the embedded file as written, comments included.
func Text() string { return ladder }
