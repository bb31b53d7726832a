package molecule

import (
	"errors"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
)

// TestOneLineError checks that a bad FCIDUMP line is the module's one line
// error: errors.Is and errors.As find it under the names of both packages.
func TestOneLineError(t *testing.T) {
	_, err := ReadFCIDUMP(strings.NewReader("&FCI NORB=1 NELEC=2 /\n 1.0 1 1 1 x\n"))
	if !errors.Is(err, ErrFormat) || !errors.Is(err, hamiltonian.ErrFormat) {
		t.Fatalf("err = %v, want one wrapping ErrFormat", err)
	}
	var le *hamiltonian.LineError
	if !errors.As(err, &le) || le.Line != 2 || !strings.HasPrefix(le.Error(), "molecule: FCIDUMP: line 2: ") {
		t.Errorf("err = %v, want a *hamiltonian.LineError for line 2 from the FCIDUMP reader", err)
	}
}
