package allocate_test

import (
	"fmt"
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

// TestStrategyErrorNamesOnce checks that an error from a strategy's Init
// names the strategy once: Run adds "allocate: <name>: ", the strategy does
// not repeat it.
func TestStrategyErrorNamesOnce(t *testing.T) {
	h := mustH(t, 0, "XX", 1.0)
	for _, a := range []allocate.Allocator{&allocate.Fixed{}, &allocate.Derandomized{Epsilon: -1}} {
		_, err := allocate.Run(h, 10, a, nil)
		if err == nil {
			t.Errorf("%s: Run succeeded, want an error", a)
			continue
		}
		name := fmt.Sprint(a)
		if got := strings.Count(err.Error(), name+":"); got != 1 {
			t.Errorf("%s: error %q names the strategy %d times, want once", name, err, got)
		}
	}
}
