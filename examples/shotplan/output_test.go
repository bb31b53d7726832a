//go:build unix

package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// -o - writes the output to standard output (a plan that reads back) and
// the summary to standard error.
func TestOutputStdout(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h.txt")
	if err := os.WriteFile(ham, []byte("0.5 ZZ\n0.25 XX\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	var stdout, stderr bytes.Buffer
	if code := run([]string{"plan", "-ham", ham, "-shots", "10", "-o", "-"}, &stdout, &stderr); code != 0 {
		t.Fatalf("plan -o -: exit %d, stderr %q", code, stderr.String())
	}
	f, err := allocate.ReadPlan(&stdout)
	if err != nil || f.Plan.TotalShots() != 10 {
		t.Errorf("plan -o - printed no plan of 10 shots: %v", err)
	}
	if !strings.Contains(stderr.String(), "wrote standard output") {
		t.Errorf("summary %q not on standard error", stderr.String())
	}
	stdout.Reset()
	stderr.Reset()
	fcidump := filepath.Join("testdata", "h2_sto3g_0.74A.fcidump")
	if code := run([]string{"convert", "-o", "-", fcidump}, &stdout, &stderr); code != 0 {
		t.Fatalf("convert -o -: exit %d, stderr %q", code, stderr.String())
	}
	if h, err := hamiltonian.Read(&stdout); err != nil || h.Qubits() != 4 {
		t.Errorf("convert -o - printed no 4-qubit Hamiltonian: %v", err)
	}
}

// An output replaced by a command keeps its mode; a new one gets 0666 less
// the umask (POSIX open(2)).
func TestOutputModes(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h.txt")
	if err := os.WriteFile(ham, []byte("0.5 ZZ\n0.25 XX\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	kept := filepath.Join(dir, "kept.json")
	if err := os.WriteFile(kept, nil, 0o600); err != nil {
		t.Fatal(err)
	}
	os.Chmod(kept, 0o600)
	old := syscall.Umask(0o077)
	defer syscall.Umask(old)
	for _, c := range []struct {
		path string
		want os.FileMode
	}{{kept, 0o600}, {filepath.Join(dir, "new.json"), 0o600}} {
		var stdout, stderr bytes.Buffer
		if code := run([]string{"plan", "-ham", ham, "-shots", "10", "-o", c.path}, &stdout, &stderr); code != 0 {
			t.Fatalf("plan: exit %d, stderr %q", code, stderr.String())
		}
		if fi, err := os.Stat(c.path); err != nil || fi.Mode().Perm() != c.want {
			t.Errorf("%s: mode %v (%v), want %v", c.path, fi.Mode().Perm(), err, c.want)
		}
	}
	syscall.Umask(0o022)
	kept644 := filepath.Join(dir, "kept644.json")
	os.WriteFile(kept644, nil, 0o644)
	os.Chmod(kept644, 0o640)
	var stdout, stderr bytes.Buffer
	if code := run([]string{"plan", "-ham", ham, "-shots", "10", "-o", kept644}, &stdout, &stderr); code != 0 {
		t.Fatalf("plan: exit %d, stderr %q", code, stderr.String())
	}
	if fi, _ := os.Stat(kept644); fi.Mode().Perm() != 0o640 {
		t.Errorf("replaced 0640 output has mode %v", fi.Mode().Perm())
	}
}
