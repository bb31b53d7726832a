package estimate

import (
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestImportanceSamplingUnbiasedExact averages the single-shot value
// h_0 + ‖h‖₁ sign(h_i) s over the draw of term i (probability |h_i|/‖h‖₁,
// MATH.md §3.5) and the Born distribution of the outcome, which must give
// ⟨ψ|H|ψ⟩ exactly (tolerance 1e-12).
func TestImportanceSamplingUnbiasedExact(t *testing.T) {
	h := h2JW(t)
	sim, err := NewSimulator(randomState(4, 23), 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	exact := h.Offset()
	for i := range h.Len() {
		exact += h.Coeff(i) * hamiltonian.Expectation(sim.state, h.Pauli(i))
	}
	mean := 0.0
	for i := range h.Len() {
		s := pauli.Complete(h.Pauli(i), pauli.Z)
		for b, pb := range sim.Probabilities(nil, s) {
			res, err := ImportanceSampling(h, oneShot(4, s, uint64(b)), []int{i}, nil)
			if err != nil {
				t.Fatal(err)
			}
			mean += math.Abs(h.Coeff(i)) / h.OneNorm() * pb * res.Energy
		}
	}
	if math.Abs(mean-exact) > 1e-12 {
		t.Errorf("expected importance-sampling value = %v, want ⟨H⟩ = %v", mean, exact)
	}
}

func TestImportanceSampling(t *testing.T) {
	h := mustH(t, 2, 1, map[string]float64{"ZI": 0.5, "XX": -1.5})
	rec := NewRecords(2)
	zz, xx := pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("XX")
	rec.Add(zz, pauli.Bits{0b01}) // ZI sample −1
	rec.Add(xx, pauli.Bits{0b11}) // XX sample +1
	rec.Add(zz, pauli.Bits{0b10}) // ZI sample +1
	// ‖h‖₁ = 2: values 1 − 2, 1 − 2, 1 + 2 → mean 1/3.
	terms := map[string]int{}
	for i := range h.Len() {
		terms[h.Pauli(i).String()] = i
	}
	zi, xxi := terms["ZI"], terms["XX"]
	res, err := ImportanceSampling(h, rec, []int{zi, xxi, zi}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Energy-1.0/3) > 1e-12 {
		t.Errorf("ImportanceSampling = %v, want 1/3", res.Energy)
	}
	// Sample standard deviation of (−1, −1, 3) is √(16/3); over √3.
	if want := math.Sqrt(16.0/3) / math.Sqrt(3); math.Abs(res.StdErr-want) > 1e-12 {
		t.Errorf("StdErr = %v, want %v", res.StdErr, want)
	}
	if res.Cover[zi] != 2 || res.Means[zi] != 0 || res.Means[xxi] != 1 {
		t.Errorf("Cover, Means = %v, %v, want ZI drawn twice with mean 0, XX mean 1", res.Cover, res.Means)
	}
	ex := make([]bool, 2)
	ex[xxi] = true
	res, err = ImportanceSampling(h, rec, []int{zi, xxi, zi}, &Options{Exclude: ex})
	if err != nil {
		t.Fatal(err)
	}
	if res.Bias != 1.5 || math.Abs(res.Energy-1) > 1e-12 {
		t.Errorf("ImportanceSampling excluding XX = %v (bias %v), want 1 (bias 1.5)", res.Energy, res.Bias)
	}
	for _, tc := range []struct {
		name  string
		drawn []int
		want  string
	}{
		{"too few", []int{zi}, "1 drawn terms for 3 shots"},
		{"out of range", []int{zi, 5, zi}, "shot 1 drew term 5"},
		{"not covered", []int{xxi, xxi, zi}, "shot 0: setting ZZ does not cover"},
	} {
		if _, err := ImportanceSampling(h, rec, tc.drawn, nil); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: ImportanceSampling error = %v, want one mentioning %q", tc.name, err, tc.want)
		}
	}
}
