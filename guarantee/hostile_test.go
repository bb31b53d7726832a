package guarantee

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// TestDeltaRange checks that a δ so small that ln(2/δ) overflows is an
// error, not an infinite bound, and that δ = MinDelta still gives a finite
// one.
func TestDeltaRange(t *testing.T) {
	h, err := hamiltonian.Read(strings.NewReader("1 ZZ\n0.5 XX\n"))
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 10, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range []float64{5e-324, 1e-310, 0, -1, 1, math.NaN()} {
		if c, err := CertifyPlan(h, p, d, nil); err == nil {
			t.Errorf("CertifyPlan at δ = %v = %v, want an error", d, c.Bound)
		}
		if _, err := Certify(h, p.Settings, p.Shots, d, nil); err == nil {
			t.Errorf("Certify at δ = %v succeeded", d)
		}
	}
	c, err := CertifyPlan(h, p, MinDelta, nil)
	if err != nil || math.IsInf(c.Bound, 0) || math.IsNaN(c.Bound) {
		t.Errorf("CertifyPlan at δ = MinDelta = %v, %v; want a finite bound", c, err)
	}
}

// TestAnytimeHamiltonianChanged checks that a Hamiltonian whose content
// changed since its distribution was built is refused, not sampled with
// stale term tables (which indexed past the end of the new ones).
func TestAnytimeHamiltonianChanged(t *testing.T) {
	h, err := hamiltonian.Read(strings.NewReader("1 ZZI\n0.5 XXI\n0.25 IZZ\n0.125 IXX\n"))
	if err != nil {
		t.Fatal(err)
	}
	plan, err := allocate.Run(h, 20, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	d, err := IIDOf(h, plan)
	if err != nil {
		t.Fatal(err)
	}
	// Decoding into the Hamiltonian in use is refused by the decoder.
	if err := json.Unmarshal([]byte(`{"qubits": 3, "terms": [{"pauli": "ZZZ", "coeff": 1}]}`), h); err == nil {
		t.Fatal("decoding into a Hamiltonian in use succeeded")
	}
	// Overwriting it through its pointer is caught by the fingerprint.
	small, err := hamiltonian.Read(strings.NewReader("1 ZZZ\n"))
	if err != nil {
		t.Fatal(err)
	}
	*h = *small
	dev, _, err := estimate.GroundStateSimulator(h, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	_, err = Anytime(h, dev, &AnytimeOptions{Plan: d, Delta: 0.05, MaxShots: 1000, Seed: 1})
	if err == nil || !strings.Contains(err.Error(), "another Hamiltonian") {
		t.Errorf("Anytime on a changed Hamiltonian: %v, want an error", err)
	}
}
