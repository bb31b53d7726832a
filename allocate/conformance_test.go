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

func TestConformanceFixed(t *testing.T) {
	cases := allocatetest.Cases()[1:2] // the four-qubit case
	mk := func(uint64) allocate.Allocator {
		return &allocate.Fixed{Block: 3, Settings: []pauli.Setting{
			pauli.MustParseSetting("ZZZZ"), pauli.MustParseSetting("XXYY"), pauli.MustParseSetting("ZZZX"),
		}}
	}
	allocatetest.Test(t, mk, &allocatetest.Options{Cases: cases})
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
