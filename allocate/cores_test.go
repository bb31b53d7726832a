package allocate_test

import (
	"fmt"
	"runtime"
	"testing"

	gocmp "github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// TestSameOnOneAndTwoCores runs the strategies whose work is split among
// cores — the general-commutation groupings (degree count, first fit, cover
// counts) and the driver's cover count of many local settings (greedy) —
// with GOMAXPROCS 1, 2 and 3 and requires the same plan: settings, shots,
// cover counts and, for the groupings, the groups with their member order.
// The Hamiltonian is large enough for every split to happen (more than
// 2^22 settings × terms for the cover counts, several batches of first
// fit, several blocks of the degree count). Correctness only: no timing.
func TestSameOnOneAndTwoCores(t *testing.T) {
	h, err := hamiltonian.RandomLocal(20, 10000, 4, 21)
	if err != nil {
		t.Fatal(err)
	}
	type result struct {
		Plan    []string
		Cover   []int
		Members [][]int
	}
	for _, name := range []string{"color-gc", "sorted-gc", "greedy"} {
		t.Run(name, func(t *testing.T) {
			var got []result
			for _, procs := range []int{1, 2, 3} {
				a, err := allocate.ByName(name, 1)
				if err != nil {
					t.Fatal(err)
				}
				old := runtime.GOMAXPROCS(procs)
				p, err := allocate.Run(h, 1000, a, nil)
				runtime.GOMAXPROCS(old)
				if err != nil {
					t.Fatal(err)
				}
				var r result
				for k, s := range p.Settings {
					r.Plan = append(r.Plan, fmt.Sprintf("%s %d", s, p.Shots[k]))
				}
				r.Cover = p.Cover
				if g, ok := a.(interface{ Members() [][]int }); ok {
					r.Members = g.Members()
				}
				got = append(got, r)
			}
			if len(got[0].Plan) < 16 {
				t.Fatalf("%d distinct settings: too few for the cover count to split", len(got[0].Plan))
			}
			for k, procs := range []int{2, 3} {
				if d := gocmp.Diff(got[0], got[k+1]); d != "" {
					t.Errorf("plan with GOMAXPROCS %d differs from GOMAXPROCS 1 (-1 +%d):\n%s", procs, procs, d)
				}
			}
		})
	}
}

// TestGreedyGCSameOnOneAndTwoCores runs greedy-gc, whose coverage scan of a
// new family's setting goes over parts of 2^14 terms on all cores, on a
// Hamiltonian of three parts with GOMAXPROCS 1 and 2, and requires the same
// settings, shots and cover counts; the cover counts must also equal a
// count of the plan made row by row with [pauli.Table.CoversRow], which
// does not split the terms. Correctness only: no timing.
func TestGreedyGCSameOnOneAndTwoCores(t *testing.T) {
	h, err := hamiltonian.RandomLocal(20, 40000, 4, 22)
	if err != nil {
		t.Fatal(err)
	}
	var plans []*allocate.Plan
	for _, procs := range []int{1, 2} {
		old := runtime.GOMAXPROCS(procs)
		p, err := allocate.Run(h, 60, &allocate.GreedyGC{}, nil)
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		plans = append(plans, p)
	}
	var got [2][]string
	for j, p := range plans {
		for k, s := range p.Settings {
			got[j] = append(got[j], fmt.Sprintf("%s %d", s, p.Shots[k]))
		}
		got[j] = append(got[j], fmt.Sprint(p.Cover))
	}
	if len(plans[0].Settings) < 8 {
		t.Fatalf("%d distinct settings: too few", len(plans[0].Settings))
	}
	if d := gocmp.Diff(got[0], got[1]); d != "" {
		t.Fatalf("plan with GOMAXPROCS 2 differs from GOMAXPROCS 1 (-1 +2):\n%s", d)
	}
	p := plans[0]
	want := make([]int, h.Len())
	for k, s := range p.Settings {
		for i := range want {
			if h.Table().CoversRow(i, s) {
				want[i] += p.Shots[k]
			}
		}
	}
	if d := gocmp.Diff(want, p.Cover); d != "" {
		t.Errorf("cover counts differ from a row-by-row count (-want +got):\n%s", d)
	}
}
