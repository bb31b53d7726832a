package allocate_test

import (
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/allocate/allocatetest"
	"github.com/shotplan/shotplan/pauli"
)

// Every built-in strategy runs the conformance suite.

func TestConformanceGreedy(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.Greedy{} }, nil)
}

func TestConformanceGreedyFillX(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.Greedy{Fill: pauli.X} }, nil)
}

func TestConformanceDerandomized(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.Derandomized{} }, nil)
}

func TestConformanceRandom(t *testing.T) {
	allocatetest.Test(t, func(seed uint64) allocate.Allocator { return &allocate.Random{Seed: seed} }, nil)
}

func TestConformanceBiased(t *testing.T) {
	allocatetest.Test(t, func(seed uint64) allocate.Allocator { return &allocate.Biased{Seed: seed} }, nil)
}

func TestConformanceSorted(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.Sorted{} }, nil)
}

func TestConformanceSortedTwoNorm(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.Sorted{Share: allocate.ShareTwoNorm} }, nil)
}

func TestConformanceImportance(t *testing.T) {
	allocatetest.Test(t, func(seed uint64) allocate.Allocator { return &allocate.Importance{Seed: seed} }, nil)
}

// TestConformanceFixed runs the suite on fixed lists of local settings,
// and of local and entangled settings mixed.
func TestConformanceFixed(t *testing.T) {
	cases := allocatetest.Cases()[1:2] // the four-qubit case
	for _, c := range []struct {
		name     string
		block    int
		settings []string
	}{
		{"local", 3, []string{"ZZZZ", "XXYY", "ZZZX"}},
		{"entangled", 2, []string{"ZZZZ", "XXYY|YYXX|ZZII", "XXXX|ZZII|IIZZ"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			var settings []pauli.Setting
			for _, s := range c.settings {
				settings = append(settings, pauli.MustParseSetting(s))
			}
			mk := func(uint64) allocate.Allocator { return &allocate.Fixed{Block: c.block, Settings: settings} }
			allocatetest.Test(t, mk, &allocatetest.Options{Cases: cases})
		})
	}
}

func TestConformanceByName(t *testing.T) {
	for _, name := range allocate.Names() {
		if name == "fixed" {
			continue // needs settings of the Hamiltonian's width; run above
		}
		t.Run(name, func(t *testing.T) {
			allocatetest.Test(t, func(seed uint64) allocate.Allocator {
				a, err := allocate.ByName(name, seed)
				if err != nil {
					t.Fatal(err)
				}
				return a
			}, &allocatetest.Options{Budgets: []int{5}, Seeds: []uint64{3}})
		})
	}
}

// TestConformanceCustom runs the suite on the custom strategy of
// example_custom_test.go, as a user's own tests would.
func TestConformanceCustom(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &termCycle{} }, nil)
}

func TestConformanceOverlap(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.Overlap{} }, nil)
}

func TestConformanceOverlapProxy(t *testing.T) {
	// A basis-state proxy of 70 qubits fits every case of the suite.
	allocatetest.Test(t, func(uint64) allocate.Allocator {
		return &allocate.Overlap{Proxy: allocate.BasisProxy{Bits: pauli.Bits{0b1011, 0}}}
	}, nil)
}
