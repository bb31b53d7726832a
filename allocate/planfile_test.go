package allocate_test

import (
	"bytes"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// planFileHam is a small Hamiltonian for plan-file tests: the transverse-field
// Ising chain on 4 sites.
func planFileHam(t *testing.T) *hamiltonian.Hamiltonian {
	t.Helper()
	h, err := hamiltonian.TransverseFieldIsing(hamiltonian.Line(4), 1, 0.7)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

func TestPlanFileRoundTrip(t *testing.T) {
	h := planFileHam(t)
	for _, name := range []string{"greedy", "importance", "random", "sorted"} {
		t.Run(name, func(t *testing.T) {
			a, err := allocate.ByName(name, 7)
			if err != nil {
				t.Fatal(err)
			}
			p, err := allocate.Run(h, 50, a, nil)
			if err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(t.TempDir(), "plan.json")
			if err := allocate.WritePlanFile(path, p, 7); err != nil {
				t.Fatal(err)
			}
			f, err := allocate.ReadPlanFile(path)
			if err != nil {
				t.Fatal(err)
			}
			if f.Seed != 7 {
				t.Errorf("Seed = %d, want 7", f.Seed)
			}
			got, want := f.Plan, p
			if got.Qubits != want.Qubits || got.Stats.Strategy != want.Stats.Strategy {
				t.Errorf("read qubits %d strategy %q, want %d %q", got.Qubits, got.Stats.Strategy, want.Qubits, want.Stats.Strategy)
			}
			str := func(ss []pauli.Setting) []string {
				var out []string
				for _, s := range ss {
					out = append(out, s.String())
				}
				return out
			}
			if d := cmp.Diff(str(want.Settings), str(got.Settings)); d != "" {
				t.Errorf("settings differ (-want +got):\n%s", d)
			}
			if d := cmp.Diff(want.Shots, got.Shots); d != "" {
				t.Errorf("shots differ (-want +got):\n%s", d)
			}
			if d := cmp.Diff(want.Cover, got.Cover); d != "" {
				t.Errorf("cover differs (-want +got):\n%s", d)
			}
			if d := cmp.Diff(want.Drawn, got.Drawn); d != "" {
				t.Errorf("drawn differs (-want +got):\n%s", d)
			}
			if err := f.Check(h); err != nil {
				t.Errorf("Check on the plan's own Hamiltonian: %v", err)
			}
		})
	}
}

// goodPlan is a valid plan file for planFileHam (TFIM chain of 4: terms
// ZZII, IZZI, IIZZ, XIII, IXII, IIXI, IIIX): ZZZZ covers the three ZZ terms,
// XXXX the four X terms.
const goodPlan = `{
  "format": "shotplan plan",
  "version": 1,
  "qubits": 4,
  "strategy": "fixed",
  "seed": 0,
  "shots": 5,
  "settings": [
    {"setting": "ZZZZ", "shots": 3},
    {"setting": "XXXX", "shots": 2}
  ],
  "cover": [3, 3, 3, 2, 2, 2, 2],
  "drawn": null
}
`

func TestReadPlanErrors(t *testing.T) {
	if _, err := allocate.ReadPlan(strings.NewReader(goodPlan)); err != nil {
		t.Fatalf("ReadPlan(goodPlan) = %v, want no error", err)
	}
	cases := []struct {
		name     string
		old, new string
		want     string // substring of the error, including the line
	}{
		{"bad letter", `"XXXX"`, `"XQXX"`, "line 10: settings[1]: setting \"XQXX\": unknown letter 'Q' at qubit 1"},
		{"identity letter", `"XXXX"`, `"XIXX"`, "line 10: settings[1]"},
		{"wrong width", `"ZZZZ"`, `"ZZZ"`, "line 9: settings[0]: setting \"ZZZ\" has 3 letters, the plan has 4 qubits"},
		{"zero shots", `"shots": 2}`, `"shots": 0}`, "line 10: settings[1]: shot count 0"},
		{"total disagrees", `"shots": 5,`, `"shots": 6,`, "line 7: shots: total 6, but the settings' shots add up to 5"},
		{"negative cover", `[3, 3, 3, 2`, `[3, -1, 3, 2`, "line 12: cover[1]: cover count -1"},
		{"fractional cover", `[3, 3, 3, 2`, `[3, 3.5, 3, 2`, "line 12: cover[1]: number 3.5 is not a valid int"},
		{"unknown key", `"seed": 0,`, `"sead": 0,`, "line 6: unknown key \"sead\""},
		{"wrong format", `"shotplan plan"`, `"something"`, "not a plan file"},
		{"wrong version", `"version": 1`, `"version": 9`, "line 3: version: version 9"},
		{"zero qubits", `"qubits": 4`, `"qubits": 0`, "line 4: qubits: qubit count 0 out of range"},
		{"syntax", `"seed": 0,`, `"seed": 0,,`, "line 6: invalid character ','"},
		{"truncated", "\n}\n", "\n", "unexpected end of file"},
		{"drawn length", `"drawn": null`, `"drawn": [1, 2]`, "drawn: 2 drawn terms for 5 shots"},
		{"drawn range", `"drawn": null`, `"drawn": [1, 2, 3, 4, 7]`, "line 13: drawn[4]: term 7 outside [0, 7)"},
		{"unknown setting field", `{"setting": "ZZZZ", "shots": 3}`, `{"setting": "ZZZZ", "shot": 3}`, "line 9: settings[0]"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			text := strings.Replace(goodPlan, c.old, c.new, 1)
			if text == goodPlan {
				t.Fatalf("replacement %q not found", c.old)
			}
			_, err := allocate.ReadPlan(strings.NewReader(text))
			if err == nil {
				t.Fatalf("ReadPlan = nil error, want one containing %q", c.want)
			}
			if !errors.Is(err, allocate.ErrPlanFile) {
				t.Errorf("ReadPlan error %q does not wrap ErrPlanFile", err)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Errorf("ReadPlan error = %q, want it to contain %q", err, c.want)
			}
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("ReadPlan error %q spans several lines", err)
			}
		})
	}
}

func TestReadPlanFileNamesFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "bad.json")
	if err := os.WriteFile(path, []byte(strings.Replace(goodPlan, "XXXX", "XXYX", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := allocate.ReadPlanFile(path)
	if err != nil {
		t.Fatal(err)
	}
	err = f.Check(planFileHam(t))
	want := path + ": line 12: cover[5]: the plan says term 5 is covered 2 times, its settings cover IIXI 0 times"
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Errorf("Check = %v, want an error containing %q", err, want)
	}
	if !errors.Is(err, allocate.ErrPlanMismatch) {
		t.Errorf("Check error %v does not wrap ErrPlanMismatch", err)
	}
}

func TestPlanFileCheck(t *testing.T) {
	f, err := allocate.ReadPlan(strings.NewReader(goodPlan))
	if err != nil {
		t.Fatal(err)
	}
	wide, err := hamiltonian.TransverseFieldIsing(hamiltonian.Line(5), 1, 0.7)
	if err != nil {
		t.Fatal(err)
	}
	fewer, err := hamiltonian.Ising(hamiltonian.Line(4), 1, nil, nil) // ZZ terms only
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		h    *hamiltonian.Hamiltonian
		want string
	}{
		{"own", planFileHam(t), ""},
		{"more qubits", wide, "line 4: qubits: the plan is for 4 qubits, the Hamiltonian has 5"},
		{"fewer terms", fewer, "line 12: cover: the plan counts covers of 7 terms, the Hamiltonian has 3"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			err := f.Check(c.h)
			switch {
			case c.want == "" && err != nil:
				t.Errorf("Check = %v, want nil", err)
			case c.want != "" && (err == nil || !strings.Contains(err.Error(), c.want)):
				t.Errorf("Check = %v, want an error containing %q", err, c.want)
			}
		})
	}
}

func TestWritePlanFileLeavesNothingOnError(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "plan.json")
	bad := &allocate.Plan{Qubits: 2, Settings: []pauli.Setting{pauli.MustParseSetting("XYZ")}, Shots: []int{1}}
	if err := allocate.WritePlanFile(path, bad, 0); err == nil {
		t.Fatal("WritePlanFile of a plan with a 3-qubit setting in a 2-qubit plan = nil error")
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(entries) != 0 {
		t.Errorf("WritePlanFile left %d files behind after an error", len(entries))
	}
	var b bytes.Buffer
	if err := allocate.WritePlan(&b, bad, 0); err == nil || b.Len() != 0 {
		t.Errorf("WritePlan of a bad plan = %v with %d bytes written, want an error and nothing written", err, b.Len())
	}
}

// A plan file records a plan so that later steps — certifying, exporting,
// estimating — can run elsewhere; Check refuses it for another Hamiltonian.
func ExampleWritePlan() {
	h, _ := hamiltonian.TransverseFieldIsing(hamiltonian.Line(3), 1, 0.5)
	// Sorted insertion: the ZZ group (one-norm 2) and the X group (1.5)
	// share 4 shots as 2.29 and 1.71, rounded by largest remainder to 2 and 2.
	p, _ := allocate.Run(h, 4, &allocate.Sorted{}, nil)

	var b bytes.Buffer
	if err := allocate.WritePlan(&b, p, 0); err != nil {
		panic(err)
	}
	fmt.Print(b.String())

	f, err := allocate.ReadPlan(&b)
	if err != nil {
		panic(err)
	}
	fmt.Println("fits its Hamiltonian:", f.Check(h) == nil)
	// Output:
	// {
	//   "format": "shotplan plan",
	//   "version": 1,
	//   "qubits": 3,
	//   "strategy": "sorted",
	//   "seed": 0,
	//   "shots": 4,
	//   "settings": [
	//     {"setting": "ZZZ", "shots": 2},
	//     {"setting": "XXX", "shots": 2}
	//   ],
	//   "cover": [2, 2, 2, 2, 2],
	//   "drawn": null
	// }
	// fits its Hamiltonian: true
}

// FuzzReadPlan checks that any input either fails with a one-line
// *PlanFileError or reads back identically after writing.
func FuzzReadPlan(f *testing.F) {
	f.Add([]byte(goodPlan))
	f.Add([]byte(strings.Replace(goodPlan, `"drawn": null`, `"drawn": [0, 1, 2, 3, 4]`, 1)))
	f.Add([]byte(`{"format": "shotplan plan", "version": 1, "qubits": 1, "settings": [{"setting": "X", "shots": 1}], "cover": []}`))
	f.Add([]byte(`{`))
	for _, name := range []string{"random", "importance"} {
		b, err := os.ReadFile(filepath.Join("testdata", "plan-v5-"+name+".jsonl"))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
		f.Add(bytes.Replace(b, []byte(`"shots": 40`), []byte(`"shots": 4000000000`), 1))
	}
	f.Add([]byte(`{"format": "shotplan plan", "version": 3, "qubits": 2, "settings": [{"setting": "ZX", "shots": 3}, {"setting": "ZY", "shots": 2}], "cover": [5, 3, 2],
"split": [{"setting": "ZX", "terms": [0], "weights": [0.25]}, {"setting": "ZY", "terms": [0], "weights": [0.75]}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		pf, err := allocate.ReadPlan(bytes.NewReader(data))
		if err != nil {
			var pe *allocate.PlanFileError
			if !errors.As(err, &pe) || strings.Contains(err.Error(), "\n") {
				t.Fatalf("ReadPlan error %q is not a one-line *PlanFileError", err)
			}
			return
		}
		if pf.Draw != nil {
			// A seed plan: its expansion has no cover counts before
			// Check; it round-trips as a seed plan.
			var b bytes.Buffer
			if err := allocate.WriteSeedPlan(&b, pf.Draw); err != nil {
				t.Fatalf("WriteSeedPlan of a seed plan ReadPlan accepted: %v", err)
			}
			again, err := allocate.ReadPlan(&b)
			if err != nil || again.Draw == nil {
				t.Fatalf("ReadPlan of WriteSeedPlan output: %v\n%s", err, b.String())
			}
			if fmt.Sprint(again.Plan.Settings, again.Plan.Shots, again.Plan.Drawn, again.Seed) != fmt.Sprint(pf.Plan.Settings, pf.Plan.Shots, pf.Plan.Drawn, pf.Seed) {
				t.Fatalf("seed plan changed in a write-read round trip")
			}
			return
		}
		var b bytes.Buffer
		if err := allocate.WritePlan(&b, pf.Plan, pf.Seed); err != nil {
			t.Fatalf("WritePlan of a plan ReadPlan accepted: %v", err)
		}
		again, err := allocate.ReadPlan(&b)
		if err != nil {
			t.Fatalf("ReadPlan of WritePlan output: %v\n%s", err, b.String())
		}
		if fmt.Sprint(again.Plan.Settings, again.Plan.Shots, again.Plan.Cover, again.Plan.Drawn, again.Seed, again.Plan.Stats.Strategy, again.Plan.Split) !=
			fmt.Sprint(pf.Plan.Settings, pf.Plan.Shots, pf.Plan.Cover, pf.Plan.Drawn, pf.Seed, pf.Plan.Stats.Strategy, pf.Plan.Split) {
			t.Fatalf("plan changed in a write-read round trip")
		}
	})
}

// BenchmarkPlanFile reads and writes importance-sampling plans (one drawn
// term per shot, few merged settings) of growing size on a random
// 40-qubit Hamiltonian.
func BenchmarkPlanFile(b *testing.B) {
	h, err := hamiltonian.RandomLocal(40, 1000, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	for _, shots := range []int{10000, 1000000} {
		p, err := allocate.Run(h, shots, &allocate.Importance{Seed: 1}, nil)
		if err != nil {
			b.Fatal(err)
		}
		var buf bytes.Buffer
		if err := allocate.WritePlan(&buf, p, 1); err != nil {
			b.Fatal(err)
		}
		data := buf.Bytes()
		b.Run(fmt.Sprintf("op=write/shots=%d", shots), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			var w bytes.Buffer
			for b.Loop() {
				w.Reset()
				if err := allocate.WritePlan(&w, p, 1); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(fmt.Sprintf("op=read/shots=%d", shots), func(b *testing.B) {
			b.ReportAllocs()
			b.SetBytes(int64(len(data)))
			for b.Loop() {
				if _, err := allocate.ReadPlan(bytes.NewReader(data)); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
