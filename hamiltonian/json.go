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

// jsonInput is the decoding side of jsonHamiltonian: coefficients are kept
// raw so that a complex or out-of-range value gets an error naming its term.
type jsonInput struct {
	Qubits *int            `json:"qubits"`
	Offset json.RawMessage `json:"offset"`
	Terms  []struct {
		Pauli *string         `json:"pauli"`
		Coeff json.RawMessage `json:"coeff"`
	} `json:"terms"`
}

// UnmarshalJSON decodes the JSON form into h, reporting the first bad term by
// its index: a missing field, a coefficient that is not a finite real
// number (a complex value such as [1, 2] or "1+2i" included), or a Pauli
// string that does not parse or has the wrong width. Qubit counts above
// [MaxReadQubits] are rejected. "I" alone (either case, as in the text
// format) is the identity term at any width.
func (h *Hamiltonian) UnmarshalJSON(b []byte) error {
	var j jsonInput
	if err := json.Unmarshal(b, &j); err != nil {
		return fmt.Errorf("hamiltonian: %w: %w", ErrFormat, err)
	}
	if j.Qubits == nil {
		return fmt.Errorf("hamiltonian: %w: missing \"qubits\"", ErrFormat)
	}
	n := *j.Qubits
	if n < 0 || n > MaxReadQubits {
		return fmt.Errorf("hamiltonian: %w: qubit count %d outside [0, %d]", ErrFormat, n, MaxReadQubits)
	}
	offset := 0.0
	if j.Offset != nil {
		v, reason := jsonCoeff(j.Offset)
		if reason != "" {
			return fmt.Errorf("hamiltonian: %w: offset: %s", ErrFormat, reason)
		}
		offset = v
	}
	terms := make([]Term, len(j.Terms))
	for k, t := range j.Terms {
		if t.Pauli == nil {
			return fmt.Errorf("hamiltonian: %w: term %d: missing \"pauli\"", ErrFormat, k)
		}
		ps := *t.Pauli
		if t.Coeff == nil {
			return fmt.Errorf("hamiltonian: %w: term %d (%q): missing \"coeff\"", ErrFormat, k, ps)
		}
		c, reason := jsonCoeff(t.Coeff)
		if reason != "" {
			return fmt.Errorf("hamiltonian: %w: term %d (%q): %s", ErrFormat, k, ps, reason)
		}
		var p pauli.String
		var err error
		if strings.ContainsAny(ps, "0123456789") || strings.EqualFold(strings.TrimSpace(ps), "I") {
			p, err = pauli.ParseSparse(ps, n)
		} else {
			p, err = pauli.Parse(ps)
			if err == nil && p.Qubits() != n {
				err = fmt.Errorf("%d qubits, want %d", p.Qubits(), n)
			}
		}
		if err != nil {
			var pe *pauli.ParseError
			if errors.As(err, &pe) {
				err = errors.New(pe.Reason)
			}
			return fmt.Errorf("hamiltonian: %w: term %d (%q): %v", ErrFormat, k, ps, err)
		}
		terms[k] = Term{Pauli: p, Coeff: c}
	}
	g, err := New(n, offset, terms)
	if err != nil {
		return fmt.Errorf("%w: %w", ErrFormat, err)
	}
	*h = *g
	return nil
}

// jsonCoeff decodes a real coefficient and explains a bad one.
func jsonCoeff(raw json.RawMessage) (float64, string) {
	t := strings.TrimSpace(string(raw))
	switch {
	case strings.HasPrefix(t, "["), strings.HasPrefix(t, "{"):
		return 0, fmt.Sprintf("coefficient %s is not a real number (complex coefficients are not allowed)", t)
	case strings.HasPrefix(t, `"`):
		var s string
		if json.Unmarshal(raw, &s) == nil {
			if _, reason := parseCoeff(s); strings.HasPrefix(reason, "complex") {
				return 0, reason
			}
		}
		return 0, fmt.Sprintf("coefficient %s is a string, want a number", t)
	}
	return parseCoeff(t)
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
