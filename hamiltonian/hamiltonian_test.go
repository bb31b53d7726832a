package hamiltonian

import (
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

func ps(s string) pauli.String { return pauli.MustParse(s) }

func TestNewMergesAndOrders(t *testing.T) {
	h := mustNew(t, 2, 0.5, []Term{
		{ps("ZZ"), 1}, {ps("XX"), 2}, {ps("II"), 3}, {ps("ZZ"), 0.25}, {ps("YY"), 1}, {ps("YY"), -1}, {ps("XI"), 0},
	})
	want := []Term{{ps("ZZ"), 1.25}, {ps("XX"), 2}}
	if h.Len() != len(want) {
		t.Fatalf("Len = %d, want %d (%v)", h.Len(), len(want), h)
	}
	for i, tm := range h.Terms() {
		if !tm.Pauli.Equal(want[i].Pauli) || tm.Coeff != want[i].Coeff {
			t.Errorf("term %d = %v %s, want %v %s", i, tm.Coeff, tm.Pauli, want[i].Coeff, want[i].Pauli)
		}
		if h.Coeff(i) != tm.Coeff || !h.Pauli(i).Equal(tm.Pauli) || !h.Table().At(i).Equal(tm.Pauli) || h.Coeffs()[i] != tm.Coeff {
			t.Errorf("accessors disagree on term %d", i)
		}
	}
	if h.Offset() != 3.5 {
		t.Errorf("Offset = %v, want 3.5 (0.5 + identity term 3)", h.Offset())
	}
	if h.Qubits() != 2 {
		t.Errorf("Qubits = %d, want 2", h.Qubits())
	}
	// Stopping the iteration early is honoured.
	k := 0
	for range h.Terms() {
		k++
		break
	}
	if k != 1 {
		t.Errorf("Terms ignored break")
	}
}

func TestNewErrors(t *testing.T) {
	for _, tc := range []struct {
		name   string
		n      int
		offset float64
		terms  []Term
		reason string
	}{
		{"negative width", -1, 0, nil, "negative qubit count"},
		{"NaN offset", 2, math.NaN(), nil, "offset"},
		{"wrong width", 2, 0, []Term{{ps("XX"), 1}, {ps("XXX"), 1}}, "term 1 (XXX): 3 qubits, want 2"},
		{"infinite coefficient", 2, 0, []Term{{ps("ZZ"), math.Inf(1)}}, "term 0 (ZZ): coefficient +Inf is not finite"},
		{"merged overflow", 2, 0, []Term{{ps("ZZ"), math.MaxFloat64}, {ps("ZZ"), math.MaxFloat64}}, "overflows"},
		{"offset overflow", 1, math.MaxFloat64, []Term{{ps("I"), math.MaxFloat64}}, "overflows"},
	} {
		_, err := New(tc.n, tc.offset, tc.terms)
		if err == nil || !strings.Contains(err.Error(), tc.reason) {
			t.Errorf("%s: New = %v, want error with %q", tc.name, err, tc.reason)
		}
	}
}

func TestOneNormPruneAddScale(t *testing.T) {
	h := mustNew(t, 3, -2, []Term{{ps("ZZI"), 1.5}, {ps("IXX"), -0.25}, {ps("YIY"), 1e-9}, {ps("ZIZ"), -3}})
	// ‖h‖₁ = 1.5 + 0.25 + 1e-9 + 3, the offset excluded (MATH.md §3.5).
	if got, want := h.OneNorm(), 4.750000001; math.Abs(got-want) > 1e-15 {
		t.Errorf("OneNorm = %.12g, want %.12g", got, want)
	}
	p := h.Prune(1e-6)
	if p.Len() != 3 || p.Offset() != -2 || p.Pauli(2).String() != "ZIZ" {
		t.Errorf("Prune(1e-6) = %v, want three terms, offset −2, order kept", p)
	}
	if q := h.Prune(0.25); q.Len() != 2 {
		t.Errorf("Prune(0.25) kept %d terms, want 2 (|h| equal to tol is dropped)", q.Len())
	}
	if h.Len() != 4 {
		t.Errorf("Prune modified its receiver")
	}
	s, err := h.Scale(-2)
	if err != nil || s.Offset() != 4 || s.Coeff(0) != -3 || s.Len() != 4 {
		t.Errorf("Scale(−2) = %v, %v", s, err)
	}
	z, err := h.Scale(0)
	if err != nil || z.Len() != 0 || z.Offset() != 0 {
		t.Errorf("Scale(0) = %v, %v; want no terms", z, err)
	}
	neg, _ := h.Scale(-1)
	sum, err := h.Add(neg)
	if err != nil || sum.Len() != 0 || sum.Offset() != 0 {
		t.Errorf("h + (−h) = %v, %v; want zero", sum, err)
	}
	if _, err := h.Add(mustNew(t, 2, 0, nil)); err == nil {
		t.Error("Add of different widths succeeded")
	}
	if !h.Equal(h) || h.Equal(p) {
		t.Error("Equal is wrong")
	}
}
