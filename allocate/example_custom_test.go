package allocate_test

import (
	"fmt"
	"math"
	"slices"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/allocate/allocatetest"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// termCycle is a custom strategy: it visits the terms by |h_i| descending,
// over and over, and gives each visit the setting that measures the term,
// with Z on the qubits the term leaves free. A term with twice the weight of
// the smallest gets two consecutive shots, and so on. The example below runs
// the allocatetest conformance suite on it (a user's own tests would call
// allocatetest.Test, as TestConformanceCustom does).
type termCycle struct {
	h     *hamiltonian.Hamiltonian
	order []int // term indices by |h_i| descending
	shots []int // consecutive shots per visit of each term
	next  int
}

// String names the strategy in plans and errors.
func (c *termCycle) String() string { return "term-cycle" }

// MaxQubits makes the driver refuse Hamiltonians wider than 64 qubits,
// which this toy strategy chooses not to support.
func (c *termCycle) MaxQubits() int { return 64 }

// Init resets every piece of state, so that running the same value twice
// gives the same plan.
func (c *termCycle) Init(h *hamiltonian.Hamiltonian, budget int) error {
	c.h, c.next = h, 0
	c.order = c.order[:0]
	for i := range h.Len() {
		c.order = append(c.order, i)
	}
	abs := func(i int) float64 { return math.Abs(h.Coeff(i)) }
	slices.SortStableFunc(c.order, func(a, b int) int {
		switch {
		case abs(a) > abs(b):
			return -1
		case abs(a) < abs(b):
			return 1
		}
		return 0
	})
	smallest := abs(c.order[len(c.order)-1])
	c.shots = c.shots[:0]
	for _, i := range c.order {
		c.shots = append(c.shots, int(math.Round(abs(i)/smallest)))
	}
	return nil
}

// Next writes the letters of the next term, Z where it has none, into the
// driver's buffer.
func (c *termCycle) Next(dst []pauli.Letter) (int, error) {
	k := c.next % len(c.order)
	c.next++
	p := c.h.Pauli(c.order[k])
	for q := range dst {
		dst[q] = pauli.Z
	}
	for q, l := range p.Letters() {
		dst[q] = l
	}
	return c.shots[k], nil
}

func Example_customAllocator() {
	h, err := hamiltonian.New(3, 0, []hamiltonian.Term{
		{Pauli: pauli.MustParse("ZZI"), Coeff: -1},
		{Pauli: pauli.MustParse("IZZ"), Coeff: -1},
		{Pauli: pauli.MustParse("XII"), Coeff: 0.5},
		{Pauli: pauli.MustParse("IXX"), Coeff: 0.5},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	p, err := allocate.Run(h, 10, &termCycle{}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for k, s := range p.Settings {
		fmt.Println(s, p.Shots[k])
	}
	fmt.Println("cover:", p.Cover)

	// The conformance suite every strategy should pass.
	err = allocatetest.Check(func(uint64) allocate.Allocator { return &termCycle{} }, nil)
	fmt.Println("conformance suite passed:", err == nil)
	// Output:
	// ZZZ 4
	// XZZ 1
	// ZXX 1
	// ZZZ 4
	// cover: [8 9 1 1]
	// conformance suite passed: true
}
