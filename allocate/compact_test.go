package allocate_test

import (
	"bytes"
	"errors"
	"fmt"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

func settingTexts(ss []pauli.Setting) []string {
	out := make([]string, len(ss))
	for i, s := range ss {
		out[i] = s.String()
	}
	return out
}

// perSetting counts, for every (setting, drawn term) pair, the shots of a
// plan, independently of the order of the shots: the multiset that a
// compact plan must keep.
func perSetting(p *allocate.Plan) map[string]int {
	m := map[string]int{}
	n := 0
	for k, s := range p.Settings {
		for range p.Shots[k] {
			key := s.String()
			if p.Drawn != nil {
				key += fmt.Sprintf("/%d", p.Drawn[n])
			}
			m[key]++
			n++
		}
	}
	return m
}

// TestCompactRoundTrip writes plans of several strategies in the compact
// layout and reads them back: the file lists each distinct setting once,
// the shots of every (setting, drawn term) pair, the cover counts and the
// seed survive, and the plan still fits its Hamiltonian.
func TestCompactRoundTrip(t *testing.T) {
	h := planFileHam(t)
	for _, name := range []string{"greedy", "importance", "random", "sorted", "derand", "greedy-gc"} {
		t.Run(name, func(t *testing.T) {
			a, err := allocate.ByName(name, 7)
			if err != nil {
				t.Fatal(err)
			}
			p, err := allocate.Run(h, 200, a, nil)
			if err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(t.TempDir(), "plan.jsonl")
			if err := allocate.WriteCompactPlanFile(path, p, 7); err != nil {
				t.Fatal(err)
			}
			f, err := allocate.ReadPlanFile(path)
			if err != nil {
				t.Fatal(err)
			}
			got := f.Plan
			if f.Seed != 7 || got.Qubits != p.Qubits || got.Stats.Strategy != p.Stats.Strategy {
				t.Errorf("header: seed %d qubits %d strategy %q", f.Seed, got.Qubits, got.Stats.Strategy)
			}
			// Each distinct setting once, in order of first use, with its
			// total: what pauli.MergeSettings gives for the original plan.
			ds, dk := p.Distinct()
			if d := cmp.Diff(settingTexts(ds), settingTexts(got.Settings)); d != "" {
				t.Errorf("settings (-distinct +read):\n%s", d)
			}
			if d := cmp.Diff(dk, got.Shots); d != "" {
				t.Errorf("shots (-distinct +read):\n%s", d)
			}
			if d := cmp.Diff(p.Cover, got.Cover); d != "" {
				t.Errorf("cover (-run +read):\n%s", d)
			}
			if d := cmp.Diff(perSetting(p), perSetting(got)); d != "" {
				t.Errorf("shots per (setting, drawn term) (-run +read):\n%s", d)
			}
			if (p.Drawn == nil) != (got.Drawn == nil) {
				t.Errorf("drawn nil: run %v, read %v", p.Drawn == nil, got.Drawn == nil)
			}
			c := p.Compact()
			if d := cmp.Diff(c.Drawn, got.Drawn); d != "" {
				t.Errorf("drawn (-Compact +read):\n%s", d)
			}
			if err := f.Check(h); err != nil {
				t.Errorf("Check: %v", err)
			}
		})
	}
}

// TestReadOldPlanFiles reads the committed plan files of the first layout
// (version 1), which must keep reading, and checks that writing them in the
// compact layout keeps their content.
func TestReadOldPlanFiles(t *testing.T) {
	h := planFileHam(t)
	for _, name := range []string{"random", "importance"} {
		t.Run(name, func(t *testing.T) {
			f, err := allocate.ReadPlanFile(filepath.Join("testdata", "plan-v1-"+name+".json"))
			if err != nil {
				t.Fatal(err)
			}
			if err := f.Check(h); err != nil {
				t.Fatal(err)
			}
			if f.Plan.TotalShots() != 40 || f.Seed != 3 || f.Plan.Stats.Strategy != name {
				t.Errorf("read %d shots, seed %d, strategy %q; the file says 40, 3, %q", f.Plan.TotalShots(), f.Seed, f.Plan.Stats.Strategy, name)
			}
			var b bytes.Buffer
			if err := allocate.WriteCompactPlan(&b, f.Plan, f.Seed); err != nil {
				t.Fatal(err)
			}
			g, err := allocate.ReadPlan(&b)
			if err != nil {
				t.Fatal(err)
			}
			if d := cmp.Diff(perSetting(f.Plan), perSetting(g.Plan)); d != "" {
				t.Errorf("compact copy of the old file (-old +compact):\n%s", d)
			}
			if err := g.Check(h); err != nil {
				t.Errorf("Check of the compact copy: %v", err)
			}
		})
	}
}

// goodCompact is a compact plan for planFileHam, as goodPlan, with drawn
// terms: ZZZZ covers the ZZ terms 0-2, XXXX the X terms 3-6.
const goodCompact = `{"format": "shotplan plan", "version": 2, "qubits": 4, "strategy": "fixed", "seed": 0, "shots": 5, "settings": 2, "terms": 7, "drawn": true}
{"setting": "ZZZZ", "shots": 3, "drawn": [[0, 2], [2, 1]]}
{"setting": "XXXX", "shots": 2, "drawn": [[6, 2]]}
{"cover": [3, 3, 3, 2, 2, 2, 2]}
`

func TestReadCompactErrors(t *testing.T) {
	f, err := allocate.ReadPlan(strings.NewReader(goodCompact))
	if err != nil {
		t.Fatalf("ReadPlan(goodCompact) = %v", err)
	}
	if d := cmp.Diff([]int{0, 0, 2, 6, 6}, f.Plan.Drawn); d != "" {
		t.Errorf("drawn (-want +got):\n%s", d)
	}
	if err := f.Check(planFileHam(t)); err != nil {
		t.Errorf("Check: %v", err)
	}
	cases := []struct{ name, old, new, want string }{
		{"bad letter", `"XXXX"`, `"XQXX"`, "line 3: settings[1]: setting \"XQXX\": unknown letter 'Q' at qubit 1"},
		{"wrong width", `"ZZZZ"`, `"ZZZ"`, "line 2: settings[0]: setting \"ZZZ\" has 3 letters"},
		{"zero shots", `"shots": 2,`, `"shots": 0,`, "line 3: settings[1]: shot count 0"},
		{"repeated setting", `"XXXX"`, `"ZZZZ"`, "line 3: settings[1]: setting \"ZZZZ\" repeated (first on line 2)"},
		{"total", `"shots": 5,`, `"shots": 6,`, "line 1: shots: total 6, but the settings' shots add up to 5"},
		{"too few settings", `"settings": 2,`, `"settings": 3,`, "line 4: a cover line after 2 of the header's 3 settings"},
		{"too many settings", `"settings": 2,`, `"settings": 1,`, "line 3: a setting line after the header's 1 settings"},
		{"terms", `"terms": 7,`, `"terms": 8,`, "line 4: cover: 7 cover counts, the header says 8 terms"},
		{"negative cover", `[3, 3, 3, 2`, `[3, -1, 3, 2`, "line 4: cover[1]: cover count -1 outside [0, 5]"},
		{"fractional cover", `[3, 3, 3, 2`, `[3, 3.5, 3, 2`, "line 4: cover[1]: number 3.5 is not a valid int"},
		{"drawn sum", `[[6, 2]]`, `[[6, 1]]`, "line 3: settings[1]: the drawn counts add up to 1, the setting has 2 shots"},
		{"drawn term", `[[6, 2]]`, `[[7, 2]]`, "line 3: settings[1]: drawn[0]: term 7 outside [0, 7)"},
		{"drawn pair", `[[6, 2]]`, `[[6, 2, 1]]`, "line 3: settings[1]: drawn[0]: want a pair"},
		{"drawn missing", `, "drawn": [[6, 2]]`, ``, "line 3: settings[1]: no \"drawn\" terms"},
		{"unknown key", `"shots": 3,`, `"shot": 3,`, "line 2: settings[0]: unknown key \"shot\""},
		{"repeated key", `"shots": 3,`, `"shots": 3, "shots": 4,`, "line 2: settings[0]: key \"shots\" repeated"},
		{"two objects", "[[6, 2]]}\n", "[[6, 2]]} {}\n", "line 3: settings[1]: text after the closing brace"},
		{"syntax", `"shots": 3,`, `"shots": 3,,`, "line 2: settings[0]: invalid character ','"},
		{"truncated", "2, 2]}\n", "2, 2", "line 4: cover[0]: the line ends inside its JSON object"},
		{"version", `"version": 2`, `"version": 2.5`, "line 1: version: number 2.5 is not a valid int"},
		{"qubits", `"qubits": 4`, `"qubits": 0`, "line 1: qubits: qubit count 0"},
		{"no drawn key", `, "drawn": true}`, `}`, "line 1: the header needs the keys"},
		{"huge count", `"settings": 2,`, `"settings": 99999999999,`, "line 1: settings: 99999999999 settings for 5 shots"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			text := strings.Replace(goodCompact, c.old, c.new, 1)
			if text == goodCompact {
				t.Fatalf("replacement %q not found", c.old)
			}
			_, err := allocate.ReadPlan(strings.NewReader(text))
			if err == nil {
				t.Fatalf("ReadPlan = nil error, want %q", c.want)
			}
			if !errors.Is(err, allocate.ErrPlanFile) || strings.Contains(err.Error(), "\n") {
				t.Errorf("error %q is not a one-line ErrPlanFile", err)
			}
			if !strings.Contains(err.Error(), c.want) {
				t.Errorf("ReadPlan error = %q, want it to contain %q", err, c.want)
			}
		})
	}
}

// endless is a compact plan header followed by a setting line that never
// ends; it counts the bytes read.
type endless struct {
	head []byte
	read int64
}

func (e *endless) Read(b []byte) (int, error) {
	n := copy(b, e.head)
	e.head = e.head[n:]
	for i := n; i < len(b); i++ {
		b[i] = 'X'
	}
	e.read += int64(len(b))
	return len(b), nil
}

// TestReadCompactStreams checks that the compact reader holds one line at a
// time: a line that never ends is refused once it passes MaxPlanLineBytes,
// having read at most that much plus the reader's buffer, not the input.
func TestReadCompactStreams(t *testing.T) {
	head := strings.SplitAfter(goodCompact, "\n")[0] + `{"setting": "`
	e := &endless{head: []byte(head)}
	_, err := allocate.ReadPlan(e)
	if err == nil || !strings.Contains(err.Error(), "line 2: line longer than") || !strings.Contains(err.Error(), "MaxPlanLineBytes") {
		t.Fatalf("ReadPlan(endless line) = %v", err)
	}
	// The bufio.Reader of ReadPlan reads in blocks of at most 64 KiB when
	// peeking at the header; allow one such block and the line cap.
	if limit := int64(allocate.MaxPlanLineBytes + 2<<16); e.read > limit {
		t.Errorf("read %d bytes of an endless line, want at most %d", e.read, limit)
	}
}

// FuzzReadCompactPlan: any input either fails with a one-line
// *PlanFileError or writes back (compact) and reads again unchanged.
func FuzzReadCompactPlan(f *testing.F) {
	f.Add([]byte(goodCompact))
	f.Add([]byte(strings.Replace(goodCompact, `"drawn": true`, `"drawn": false`, 1)))
	f.Add([]byte(`{"format": "shotplan plan", "version": 2, "qubits": 1, "shots": 1, "settings": 1, "terms": 0, "drawn": false}` + "\n" + `{"setting": "X", "shots": 1}`))
	f.Add([]byte(`{"format": "shotplan plan", "version": 2, "qubits": 2, "shots": 3, "settings": 1, "terms": 1, "drawn": false}` + "\n" + `{"setting": "XX|ZZ", "shots": 3}` + "\n" + `{"cover": [3]}`))
	f.Add([]byte(`{"format": "shotplan plan", "version": 4, "qubits": 2, "shots": 5, "settings": 2, "terms": 3, "drawn": false}` + "\n" +
		`{"setting": "ZX", "shots": 3, "split": [[0, 0.25]]}` + "\n" + `{"setting": "ZY", "shots": 2, "split": [[0, 0.75]]}` + "\n" + `{"cover": [5, 3, 2]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		pf, err := allocate.ReadPlan(bytes.NewReader(data))
		if err != nil {
			var pe *allocate.PlanFileError
			if !errors.As(err, &pe) || strings.Contains(err.Error(), "\n") {
				t.Fatalf("ReadPlan error %q is not a one-line *PlanFileError", err)
			}
			return
		}
		var b bytes.Buffer
		if err := allocate.WriteCompactPlan(&b, pf.Plan, pf.Seed); err != nil {
			t.Fatalf("WriteCompactPlan of a plan ReadPlan accepted: %v", err)
		}
		again, err := allocate.ReadPlan(&b)
		if err != nil {
			t.Fatalf("ReadPlan of WriteCompactPlan output: %v\n%s", err, b.String())
		}
		c := pf.Plan.Compact()
		if fmt.Sprint(again.Plan.Settings, again.Plan.Shots, again.Plan.Cover, again.Plan.Drawn, again.Seed, again.Plan.Stats.Strategy) !=
			fmt.Sprint(c.Settings, c.Shots, c.Cover, c.Drawn, pf.Seed, c.Stats.Strategy) {
			t.Fatalf("plan changed in a compact round trip")
		}
	})
}

// BenchmarkCompactPlan10e8 writes and reads a 10^8-shot plan in the compact
// layout: sorted insertion (a batching strategy, so the run itself is
// cheap) on a random 40-qubit Hamiltonian of 2000 terms, and a plan of 10^8
// shots spread over the 3^10 = 59049 local settings of 10 qubits, as a
// per-shot random strategy fills them. It reports the file size.
func BenchmarkCompactPlan10e8(b *testing.B) {
	const shots = 100_000_000
	h, err := hamiltonian.RandomLocal(40, 2000, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	sorted, err := allocate.Run(h, shots, &allocate.Sorted{}, nil)
	if err != nil {
		b.Fatal(err)
	}
	every := everySetting(b, 10, shots)
	for _, c := range []struct {
		name string
		p    *allocate.Plan
	}{{"sorted", sorted}, {"all-local-10q", every}} {
		b.Run(c.name, func(b *testing.B) {
			var buf bytes.Buffer
			for b.Loop() {
				buf.Reset()
				if err := allocate.WriteCompactPlan(&buf, c.p, 1); err != nil {
					b.Fatal(err)
				}
				f, err := allocate.ReadPlan(&buf)
				if err != nil {
					b.Fatal(err)
				}
				if f.Plan.TotalShots() != shots {
					b.Fatalf("read %d shots", f.Plan.TotalShots())
				}
			}
			var w bytes.Buffer
			if err := allocate.WriteCompactPlan(&w, c.p, 1); err != nil {
				b.Fatal(err)
			}
			b.ReportMetric(float64(w.Len()), "file-bytes")
			b.ReportMetric(float64(len(c.p.Settings)), "settings")
		})
	}
}

// everySetting is a plan of shots spread evenly over every local setting
// of n qubits.
func everySetting(b *testing.B, n, shots int) *allocate.Plan {
	total := 1
	for range n {
		total *= 3
	}
	p := &allocate.Plan{Qubits: n, Stats: allocate.Stats{Strategy: "random"}, Cover: []int{}}
	letters := make([]pauli.Letter, n)
	for k := range total {
		x := k
		for q := range letters {
			letters[q] = pauli.Letter(1 + x%3)
			x /= 3
		}
		s, err := pauli.NewSetting(pauli.FromLetters(letters))
		if err != nil {
			b.Fatal(err)
		}
		p.Settings = append(p.Settings, s)
		p.Shots = append(p.Shots, shots/total+btoi(k < shots%total))
	}
	return p
}

func btoi(v bool) int {
	if v {
		return 1
	}
	return 0
}

// TestRunCompact checks the driver's Compact option against Plan.Compact
// of an ordinary run, for every strategy on the golden test's Hamiltonian:
// the same distinct settings in the same order, shots, cover counts and
// drawn terms.
func TestRunCompact(t *testing.T) {
	h := mustH(t, -0.2,
		"ZZIII", 0.7, "IZZII", 0.7, "IIZZI", 0.7, "IIIZZ", 0.7,
		"XIIII", -0.45, "IXIII", -0.45, "IIXII", -0.45, "IIIXI", -0.45, "IIIIX", -0.45,
		"YYIII", 0.12, "IIYYI", 0.12, "XZXII", 0.05, "IZIYZ", -0.03)
	names := allocate.Names()
	for _, name := range names {
		t.Run(name, func(t *testing.T) {
			a, err := allocate.ByName(name, 9)
			if err != nil {
				t.Fatal(err)
			}
			if f, ok := a.(*allocate.Fixed); ok {
				f.Settings = mustSettings(t, "ZZZZZ", "XXXXX", "YYZZZ", "ZZZZZ")
			}
			p, err := allocate.Run(h, 500, a, nil)
			if err != nil {
				t.Fatal(err)
			}
			b, err := allocate.ByName(name, 9)
			if err != nil {
				t.Fatal(err)
			}
			if f, ok := b.(*allocate.Fixed); ok {
				f.Settings = mustSettings(t, "ZZZZZ", "XXXXX", "YYZZZ", "ZZZZZ")
			}
			q, err := allocate.Run(h, 500, b, &allocate.Options{Compact: true})
			if err != nil {
				t.Fatal(err)
			}
			want := p.Compact()
			if d := cmp.Diff(settingTexts(want.Settings), settingTexts(q.Settings)); d != "" {
				t.Errorf("settings (-Compact +Run):\n%s", d)
			}
			if d := cmp.Diff(want.Shots, q.Shots); d != "" {
				t.Errorf("shots (-Compact +Run):\n%s", d)
			}
			if d := cmp.Diff(want.Cover, q.Cover); d != "" {
				t.Errorf("cover (-Compact +Run):\n%s", d)
			}
			if d := cmp.Diff(want.Drawn, q.Drawn); d != "" {
				t.Errorf("drawn (-Compact +Run):\n%s", d)
			}
		})
	}
}
