package allocate_test

import (
	"errors"
	"math"
	"sort"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/pauli"
)

func mustSettings(t *testing.T, texts ...string) []pauli.Setting {
	t.Helper()
	var out []pauli.Setting
	for _, x := range texts {
		s, err := pauli.ParseSetting(x)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, s)
	}
	return out
}

// TestSplitJobs checks a split worked out by hand: ZZ 250 + XX 30 + ZZ 50
// merge to ZZ 300, XX 30; at most 100 shots a circuit gives the circuits
// ZZ 100, ZZ 100, ZZ 100, XX 30; the first circuits of every setting come
// first, so the jobs are [ZZ 100, XX 30], [ZZ 100], [ZZ 100].
func TestSplitJobs(t *testing.T) {
	ss := mustSettings(t, "ZZ", "XX", "ZZ")
	jobs, err := allocate.SplitJobs(ss, []int{250, 30, 50}, allocate.DeviceLimits{MaxShotsPerCircuit: 100, MaxCircuitsPerJob: 2})
	if err != nil {
		t.Fatal(err)
	}
	var got [][]string
	for _, j := range jobs {
		var c []string
		for k, s := range j.Settings {
			c = append(c, s.String()+"/"+itoa(j.Shots[k]))
		}
		got = append(got, c)
	}
	want := [][]string{{"ZZ/100", "XX/30"}, {"ZZ/100"}, {"ZZ/100"}}
	if d := cmp.Diff(want, got); d != "" {
		t.Errorf("jobs (-want +got):\n%s", d)
	}
	// At most 1 circuit a job: one job per circuit, first circuits first.
	jobs, err = allocate.SplitJobs(ss, []int{250, 30, 50}, allocate.DeviceLimits{MaxShotsPerCircuit: 100, MaxCircuitsPerJob: 1})
	if err != nil || len(jobs) != 4 || jobs[1].Settings[0].String() != "XX" {
		t.Errorf("SplitJobs with 1 circuit a job = %v, %v; want ZZ, XX, ZZ, ZZ", jobs, err)
	}
	// No limits: one job of the distinct settings.
	jobs, err = allocate.SplitJobs(ss, []int{250, 30, 50}, allocate.DeviceLimits{})
	if err != nil || len(jobs) != 1 || len(jobs[0].Settings) != 2 {
		t.Errorf("SplitJobs without limits = %v, %v", jobs, err)
	}
	if _, err := allocate.SplitJobs(ss, []int{1, 2, 3}, allocate.DeviceLimits{MaxShotsPerCircuit: -1}); err == nil {
		t.Error("negative limit accepted")
	}
	if _, err := allocate.SplitJobs(ss, []int{1, -2, 3}, allocate.DeviceLimits{}); err == nil {
		t.Error("negative shot count accepted")
	}
}

func itoa(n int) string {
	if n == 0 {
		return "0"
	}
	s := ""
	for ; n > 0; n /= 10 {
		s = string(rune('0'+n%10)) + s
	}
	return s
}

// TestFitCostBruteForce compares FitCost with a brute force written apart
// from it: every subset of the plan's settings, shots split by largest
// remainder in proportion to the plan's, as many as the budget allows,
// scored by guarantee.Certify's Total (MATH.md §3.1, implemented in package
// guarantee, not by FitCost). FitCost must find the smallest Total, to
// rounding (1e-12 relative: both sum the same few terms in another order).
func TestFitCostBruteForce(t *testing.T) {
	// Transverse-field Ising chain of 3 with a small YY coupling (invented).
	h := mustH(t, 0, "ZZI", 1.0, "IZZ", 1.0, "XII", 0.6, "IXI", 0.6, "IIX", 0.6, "YYI", 0.15, "ZXZ", 0.05)
	ss := mustSettings(t, "ZZZ", "XXX", "YYX", "ZXZ", "YYZ")
	shots := []int{40, 30, 6, 3, 1}
	plan := &allocate.Plan{Qubits: 3, Settings: ss, Shots: shots, Stats: allocate.Stats{Strategy: "fixed"}}
	const delta = 0.05
	for _, cost := range []allocate.CostModel{
		{ShotCost: 1, CircuitCost: 0, Budget: 200},
		{ShotCost: 1, CircuitCost: 20, Budget: 200},
		{ShotCost: 1, CircuitCost: 60, Budget: 200},
		{ShotCost: 0.5, CircuitCost: 7, Budget: 40},
	} {
		best := math.Inf(1)
		for mask := 1; mask < 1<<len(ss); mask++ {
			var sub []pauli.Setting
			var w []int
			for j := range ss {
				if mask&(1<<j) != 0 {
					sub = append(sub, ss[j])
					w = append(w, shots[j])
				}
			}
			n := math.Floor((cost.Budget - float64(len(sub))*cost.CircuitCost) / cost.ShotCost)
			if n < 1 {
				continue
			}
			m := splitByRemainder(int(n), w)
			c, err := guarantee.Certify(h, sub, m, delta, nil)
			if err != nil {
				t.Fatal(err)
			}
			best = min(best, c.Bound)
		}
		q, bound, err := allocate.FitCost(h, plan, cost, delta)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(bound-best) > 1e-12*best {
			t.Errorf("%+v: FitCost bound %.15g, brute-force optimum %.15g", cost, bound, best)
		}
		c, err := guarantee.CertifyPlan(h, q, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(c.Bound-bound) > 1e-12*bound {
			t.Errorf("%+v: returned bound %.15g, Certify of the returned plan %.15g", cost, bound, c.Bound)
		}
		if got := cost.Cost(q); got > cost.Budget || got+cost.ShotCost <= cost.Budget {
			t.Errorf("%+v: plan costs %g, want at most the budget and within one shot of it", cost, got)
		}
	}
	if _, _, err := allocate.FitCost(h, plan, allocate.CostModel{ShotCost: 1, CircuitCost: 10, Budget: 10}, delta); !errors.Is(err, allocate.ErrCost) {
		t.Errorf("a budget that pays only for a circuit: %v, want ErrCost", err)
	}
	if _, _, err := allocate.FitCost(h, plan, allocate.CostModel{ShotCost: 0, Budget: 10}, delta); !errors.Is(err, allocate.ErrCost) {
		t.Errorf("zero shot cost: %v, want ErrCost", err)
	}
	if _, _, err := allocate.FitCost(h, plan, allocate.CostModel{ShotCost: math.NaN(), Budget: 10}, delta); !errors.Is(err, allocate.ErrCost) {
		t.Errorf("NaN shot cost: %v, want ErrCost", err)
	}
}

// splitByRemainder splits n in proportion to w by the largest-remainder
// method (common practice: Hamilton's apportionment), ties to the earlier.
func splitByRemainder(n int, w []int) []int {
	total := 0
	for _, x := range w {
		total += x
	}
	m := make([]int, len(w))
	type rem struct {
		k int
		r float64
	}
	var rs []rem
	given := 0
	for k, x := range w {
		q := float64(n) * float64(x) / float64(total)
		m[k] = int(q)
		given += m[k]
		rs = append(rs, rem{k, q - float64(m[k])})
	}
	sort.SliceStable(rs, func(a, b int) bool { return rs[a].r > rs[b].r })
	for _, r := range rs[:n-given] {
		m[r.k]++
	}
	return m
}

// TestFitCostMany checks the heuristic path (more than FitExhaustive
// settings): the plan fits the budget, its bound is its certificate (package
// guarantee), and that bound is no worse than keeping every setting with
// the shots the budget leaves, one of the subsets searched.
func TestFitCostMany(t *testing.T) {
	h := planFileHam(t)
	p, err := allocate.Run(h, 300, &allocate.Random{Seed: 3}, nil)
	if err != nil {
		t.Fatal(err)
	}
	ds, dk := p.Distinct()
	if len(ds) <= allocate.FitExhaustive {
		t.Fatalf("only %d distinct settings; the test needs more than %d", len(ds), allocate.FitExhaustive)
	}
	const delta = 0.05
	cost := allocate.CostModel{ShotCost: 1, CircuitCost: 10, Budget: 1000}
	q, bound, err := allocate.FitCost(h, p, cost, delta)
	if err != nil {
		t.Fatal(err)
	}
	c, err := guarantee.CertifyPlan(h, q, delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(c.Bound-bound) > 1e-12*bound {
		t.Errorf("bound %.15g, certificate of the returned plan %.15g", bound, c.Bound)
	}
	if got := cost.Cost(q); got > cost.Budget {
		t.Errorf("plan costs %g, over the budget %g", got, cost.Budget)
	}
	n := int(cost.Budget) - 10*len(ds)
	all, err := guarantee.Certify(h, ds, splitByRemainder(n, dk), delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	if bound > all.Bound*(1+1e-12) {
		t.Errorf("FitCost bound %g, worse than keeping all %d settings (%g)", bound, len(ds), all.Bound)
	}
}
