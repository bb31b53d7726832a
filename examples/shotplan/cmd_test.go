package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
)

// Every command is listed by shotplan -h and answers -h in its spoken form
// ("rounds add -h" as two words).
func TestEveryCommandListed(t *testing.T) {
	_, out, _ := sp(t, "-h")
	for _, c := range commands {
		if !strings.Contains(out, "\n  "+c.name+" ") {
			t.Errorf("shotplan -h does not list %q:\n%s", c.name, out)
		}
		code, help, errOut := sp(t, append(strings.Fields(c.name), "-h")...)
		if code != 0 || errOut != "" || !strings.HasPrefix(help, "usage: shotplan "+c.name) {
			t.Errorf("shotplan %s -h: exit %d, %q", c.name, code, errOut)
		}
	}
	for _, want := range []string{"budget", "rounds start", "rounds next", "rounds add", "rounds status", "version"} {
		if !strings.Contains(out, "  "+want+" ") {
			t.Errorf("shotplan -h lacks %s", want)
		}
	}
}

// version names the module, the Go release and the file formats'
// versions as the writers stamp them.
func TestVersion(t *testing.T) {
	var v struct {
		Module       string `json:"module"`
		Version      string `json:"version"`
		Go           string `json:"go"`
		PlanFormat   string `json:"plan_format"`
		PlanVersion  int    `json:"plan_version"`
		CompactPlan  int    `json:"compact_plan_version"`
		StateFormat  string `json:"rounds_state_format"`
		StateVersion int    `json:"rounds_state_version"`
	}
	okJSON(t, &v, "version")
	if v.Module == "" || v.Version == "" || v.Go != runtime.Version() || v.PlanFormat != allocate.PlanFormat ||
		v.PlanVersion != allocate.PlanVersion || v.CompactPlan != allocate.CompactPlanVersion || v.StateFormat != roundsFormat || v.StateVersion != roundsVersion {
		t.Errorf("version: %+v", v)
	}
	out := ok(t, "version")
	if !strings.Contains(out, "plan files") || !strings.Contains(out, "rounds state files") {
		t.Errorf("version printed %q", out)
	}
}

// A single-valued flag given twice is refused (not last-wins), whatever
// its type; -records may be repeated.
func TestRepeatedFlag(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	for _, args := range [][]string{
		{"plan", "-ham", ham, "-shots", "10", "-shots", "20", "-o", filepath.Join(dir, "p.json")},
		{"info", "-json", "-json", ham},
		{"certify", "-ham", ham, "-ham", ham, "-plan", "x"},
		{"budget", "-ham", ham, "-eps", "0.1", "-delta", "0.1", "-delta", "0.2"},
	} {
		code, _, errOut := sp(t, args...)
		if code != 2 || !strings.Contains(errOut, "more than once") || strings.Count(errOut, "\n") != 1 {
			t.Errorf("%v: exit %d, %q; want 2 and one line", args, code, errOut)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "p.json")); err == nil {
		t.Error("a refused plan was written")
	}
}

// estimate combines records from several files and standard input: the
// result equals that of the records in one file.
func TestEstimateCombinedRecords(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	plan := filepath.Join(dir, "plan.json")
	recs := filepath.Join(dir, "all.csv")
	ok(t, "plan", "-ham", ham, "-shots", "300", "-o", plan)
	ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", recs)
	var whole map[string]any
	okJSON(t, &whole, "estimate", "-ham", ham, "-plan", plan, "-records", recs)

	lines := strings.SplitAfter(string(readFile(t, recs)), "\n")
	third := 1 + (len(lines)-1)/3
	a, b, c := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv"), filepath.Join(dir, "c.csv")
	os.WriteFile(a, []byte(strings.Join(lines[:third], "")), 0o644)
	os.WriteFile(b, []byte(lines[0]+strings.Join(lines[third:2*third], "")), 0o644)
	os.WriteFile(c, []byte(lines[0]+strings.Join(lines[2*third:], "")), 0o644)
	old := stdin
	defer func() { stdin = old }()
	stdin = bytes.NewReader(readFile(t, c))
	var parts map[string]any
	okJSON(t, &parts, "estimate", "-ham", ham, "-plan", plan, "-records", a+","+b, "-records", "-")
	wj, _ := json.Marshal(whole)
	pj, _ := json.Marshal(parts)
	if !bytes.Equal(wj, pj) {
		t.Errorf("combined %s\nwhole %s", pj, wj)
	}
	// Two files together short of the plan are refused naming both.
	code, _, errOut := sp(t, "estimate", "-ham", ham, "-plan", plan, "-records", a, "-records", b)
	if code != 2 || !strings.Contains(errOut, "a.csv, ") || !strings.Contains(errOut, "b.csv") {
		t.Errorf("a + b: exit %d, %q", code, errOut)
	}
	// Standard input twice, or a JSON stream on it.
	stdin = bytes.NewReader(nil)
	if code, _, errOut := sp(t, "estimate", "-ham", ham, "-plan", plan, "-records", "-,-"); code != 2 || !strings.Contains(errOut, "standard input given more than once") {
		t.Errorf("-records -,-: exit %d, %q", code, errOut)
	}
	jrec := filepath.Join(dir, "all.json")
	ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", jrec)
	stdin = bytes.NewReader(readFile(t, jrec))
	ok(t, "estimate", "-ham", ham, "-plan", plan, "-records", "-")
}
