package scenario

import (
	"math"
	"testing"
)

func TestLadderShape(t *testing.T) {
	h := Ladder()
	// 10 leg bonds, 6 rungs × (ZZ, XX, YY), 12 X fields, 12 Z fields.
	if h.Qubits() != 12 || h.Len() != 52 || h.Offset() != 0 {
		t.Fatalf("Ladder: %d qubits, %d terms, offset %v; want 12, 52, 0", h.Qubits(), h.Len(), h.Offset())
	}
	// One-norm from the couplings in the file header: 10·1 + 6·0.6 + 12·0.3 + 12·0.8 + 12·0.05.
	if got, want := h.OneNorm(), 27.4; math.Abs(got-want) > 1e-12 {
		t.Errorf("OneNorm = %v, want %v", got, want)
	}
}
