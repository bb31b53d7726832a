package main

import (
	"math"
	"os"
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

// TestBudgetReadout checks budget -readout. On one qubit with H = Z and
// rates 0 every calibration count is 0, and the Clopper–Pearson interval of
// 0 flips in C trials at level α is [0, 1 − (α/2)^(1/C)] (the closed form
// of the Beta(1, C) quantile, textbook); with α = δ_cal/2 (two intervals)
// and the centres as plug-in rates, λ̃ = 1 − u and the calibration bias of
// the term Z is ε = 2·(u/2)/λ̃ (MATH.md §2.1.1). The budget's parts must
// add up (total = 2C + copies × reference, certified = calibration bias +
// radius + bias ≤ ε), and on H2 one copy fewer at the same calibration
// size must miss ε: the radius
// scales as 1/sqrt(copies) (MATH.md §2.1.3).
func TestBudgetReadout(t *testing.T) {
	dir := t.TempDir()
	one := filepath.Join(dir, "z.txt")
	if err := os.WriteFile(one, []byte("qubits 1\n1.0 Z\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	var res struct {
		Rows []budgetRow `json:"strategies"`
	}
	const eps, delta = 0.1, 0.05
	okJSON(t, &res, "budget", "-ham", one, "-eps", "0.1", "-readout", "0", "-strategy", "sorted")
	b := res.Rows[0].Readout
	if b == nil || !b.Reachable || b.CalibrationDelta != delta/4 {
		t.Fatalf("budget -readout 0: %+v", res.Rows[0])
	}
	u := 1 - math.Pow(delta/4/4, 1/float64(b.CalibrationShots))
	if want := u / (1 - u); math.Abs(b.CalibrationBias-want) > 1e-9*want {
		t.Errorf("calibration bias %v for C = %d, want %v", b.CalibrationBias, b.CalibrationShots, want)
	}
	ham := h2Ham(t, dir)
	okJSON(t, &res, "budget", "-ham", ham, "-eps", "0.01", "-readout", "p01=0.02,p10=0.05", "-calibration-delta", "0.01")
	for _, r := range res.Rows {
		b := r.Readout
		if b == nil || !b.Reachable {
			t.Errorf("%s: no readout budget: %+v", r.Strategy, b)
			continue
		}
		if b.TotalShots != 2*b.CalibrationShots+b.Copies*r.Reference || b.MeasurementShots != b.Copies*r.Reference {
			t.Errorf("%s: total %d ≠ 2×%d + %d × %d", r.Strategy, b.TotalShots, b.CalibrationShots, b.Copies, r.Reference)
		}
		if sum := b.CalibrationBias + b.Radius + b.Bias; math.Abs(sum-b.Bound) > 1e-12 || b.Bound > eps || b.CalibrationDelta != 0.01 {
			t.Errorf("%s: certified %v = %v + %v + %v, target %v, calibration δ %v", r.Strategy, b.Bound, b.CalibrationBias, b.Radius, b.Bias, 0.01, b.CalibrationDelta)
		}
		if b.Copies > 1 {
			fewer := b.Radius*math.Sqrt(float64(b.Copies)/float64(b.Copies-1)) + b.CalibrationBias + b.Bias
			if fewer <= 0.01 {
				t.Errorf("%s: %d copies would do (certified %v)", r.Strategy, b.Copies-1, fewer)
			}
		}
	}
	out := ok(t, "budget", "-ham", ham, "-eps", "0.01", "-readout", "0.02", "-strategy", "greedy")
	for _, w := range []string{"calibration included", "2×"} {
		if !strings.Contains(out, w) {
			t.Errorf("budget -readout output lacks %q:\n%s", w, out)
		}
	}
	// Rates from a calibration file: the observed fractions.
	cal := filepath.Join(dir, "cal.csv")
	if err := os.WriteFile(cal, []byte("prepared,outcome\n0000,0100\n0000,0000\n1111,1111\n1111,0111\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	okJSON(t, &res, "budget", "-ham", ham, "-eps", "0.05", "-calibration", cal, "-strategy", "greedy")
	if b := res.Rows[0].Readout; b == nil || !b.Reachable {
		t.Errorf("budget -calibration: %+v", res.Rows[0])
	}
}
