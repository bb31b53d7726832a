package hamiltonian_test

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestSplitCheck checks that a valid split passes and that every broken
// rule of Split.Check is reported, naming the group or term.
func TestSplitCheck(t *testing.T) {
	h, err := hamiltonian.New(2, 0, []hamiltonian.Term{
		{Pauli: pauli.MustParse("ZI"), Coeff: 1},
		{Pauli: pauli.MustParse("IZ"), Coeff: -0.5},
		{Pauli: pauli.MustParse("XX"), Coeff: 0.25},
	})
	if err != nil {
		t.Fatal(err)
	}
	zz, zx, xx := pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("ZX"), pauli.MustParseSetting("XX")
	settings := []pauli.Setting{zz, zx, xx}
	shots := []int{3, 2, 1}
	valid := hamiltonian.Split{
		{Setting: zz, Terms: []int{0, 1}, Weights: []float64{0.25, 1}},
		{Setting: zx, Terms: []int{0}, Weights: []float64{0.75}},
	}
	if err := valid.Check(h, settings, shots); err != nil {
		t.Fatalf("valid split: %v", err)
	}
	if err := hamiltonian.Split(nil).Check(nil, nil, nil); err != nil {
		t.Fatalf("nil split: %v", err)
	}
	for _, c := range []struct {
		name  string
		split hamiltonian.Split
		shots []int
		want  string
	}{
		{"sum", hamiltonian.Split{{Setting: zz, Terms: []int{0}, Weights: []float64{0.5}}}, shots, "term 0 (ZI) add up to 0.5"},
		{"uncovered", hamiltonian.Split{{Setting: xx, Terms: []int{0}, Weights: []float64{1}}}, shots, "setting XX does not cover term 0 (ZI)"},
		{"unmeasured", hamiltonian.Split{{Setting: zz, Terms: []int{0}, Weights: []float64{1}}}, []int{0, 2, 1}, "setting ZZ is not measured"},
		{"not in plan", hamiltonian.Split{{Setting: pauli.MustParseSetting("ZY"), Terms: []int{0}, Weights: []float64{1}}}, shots, "not measured"},
		{"repeat group", hamiltonian.Split{{Setting: zz, Terms: []int{0}, Weights: []float64{0.5}}, {Setting: zz, Terms: []int{1}, Weights: []float64{1}}}, shots, "same setting ZZ"},
		{"repeat term", hamiltonian.Split{{Setting: zz, Terms: []int{0, 0}, Weights: []float64{0.5, 0.5}}}, shots, "lists term 0 (ZI) twice"},
		{"negative", hamiltonian.Split{{Setting: zz, Terms: []int{0}, Weights: []float64{-1}}, {Setting: zx, Terms: []int{0}, Weights: []float64{2}}}, shots, "weight -1"},
		{"nan", hamiltonian.Split{{Setting: zz, Terms: []int{0}, Weights: []float64{math.NaN()}}}, shots, "weight NaN"},
		{"range", hamiltonian.Split{{Setting: zz, Terms: []int{3}, Weights: []float64{1}}}, shots, "term 3, outside [0, 3)"},
		{"lengths", hamiltonian.Split{{Setting: zz, Terms: []int{0, 1}, Weights: []float64{1}}}, shots, "2 terms but 1 weights"},
		{"width", hamiltonian.Split{{Setting: pauli.MustParseSetting("ZZZ"), Terms: []int{0}, Weights: []float64{1}}}, shots, "has 3 qubits"},
	} {
		err := c.split.Check(h, settings, c.shots)
		if !errors.Is(err, hamiltonian.ErrSplit) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: Check = %v, want an ErrSplit containing %q", c.name, err, c.want)
		}
	}
}
