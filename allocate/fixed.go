package allocate

import (
	"errors"
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Fixed cycles through a list of settings the user supplies, so that users
// can plan with, and later certify, settings they already have. Visit k
// measures Settings[k mod len(Settings)] for Block consecutive shots (the
// last visit gets what is left of the budget).
//
// # Cost
//
// O(n) per setting to copy its letters; the driver then counts the covers of
// the distinct settings.
//
// Fixed uses no randomness. It supports exactly the width of its settings;
// [Fixed.MaxQubits] reports it.
type Fixed struct {
	// Settings are measured in this order, cyclically. All must have the
	// same width; an empty list is an error at Init.
	Settings []pauli.Setting
	// Block is the number of consecutive shots of each visit; zero or
	// negative means 1.
	Block int

	next int
}

// NewFixed returns a Fixed strategy cycling through settings, one shot per
// visit.
func NewFixed(settings ...pauli.Setting) *Fixed {
	return &Fixed{Settings: settings}
}

// String returns "fixed".
func (f *Fixed) String() string { return "fixed" }

// MaxQubits implements [QubitLimit]: the width of the settings. An empty
// list sets no limit here; Init refuses it.
func (f *Fixed) MaxQubits() int {
	if len(f.Settings) == 0 {
		return math.MaxInt
	}
	return f.Settings[0].Qubits()
}

// Init implements [Allocator]. It returns an error if the list is empty or
// a setting's width differs from the Hamiltonian's.
func (f *Fixed) Init(h *hamiltonian.Hamiltonian, budget int) error {
	if len(f.Settings) == 0 {
		return errors.New("no settings to cycle through")
	}
	for k, s := range f.Settings {
		if s.Qubits() != h.Qubits() {
			return fmt.Errorf("setting %d (%s) has %d qubits, Hamiltonian has %d", k, s, s.Qubits(), h.Qubits())
		}
	}
	f.next = 0
	return nil
}

// NextBatch implements [Batcher]: the next visit, local or entangled.
func (f *Fixed) NextBatch(settings []pauli.Setting, shots []int, remaining int) ([]pauli.Setting, []int, error) {
	s := f.Settings[f.next%len(f.Settings)]
	f.next++
	return append(settings, s), append(shots, max(f.Block, 1)), nil
}
