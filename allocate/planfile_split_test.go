package allocate_test

import (
	"bytes"
	"errors"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
)

// TestPlanFileSplitRoundTrip writes an overlap plan (with a split) and
// reads it back: same settings, shots, cover and split, weights bit for
// bit; version 3; and the file checks against its Hamiltonian. A plan
// without a split still writes version 1.
func TestPlanFileSplitRoundTrip(t *testing.T) {
	h := mustH(t, 0, "ZI", 1.0, "IX", 0.5, "IY", 0.2, "ZZ", 0.3)
	p, err := allocate.Run(h, 37, &allocate.Overlap{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Split) == 0 {
		t.Fatal("the plan has no split; the test needs one")
	}
	var b bytes.Buffer
	if err := allocate.WritePlan(&b, p, 0); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), `"version": 3`) || !strings.Contains(b.String(), `"split": [`) {
		t.Fatalf("plan file with a split:\n%s", b.String())
	}
	f, err := allocate.ReadPlan(&b)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Check(h); err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(p.Split, f.Plan.Split, cmp.Comparer(func(a, b interface{ Key() string }) bool { return a.Key() == b.Key() })); d != "" {
		t.Errorf("split read back differs (-wrote +read):\n%s", d)
	}
	p.Split = nil
	b.Reset()
	if err := allocate.WritePlan(&b, p, 0); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), `"version": 1`) || strings.Contains(b.String(), "split") {
		t.Errorf("plan file without a split is not version 1:\n%s", b.String())
	}
}

// TestReadPlanSplitErrors checks that a bad "split" is refused with an
// error naming its line and entry, and that a split that does not fit the
// Hamiltonian is refused by Check.
func TestReadPlanSplitErrors(t *testing.T) {
	head := func(version int) string {
		return `{"format": "shotplan plan", "version": ` + string(rune('0'+version)) + `, "qubits": 2, "strategy": "overlap", "seed": 0,
"settings": [{"setting": "ZX", "shots": 3},
{"setting": "ZY", "shots": 2}],
"cover": [5, 3, 2], "drawn": null`
	}
	for _, c := range []struct {
		name, file, entry, want string
		line                    int
	}{
		{"version 1 with split", head(1) + `, "split": [{"setting": "ZX", "terms": [0], "weights": [1]}]}`, "version", "needs version 3", 1},
		{"version 3 without split", head(3) + `}`, "version", "without a \"split\" key", 1},
		{"unknown setting", head(3) + `,
"split": [{"setting": "XX", "terms": [0], "weights": [1]}]}`, "split[0]", "not one of the plan's settings", 5},
		{"sum", head(3) + `,
"split": [{"setting": "ZX", "terms": [0], "weights": [0.5]}]}`, "split", "add up to 0.5", 5},
		{"negative", head(3) + `,
"split": [{"setting": "ZX", "terms": [0], "weights": [-1]},
{"setting": "ZY", "terms": [0], "weights": [2]}]}`, "split[0]", "weight -1", 5},
		{"term range", head(3) + `,
"split": [{"setting": "ZX", "terms": [7], "weights": [1]}]}`, "split[0]", "term 7 outside [0, 3)", 5},
		{"lengths", head(3) + `,
"split": [{"setting": "ZX", "terms": [0, 1], "weights": [1]}]}`, "split[0]", "2 terms but 1 weights", 5},
		{"repeat group", head(3) + `,
"split": [{"setting": "ZX", "terms": [0], "weights": [0.5]},
{"setting": "ZX", "terms": [1], "weights": [1]}]}`, "split[1]", "already has group split[0]", 6},
		{"unknown key", head(3) + `,
"split": [{"setting": "ZX", "terms": [0], "weights": [1], "extra": 1}]}`, "split[0]", "unknown field", 5},
		{"no groups", head(3) + `, "split": []}`, "split", "no groups", 1},
	} {
		_, err := allocate.ReadPlan(strings.NewReader(c.file))
		var pe *allocate.PlanFileError
		if !errors.As(err, &pe) || !errors.Is(err, allocate.ErrPlanFile) || pe.Entry != c.entry || pe.Line != c.line || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want line %d entry %s containing %q", c.name, err, c.line, c.entry, c.want)
		}
	}
	// Readable on its own, but ZX does not cover IY (term 2).
	h := mustH(t, 0, "ZI", 1.0, "IX", 0.5, "IY", 0.2)
	f, err := allocate.ReadPlan(strings.NewReader(head(3) + `,
"split": [{"setting": "ZX", "terms": [0, 2], "weights": [0.5, 1]},
{"setting": "ZY", "terms": [0], "weights": [0.5]}]}`))
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Check(h); !errors.Is(err, allocate.ErrPlanMismatch) || !strings.Contains(err.Error(), "does not cover term 2") {
		t.Errorf("Check of a split listing IY under ZX: %v", err)
	}
}

// TestCompactPlanSplit writes an overlap plan in the compact layout
// (version 4) and reads it back with the same split; a plan without a
// split is still version 2; a bad split line is refused naming the line.
func TestCompactPlanSplit(t *testing.T) {
	h := mustH(t, 0, "ZI", 1.0, "IX", 0.5, "IY", 0.2, "ZZ", 0.3)
	p, err := allocate.Run(h, 37, &allocate.Overlap{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := allocate.WriteCompactPlan(&b, p, 0); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(b.String(), `{"format": "shotplan plan", "version": 4,`) {
		t.Fatalf("compact plan with a split:\n%s", b.String())
	}
	f, err := allocate.ReadPlan(&b)
	if err != nil {
		t.Fatal(err)
	}
	if err := f.Check(h); err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(p.Split, f.Plan.Split, cmp.Comparer(func(a, b interface{ Key() string }) bool { return a.Key() == b.Key() })); d != "" {
		t.Errorf("split read back differs (-wrote +read):\n%s", d)
	}
	q := *p
	q.Split = nil
	b.Reset()
	if err := allocate.WriteCompactPlan(&b, &q, 0); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(b.String(), `{"format": "shotplan plan", "version": 2,`) {
		t.Errorf("compact plan without a split:\n%s", b.String())
	}
	head := func(v string) string {
		return `{"format": "shotplan plan", "version": ` + v + `, "qubits": 2, "strategy": "overlap", "seed": 0, "shots": 5, "settings": 2, "terms": 3, "drawn": false}` + "\n"
	}
	tail := `{"cover": [5, 3, 2]}` + "\n"
	for _, c := range []struct {
		name, file, want string
		line             int
	}{
		{"split in version 2", head("2") + `{"setting": "ZX", "shots": 3, "split": [[0, 1]]}` + "\n" + `{"setting": "ZY", "shots": 2}` + "\n" + tail, "needs version 4", 2},
		{"sum", head("4") + `{"setting": "ZX", "shots": 3, "split": [[0, 0.25]]}` + "\n" + `{"setting": "ZY", "shots": 2, "split": [[0, 0.5]]}` + "\n" + tail, "add up to 0.75", 2},
		{"negative", head("4") + `{"setting": "ZX", "shots": 3, "split": [[0, -0.5]]}` + "\n" + `{"setting": "ZY", "shots": 2}` + "\n" + tail, "weight -0.5", 2},
		{"range", head("4") + `{"setting": "ZX", "shots": 3}` + "\n" + `{"setting": "ZY", "shots": 2, "split": [[9, 1]]}` + "\n" + tail, "term 9 outside [0, 3)", 3},
		{"pair", head("4") + `{"setting": "ZX", "shots": 3, "split": [[0]]}` + "\n" + `{"setting": "ZY", "shots": 2}` + "\n" + tail, "want a pair", 2},
		{"no split", head("4") + `{"setting": "ZX", "shots": 3}` + "\n" + `{"setting": "ZY", "shots": 2}` + "\n" + tail, "without a \"split\"", 1},
	} {
		_, err := allocate.ReadPlan(strings.NewReader(c.file))
		var pe *allocate.PlanFileError
		if !errors.As(err, &pe) || pe.Line != c.line || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want line %d containing %q", c.name, err, c.line, c.want)
		}
	}
}
