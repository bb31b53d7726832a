package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestHostile runs every case under testdata/hostile through the command's
// own entry point. A case is a folder holding
//
//   - args: the command line, one argument per line; "$CASE" in an argument
//     stands for the case's folder (its input files), "$OUT" for a fresh empty
//     folder the command may write to;
//   - want: the expected exit status on the first line, then one line per
//     text that standard error must contain (the file, line or term the
//     message names, and what is wrong);
//   - the case's input files.
//
// After a failing run (exit status ≠ 0) $OUT must hold no file: a refused
// step leaves nothing behind (no output, no temporary file).
func TestHostile(t *testing.T) {
	dirs, err := filepath.Glob(filepath.Join("testdata", "hostile", "*"))
	if err != nil {
		t.Fatal(err)
	}
	if len(dirs) == 0 {
		t.Fatal("no cases under testdata/hostile")
	}
	for _, dir := range dirs {
		t.Run(filepath.Base(dir), func(t *testing.T) {
			runHostileCase(t, dir)
		})
	}
}

func runHostileCase(t *testing.T, dir string) {
	argsText, err := os.ReadFile(filepath.Join(dir, "args"))
	if err != nil {
		t.Fatal(err)
	}
	wantText, err := os.ReadFile(filepath.Join(dir, "want"))
	if err != nil {
		t.Fatal(err)
	}
	out := t.TempDir()
	var args []string
	for _, line := range strings.Split(strings.TrimRight(string(argsText), "\n"), "\n") {
		line = strings.ReplaceAll(line, "$CASE", dir)
		line = strings.ReplaceAll(line, "$OUT", out)
		args = append(args, line)
	}
	want := strings.Split(strings.TrimRight(string(wantText), "\n"), "\n")
	wantCode, err := strconv.Atoi(strings.TrimSpace(want[0]))
	if err != nil {
		t.Fatalf("want: first line %q is not an exit status", want[0])
	}
	var stdout, stderr bytes.Buffer
	code := run(args, &stdout, &stderr)
	if code != wantCode {
		t.Errorf("exit status %d, want %d; stderr %q", code, wantCode, stderr.String())
	}
	for _, s := range want[1:] {
		if !strings.Contains(stderr.String(), s) {
			t.Errorf("stderr %q does not contain %q", stderr.String(), s)
		}
	}
	if code != 0 {
		if strings.Count(strings.TrimRight(stderr.String(), "\n"), "\n") > 0 {
			t.Errorf("a refusal is one line on standard error, got %q", stderr.String())
		}
		left, err := os.ReadDir(out)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range left {
			t.Errorf("a failed run left %s behind", f.Name())
		}
	}
}
