package main

import (
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// h2Ham converts the H2 integrals to a Hamiltonian file in dir.
func h2Ham(t *testing.T, dir string) string {
	t.Helper()
	ham := filepath.Join(dir, "h2.txt")
	ok(t, "convert", "-o", ham, h2Dump)
	return ham
}

// budget answers for every strategy but fixed, and each answer is the
// number of copies of the strategy's reference plan that the certificate
// (guarantee.CertifyPlan, the library's certify) passes at ε, and one copy
// fewer fails.
func TestBudgetTable(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	const eps, delta = 0.01, 0.05
	var res struct {
		Rows []budgetRow `json:"strategies"`
	}
	okJSON(t, &res, "budget", "-ham", ham, "-eps", "0.01", "-proxy", "exact")
	var names []string
	for _, n := range allocate.Names() {
		if n != "fixed" {
			names = append(names, n)
		}
	}
	if len(res.Rows) != len(names) {
		t.Fatalf("%d rows, want one per strategy (%v)", len(res.Rows), names)
	}
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	// -proxy exact also gives sorted, sorted-gc and color-gc their shares.
	gs, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	px, err := allocate.NewStateProxy(gs.State)
	if err != nil {
		t.Fatal(err)
	}
	for k, r := range res.Rows {
		if r.Strategy != names[k] {
			t.Errorf("row %d is %s, want %s", k, r.Strategy, names[k])
		}
		if !r.Reachable {
			continue
		}
		if r.Shots != r.Copies*r.Reference {
			t.Errorf("%s: %d certified shots ≠ %d copies × %d", r.Strategy, r.Shots, r.Copies, r.Reference)
		}
		a, err := allocate.ByName(r.Strategy, 1)
		if err != nil {
			t.Fatal(err)
		}
		setProxy(a, px)
		p, err := allocate.Run(h, r.Reference, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range []struct {
			copies int
			pass   bool
		}{{r.Copies, true}, {r.Copies - 1, false}} {
			if c.copies == 0 {
				continue
			}
			q := &allocate.Plan{Qubits: p.Qubits, Settings: p.Settings}
			for _, n := range p.Shots {
				q.Shots = append(q.Shots, c.copies*n)
			}
			cert, err := guarantee.CertifyPlan(h, q, delta, nil)
			if err != nil {
				t.Fatal(err)
			}
			if (cert.Bound <= eps*(1+1e-12)) != c.pass {
				t.Errorf("%s: %d copies certify %g, want pass=%v at ε=%g", r.Strategy, c.copies, cert.Bound, c.pass, eps)
			}
		}
		// On the exact ground state the approximate error bar needs fewer
		// shots than the worst case: Var ≤ V (guarantee.BudgetOf).
		if r.Proxy > r.Shots {
			t.Errorf("%s: proxy shots %d above the certified %d", r.Strategy, r.Proxy, r.Shots)
		}
	}
	out := ok(t, "budget", "-ham", ham, "-eps", "0.01", "-strategy", "greedy")
	if !strings.Contains(out, "greedy") || strings.Contains(out, "sorted") {
		t.Errorf("-strategy greedy printed %q", out)
	}
}

func TestBudgetBadInput(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"budget", "-ham", ham}, "-eps"},
		{[]string{"budget", "-ham", ham, "-eps", "-1"}, "-eps -1"},
		{[]string{"budget", "-ham", ham, "-eps", "0.01", "-delta", "2"}, "-delta"},
		{[]string{"budget", "-ham", ham, "-eps", "0.01", "-strategy", "nope"}, "nope"},
		{[]string{"budget", "-ham", ham, "-eps", "0.01", "-strategy", "fixed"}, "fixed"},
		{[]string{"budget", "-ham", ham, "-eps", "0.01", "-proxy", "012"}, "-proxy"},
		{[]string{"budget", "-ham", ham, "-eps", "0.01", "-reference", "-3"}, "-reference"},
	} {
		code, _, errOut := sp(t, c.args...)
		if code != 2 || !strings.Contains(errOut, c.want) || strings.Count(errOut, "\n") != 1 {
			t.Errorf("%v: exit %d, stderr %q; want 2 and one line naming %q", c.args, code, errOut, c.want)
		}
	}
}
