package main

import (
	"bytes"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// number finds the first number after label at the start of a line.
func number(t *testing.T, out, label string) float64 {
	t.Helper()
	m := regexp.MustCompile(`(?m)^` + regexp.QuoteMeta(label) + `\s+±?(-?[0-9.]+)`).FindStringSubmatch(out)
	if m == nil {
		t.Fatalf("no %q line in the report:\n%s", label, out)
	}
	v, err := strconv.ParseFloat(m[1], 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// TestQuickstart runs the quick start as a user would, with its defaults
// and with smaller budgets, and checks that the estimate lies within the
// certified bound of the exact energy. Each run is seeded; over seeds a
// run would fail with probability at most δ = 0.05 (the certificate's
// guarantee, MATH.md §3.1), so the three fixed seeds below fail with
// probability at most 0.15 if the seeds were drawn afresh, and never here.
func TestQuickstart(t *testing.T) {
	for _, args := range [][]string{nil, {"-shots", "200", "-seed", "7"}, {"-shots", "300", "-strategy", "derand", "-seed", "2"}} {
		t.Run(strings.Join(append([]string{"args"}, args...), " "), func(t *testing.T) {
			var out, errOut bytes.Buffer
			if code := run(args, &out, &errOut); code != 0 {
				t.Fatalf("quickstart %v: exit %d, stderr %q", args, code, errOut.String())
			}
			rep := out.String()
			exact := number(t, rep, "exact ground energy")
			est := number(t, rep, "estimate")
			bound := number(t, rep, "certified bound")
			bar := number(t, rep, "error bar from data")
			if d := math.Abs(est - exact); d > bound {
				t.Errorf("estimate %v is %v from the exact %v, beyond the certified bound %v", est, d, exact, bound)
			}
			if !(bar > 0 && bar < bound) {
				t.Errorf("data error bar %v, want positive and below the worst-case bound %v", bar, bound)
			}
			for _, w := range []string{"APPROXIMATE", "terms that dominate", "distinct settings"} {
				if !strings.Contains(rep, w) {
					t.Errorf("report lacks %q:\n%s", w, rep)
				}
			}
		})
	}
}

// TestQuickstartDefaults pins the described job: 1000 greedy shots at δ = 0.05.
func TestQuickstartDefaults(t *testing.T) {
	var out, errOut bytes.Buffer
	if code := run(nil, &out, &errOut); code != 0 {
		t.Fatalf("exit %d: %s", code, errOut.String())
	}
	for _, w := range []string{"greedy strategy, 1000 shots", "δ = 0.05", "12 qubits"} {
		if !strings.Contains(out.String(), w) {
			t.Errorf("report lacks %q:\n%s", w, out.String())
		}
	}
}

func TestQuickstartBadFlag(t *testing.T) {
	var out, errOut bytes.Buffer
	if code := run([]string{"-strategy", "best"}, &out, &errOut); code != 1 || !strings.Contains(errOut.String(), `unknown strategy "best"`) {
		t.Errorf("quickstart -strategy best: exit %d, stderr %q", code, errOut.String())
	}
	if code := run([]string{"extra"}, &out, &errOut); code != 2 {
		t.Errorf("quickstart extra: exit %d, want 2", code)
	}
}
