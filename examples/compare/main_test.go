package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
)

// TestCompare runs the comparison with a small budget and checks the table
// and the plot files.
func TestCompare(t *testing.T) {
	dir := t.TempDir()
	for _, ext := range []string{".png", ".svg"} {
		t.Run(ext, func(t *testing.T) {
			path := filepath.Join(dir, "bounds"+ext)
			var out, errOut bytes.Buffer
			code := run([]string{"-shots", "200", "-reps", "2", "-sweep", "50,100,400", "-plot", path}, &out, &errOut)
			if code != 0 {
				t.Fatalf("exit %d, stderr %q", code, errOut.String())
			}
			if errOut.Len() != 0 {
				t.Errorf("stderr %q, want nothing when it is not a terminal", errOut.String())
			}
			for _, name := range allocate.Names() {
				if !strings.Contains(out.String(), "\n  "+name+" ") {
					t.Errorf("table lacks a row for %q:\n%s", name, out.String())
				}
			}
			b, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			magic := map[string]string{".png": "\x89PNG", ".svg": "<?xml"}[ext]
			if len(b) < 1000 || !strings.HasPrefix(string(b), magic) {
				t.Errorf("%s: %d bytes starting %q, want a non-empty %s image", path, len(b), b[:min(len(b), 8)], ext)
			}
			if ext == ".svg" {
				for _, label := range append([]string{"shots", "certified bound"}, allocate.Names()...) {
					if !strings.Contains(string(b), label) {
						t.Errorf("the SVG plot lacks the label %q", label)
					}
				}
			}
		})
	}
}

// TestCompareFile runs on a Hamiltonian file: the transverse-field Ising
// ring of 4 sites, whose ground energy at J = h = 1 is −2/sin(π/8) =
// −5.226251859506 (Pfeuty 1970; see the project's reference values).
func TestCompareFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "ring.txt")
	text := "-1 ZZII\n-1 IZZI\n-1 IIZZ\n-1 ZIIZ\n-1 XIII\n-1 IXII\n-1 IIXI\n-1 IIIX\n"
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errOut bytes.Buffer
	if code := run([]string{"-ham", path, "-shots", "100", "-reps", "2", "-sweep", "100", "-plot", "", "-strategies", "greedy,sorted"}, &out, &errOut); code != 0 {
		t.Fatalf("exit %d, stderr %q", code, errOut.String())
	}
	if !strings.Contains(out.String(), "exact ground energy -5.22625") {
		t.Errorf("output lacks the ring's exact energy −5.22625:\n%s", out.String())
	}
}

func TestCompareBadInput(t *testing.T) {
	dir := t.TempDir()
	offsetOnly := filepath.Join(t.TempDir(), "offset.txt")
	if err := os.WriteFile(offsetOnly, []byte("qubits 4\n-0.5 I\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"missing file", []string{"-ham", filepath.Join(dir, "none.txt")}, "none.txt"},
		{"plot format", []string{"-plot", filepath.Join(dir, "x.pdf")}, ".png or .svg"},
		{"unknown strategy", []string{"-strategies", "greedy,best"}, `"best"`},
		{"bad sweep", []string{"-sweep", "100,x"}, `"x"`},
		{"unknown flag", []string{"-bogus"}, "-bogus"},
		{"bad flag value", []string{"-reps", "x"}, "-reps"},
		{"plot directory missing", []string{"-plot", filepath.Join(dir, "nodir", "x.png"), "-reps", "1", "-sweep", "10", "-shots", "10"}, "nodir"},
		{"nothing to measure", []string{"-ham", offsetOnly, "-plot", ""}, "no non-identity terms"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var out, errOut bytes.Buffer
			code := run(c.args, &out, &errOut)
			if code != 2 || strings.Count(errOut.String(), "\n") != 1 || !strings.Contains(errOut.String(), c.want) {
				t.Errorf("exit %d, stderr %q; want 2 and one line mentioning %q", code, errOut.String(), c.want)
			}
			if entries, _ := os.ReadDir(dir); len(entries) != 0 {
				t.Errorf("files left behind: %v", entries)
			}
		})
	}
}
