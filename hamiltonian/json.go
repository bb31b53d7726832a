package hamiltonian

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"strings"

	"github.com/shotplan/shotplan/pauli"
)

// jsonHamiltonian is the JSON form:
//
//	{"qubits": 4, "offset": -0.09, "terms": [{"pauli": "ZIII", "coeff": 0.17}, ...]}
//
// A term's "pauli" is dense ("XIZY") or sparse ("X0 Z2 Y3").
type jsonHamiltonian struct {
	Qubits int        `json:"qubits"`
	Offset float64    `json:"offset"`
	Terms  []jsonTerm `json:"terms"`
}

type jsonTerm struct {
	Pauli string  `json:"pauli"`
	Coeff float64 `json:"coeff"`
}

// MarshalJSON encodes h in the JSON form described in the package
// documentation. Strings are dense up to 32 qubits and sparse beyond.
func (h *Hamiltonian) MarshalJSON() ([]byte, error) {
	j := jsonHamiltonian{Qubits: h.n, Offset: h.offset, Terms: make([]jsonTerm, h.Len())}
	for i, t := range h.Terms() {
		s := t.Pauli.String()
		if h.n > denseLimit {
			s = t.Pauli.Sparse()
		}
		j.Terms[i] = jsonTerm{Pauli: s, Coeff: t.Coeff}
	}
	return json.Marshal(j)
}

// UnmarshalJSON decodes the JSON form into h, reporting the first bad term by
// its index.
func (h *Hamiltonian) UnmarshalJSON(b []byte) error {
	var j jsonHamiltonian
	if err := json.Unmarshal(b, &j); err != nil {
		return fmt.Errorf("hamiltonian: %w: %w", ErrFormat, err)
	}
	if j.Qubits < 0 {
		return fmt.Errorf("hamiltonian: %w: negative qubit count %d", ErrFormat, j.Qubits)
	}
	terms := make([]Term, len(j.Terms))
	for k, t := range j.Terms {
		var p pauli.String
		var err error
		if strings.ContainsAny(t.Pauli, "0123456789") || t.Pauli == "I" {
			p, err = pauli.ParseSparse(t.Pauli, j.Qubits)
		} else {
			p, err = pauli.Parse(t.Pauli)
			if err == nil && p.Qubits() != j.Qubits {
				err = fmt.Errorf("%d qubits, want %d", p.Qubits(), j.Qubits)
			}
		}
		if err != nil {
			var pe *pauli.ParseError
			if errors.As(err, &pe) {
				err = errors.New(pe.Reason)
			}
			return fmt.Errorf("hamiltonian: %w: term %d (%q): %v", ErrFormat, k, t.Pauli, err)
		}
		terms[k] = Term{Pauli: p, Coeff: t.Coeff}
	}
	g, err := New(j.Qubits, j.Offset, terms)
	if err != nil {
		return fmt.Errorf("%w: %w", ErrFormat, err)
	}
	*h = *g
	return nil
}

// ReadFile reads a Hamiltonian from path: the JSON form if the file's first
// non-blank character is '{', the text format otherwise. Errors name the
// file.
func ReadFile(path string) (*Hamiltonian, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	if t := strings.TrimSpace(string(data)); strings.HasPrefix(t, "{") {
		var h Hamiltonian
		if err := json.Unmarshal(data, &h); err != nil {
			return nil, fmt.Errorf("%s: %w", path, err)
		}
		return &h, nil
	}
	h, err := Read(strings.NewReader(string(data)))
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return h, nil
}
