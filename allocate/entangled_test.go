package allocate_test

import (
	"bytes"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
)

// TestPlanFileEntangled writes and reads back plans with entangled
// settings from the general-commutation strategies: the same settings
// (generators and circuits), shots and cover counts, and the plan checks
// against its Hamiltonian.
func TestPlanFileEntangled(t *testing.T) {
	h := molecule(t, hamiltoniantest.LiH, fermion.JordanWigner)
	for _, name := range []string{"sorted-gc", "color-gc", "greedy-gc"} {
		a, err := allocate.ByName(name, 0)
		if err != nil {
			t.Fatal(err)
		}
		p, err := allocate.Run(h, 300, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := allocate.WritePlan(&buf, p, 0); err != nil {
			t.Fatal(err)
		}
		f, err := allocate.ReadPlan(&buf)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		got := f.Plan
		if len(got.Settings) != len(p.Settings) {
			t.Fatalf("%s: read %d settings, wrote %d", name, len(got.Settings), len(p.Settings))
		}
		for k, s := range p.Settings {
			if !got.Settings[k].Equal(s) || !got.Settings[k].Circuit().Equal(s.Circuit()) || got.Shots[k] != p.Shots[k] {
				t.Errorf("%s: settings[%d] read %s ×%d, wrote %s ×%d", name, k, got.Settings[k], got.Shots[k], s, p.Shots[k])
			}
		}
		if err := f.Check(h); err != nil {
			t.Errorf("%s: Check: %v", name, err)
		}
	}
}

// TestReadPlanEntangledErrors: a bad entangled setting in a plan file is
// an error naming the line and the entry.
func TestReadPlanEntangledErrors(t *testing.T) {
	for _, c := range []struct{ name, setting, reason string }{
		{"not commuting", "XX|ZI", "do not commute"},
		{"other width", "XXI|ZZI", "qubits"},
		{"bad letter", "XX|ZQ", "unknown letter"},
	} {
		t.Run(c.name, func(t *testing.T) {
			plan := `{
  "format": "shotplan plan",
  "version": 1,
  "qubits": 2,
  "strategy": "fixed",
  "seed": 0,
  "shots": 2,
  "settings": [
    {"setting": "` + c.setting + `", "shots": 2}
  ],
  "cover": [2],
  "drawn": null
}
`
			_, err := allocate.ReadPlan(strings.NewReader(plan))
			if err == nil || !strings.Contains(err.Error(), c.reason) || !strings.Contains(err.Error(), "settings[0]") {
				t.Errorf("ReadPlan with setting %q: error %v, want one naming settings[0] and %q", c.setting, err, c.reason)
			}
		})
	}
}

// TestRunManyEntangledSettings: the driver counts covers for a strategy
// that does not keep them (Fixed) with more than a handful of distinct
// entangled settings, and the counts equal CoverCounts (Table.Covered).
func TestRunManyEntangledSettings(t *testing.T) {
	h := molecule(t, hamiltoniantest.LiH, fermion.JordanWigner)
	g := &allocate.SortedGC{}
	if err := g.Init(h, 1000); err != nil {
		t.Fatal(err)
	}
	settings, _ := g.Groups()
	if len(settings) < 20 {
		t.Fatalf("%d groups, want at least 20 for this test", len(settings))
	}
	p, err := allocate.Run(h, 3*len(settings), &allocate.Fixed{Settings: settings}, nil)
	if err != nil {
		t.Fatal(err)
	}
	want, err := allocate.CoverCounts(h, p.Settings, p.Shots)
	if err != nil {
		t.Fatal(err)
	}
	for i := range want {
		if p.Cover[i] != want[i] {
			t.Fatalf("Cover[%d] = %d, want CoverCounts %d", i, p.Cover[i], want[i])
		}
	}
}
