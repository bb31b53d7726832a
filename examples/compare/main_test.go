package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"image/color"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/plot"

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
		{"flag given twice", []string{"-reps", "2", "-reps", "3"}, "more than once"},
		{"bool flag given twice", []string{"-json", "-json"}, "more than once"},
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

// Without -plot nothing is written; -json and -csv give the table (and the
// sweep) in machine-readable form, the same numbers in both.
func TestCompareJSONAndCSV(t *testing.T) {
	dir := t.TempDir()
	t.Chdir(dir)
	csvPath := filepath.Join(dir, "table.csv")
	var out, errOut bytes.Buffer
	args := []string{"-shots", "100", "-reps", "2", "-sweep", "50,200", "-strategies", "greedy,sorted,random", "-json", "-csv", csvPath}
	if code := run(args, &out, &errOut); code != 0 {
		t.Fatalf("exit %d, stderr %q", code, errOut.String())
	}
	var res struct {
		Exact *float64 `json:"exact_ground_energy"`
		Rows  []struct {
			Strategy  string   `json:"strategy"`
			Certified float64  `json:"certified_bound"`
			RMSE      *float64 `json:"simulated_rmse"`
			Sweep     []struct {
				Shots     int     `json:"shots"`
				Certified float64 `json:"certified_bound"`
			} `json:"sweep"`
		} `json:"strategies"`
	}
	if err := json.Unmarshal(out.Bytes(), &res); err != nil {
		t.Fatalf("%v in %q", err, out.String())
	}
	if res.Exact == nil || len(res.Rows) != 3 || res.Rows[0].Strategy != "greedy" || res.Rows[0].RMSE == nil || len(res.Rows[0].Sweep) != 2 || res.Rows[0].Sweep[1].Shots != 200 {
		t.Fatalf("JSON %s", out.String())
	}
	f, err := os.Open(csvPath)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 4 || recs[0][0] != "strategy" || recs[0][len(recs[0])-1] != "certified_bound_at_200" {
		t.Fatalf("CSV %v", recs)
	}
	for k, r := range res.Rows {
		if recs[k+1][0] != r.Strategy || recs[k+1][2] != strconv.FormatFloat(r.Certified, 'g', -1, 64) {
			t.Errorf("CSV row %v, JSON %+v", recs[k+1], r)
		}
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("files written: %v; want only the CSV asked for", entries)
	}
}

// Every strategy gets its own colour (the built-in list has ten), and the
// SVG carries them all.
func TestComparePlotColours(t *testing.T) {
	n := len(allocate.Names())
	seen := map[color.Color]bool{}
	for _, c := range palette(n) {
		seen[c] = true
	}
	if len(seen) != n {
		t.Fatalf("%d distinct colours for %d strategies", len(seen), n)
	}
	path := filepath.Join(t.TempDir(), "p.svg")
	var out, errOut bytes.Buffer
	if code := run([]string{"-shots", "50", "-reps", "1", "-sweep", "20,60", "-plot", path}, &out, &errOut); code != 0 {
		t.Fatalf("exit %d, %q", code, errOut.String())
	}
	svg, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range palette(n) {
		r, g, b, _ := c.RGBA()
		want := fmt.Sprintf("stroke:#%02X%02X%02X", r>>8, g>>8, b>>8)
		if !strings.Contains(string(svg), want) {
			t.Errorf("the SVG lacks the colour %s", want)
		}
	}
}

// Log-axis ticks: a label at every decade and at 2 and 5 times it; a
// range of a decade or less has every tick labelled (at least four labels).
func TestLogTicks(t *testing.T) {
	labels := func(ts []plot.Tick) []string {
		var out []string
		for _, t := range ts {
			if t.Label != "" {
				out = append(out, t.Label)
			}
		}
		return out
	}
	got := labels(logTicks(0.001, 1))
	want := []string{"0.001", "0.002", "0.005", "0.01", "0.02", "0.05", "0.1", "0.2", "0.5", "1"}
	if !slices.Equal(got, want) {
		t.Errorf("ticks on [0.001, 1]: %v, want %v", got, want)
	}
	if got := labels(logTicks(0.3, 0.9)); len(got) < 4 || got[0] != "0.3" {
		t.Errorf("ticks on [0.3, 0.9]: %v, want every tick labelled", got)
	}
}
