package main

import (
	"bytes"
	"math"
	"regexp"
	"slices"
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

// TestQuickstartBadFlag: every bad flag is an input error, exit status 2
// and one line on standard error, before any work.
func TestQuickstartBadFlag(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"-strategy", "best"}, `unknown strategy "best"`},
		{[]string{"-strategy", "fixed"}, "-strategy fixed"},
		{[]string{"-shots", "0"}, "-shots 0"},
		{[]string{"-delta", "3"}, "-delta 3"},
		{[]string{"-shots", "x"}, "-shots"},
		{[]string{"-bogus"}, "-bogus"},
		{[]string{"extra"}, `"extra"`},
	}
	for _, c := range cases {
		var out, errOut bytes.Buffer
		code := run(c.args, &out, &errOut)
		if e := errOut.String(); code != 2 || strings.Count(e, "\n") != 1 || !strings.HasSuffix(e, "\n") || !strings.Contains(e, c.want) {
			t.Errorf("quickstart %v: exit %d, stderr %q; want 2 and one line mentioning %q", c.args, code, e, c.want)
		}
		if out.Len() != 0 {
			t.Errorf("quickstart %v: stdout %q, want nothing", c.args, out.String())
		}
	}
}

// TestQuickstartTop: -top N lists N dominating terms, -top 0 none.
func TestQuickstartTop(t *testing.T) {
	for _, n := range []int{0, 2} {
		var out, errOut bytes.Buffer
		if code := run([]string{"-shots", "100", "-top", strconv.Itoa(n)}, &out, &errOut); code != 0 {
			t.Fatalf("quickstart -top %d: exit %d, stderr %q", n, code, errOut.String())
		}
		lines := strings.Split(out.String(), "\n")
		i := slices.IndexFunc(lines, func(l string) bool { return strings.Contains(l, "term (qubit 0 first)") })
		got := 0
		if i >= 0 {
			for _, l := range lines[i+1:] {
				if strings.TrimSpace(l) != "" {
					got++
				}
			}
		}
		if got != n {
			t.Errorf("quickstart -top %d lists %d terms, want %d:\n%s", n, got, n, out.String())
		}
	}
}
