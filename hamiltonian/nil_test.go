package hamiltonian

import (
	"bytes"
	"strings"
	"testing"
)

// TestNilHamiltonian checks that the functions taking a *Hamiltonian return
// an error naming the nil argument instead of a nil-pointer panic (the
// library's rule: bad input gets a clear error).
func TestNilHamiltonian(t *testing.T) {
	h := mustNew(t, 1, 0, []Term{{ps("Z"), 1}})
	var buf bytes.Buffer
	for name, call := range map[string]func() error{
		"Add(nil receiver)": func() error { _, err := (*Hamiltonian)(nil).Add(h); return err },
		"Add(nil argument)": func() error { _, err := h.Add(nil); return err },
		"Scale":             func() error { _, err := (*Hamiltonian)(nil).Scale(2); return err },
		"Matrix":            func() error { _, err := (*Hamiltonian)(nil).Matrix(); return err },
		"GroundState":       func() error { _, err := GroundState(nil, nil); return err },
		"Write":             func() error { return Write(&buf, nil) },
	} {
		err := call()
		if err == nil || !strings.Contains(err.Error(), "nil Hamiltonian") {
			t.Errorf("%s: err = %v, want an error naming the nil Hamiltonian", name, err)
		}
	}
	if buf.Len() != 0 {
		t.Errorf("Write(nil) wrote %q", buf.String())
	}
}
