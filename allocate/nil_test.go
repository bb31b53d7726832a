package allocate_test

import (
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
)

// TestNilHamiltonian checks that the plan measures return an error for a nil
// Hamiltonian instead of a nil-pointer panic.
func TestNilHamiltonian(t *testing.T) {
	if _, err := allocate.CoverCounts(nil, nil, nil); err == nil || !strings.Contains(err.Error(), "nil Hamiltonian") {
		t.Errorf("CoverCounts(nil): err = %v", err)
	}
	if _, _, _, err := allocate.ScaledOneNorm(nil, nil); err == nil || !strings.Contains(err.Error(), "nil Hamiltonian") {
		t.Errorf("ScaledOneNorm(nil): err = %v", err)
	}
}
