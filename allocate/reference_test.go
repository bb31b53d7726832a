package allocate_test

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/allocate/allocatetest"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/pauli"
)

// The fast strategies are compared against plain letter-by-letter versions
// written straight from MATH §5, which serve as their references.

// referenceCases returns the suite's small Hamiltonians and random ones,
// including registers wider than one word and wider than the pair index.
func referenceCases(t testing.TB) []allocatetest.Case {
	cases := allocatetest.Cases()
	for _, c := range []struct{ n, m, k int }{{8, 60, 3}, {70, 150, 3}, {coverindex.PairMaxQubits + 5, 80, 2}} {
		h, err := hamiltonian.RandomLocal(c.n, c.m, c.k, uint64(c.n))
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, allocatetest.Case{Name: fmt.Sprintf("random-%dq-%dterms", c.n, c.m), H: h})
	}
	// Qubit 1 appears only in X_0 Z_1, which the larger Z_0 blocks in the
	// first round: the walk must stop early and leave qubit 1 to the fill.
	blocked, err := hamiltonian.New(4, 0, []hamiltonian.Term{
		{Pauli: pauli.MustParse("ZIII"), Coeff: 1}, {Pauli: pauli.MustParse("XZII"), Coeff: 0.5},
		{Pauli: pauli.MustParse("IIXY"), Coeff: 0.25}, {Pauli: pauli.MustParse("IIZZ"), Coeff: 0.2},
	})
	if err != nil {
		t.Fatal(err)
	}
	return append(cases, allocatetest.Case{Name: "blocked-qubit", H: blocked})
}

// rankOf returns the term indices by |h_i| descending, ties by index.
func rankOf(h *hamiltonian.Hamiltonian) []int {
	idx := make([]int, h.Len())
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(math.Abs(h.Coeff(b)), math.Abs(h.Coeff(a))) })
	return idx
}

// greedyReference is MATH §5.1 letter by letter, re-sorting every round.
func greedyReference(h *hamiltonian.Hamiltonian, budget int) []string {
	n := h.Qubits()
	cnt := make([]int, h.Len())
	rank := rankOf(h)
	pos := make([]int, h.Len())
	for r, i := range rank {
		pos[i] = r
	}
	var out []string
	for range budget {
		order := slices.Clone(rank)
		weight := func(i int) float64 {
			c := float64(cnt[i])
			return math.Abs(h.Coeff(i)) * (1/math.Sqrt(c) - 1/math.Sqrt(c+1))
		}
		slices.SortStableFunc(order, func(a, b int) int {
			if (cnt[a] == 0) != (cnt[b] == 0) {
				if cnt[a] == 0 {
					return -1
				}
				return 1
			}
			if cnt[a] > 0 {
				if c := cmp.Compare(weight(b), weight(a)); c != 0 {
					return c
				}
			}
			return cmp.Compare(pos[a], pos[b])
		})
		letters := make([]pauli.Letter, n)
		for _, i := range order {
			p := h.Pauli(i)
			ok, grow := true, false
			for q, l := range p.Letters() {
				if letters[q] != pauli.I && letters[q] != l {
					ok = false
				}
				if letters[q] == pauli.I {
					grow = true
				}
			}
			if ok && grow {
				for q, l := range p.Letters() {
					letters[q] = l
				}
			}
		}
		for q := range letters {
			if letters[q] == pauli.I {
				letters[q] = pauli.Z
			}
		}
		s, _ := pauli.NewSetting(pauli.FromLetters(letters))
		for i := range cnt {
			if s.Covers(h.Pauli(i)) {
				cnt[i]++
			}
		}
		out = append(out, s.String())
	}
	return out
}

func planStrings(p *allocate.Plan) []string {
	var out []string
	for k, s := range p.Settings {
		for range p.Shots[k] {
			out = append(out, s.String())
		}
	}
	return out
}

func TestGreedyMatchesReference(t *testing.T) {
	for _, c := range referenceCases(t) {
		t.Run(c.Name, func(t *testing.T) {
			const budget = 40
			p, err := allocate.Run(c.H, budget, &allocate.Greedy{}, nil)
			if err != nil {
				t.Fatal(err)
			}
			got, want := planStrings(p), greedyReference(c.H, budget)
			for k := range want {
				if got[k] != want[k] {
					t.Fatalf("setting %d = %s, want %s (reference re-sorting every round)", k, got[k], want[k])
				}
			}
		})
	}
}

func TestGreedyMatchesReferenceOnMolecules(t *testing.T) {
	// Molecular Hamiltonians have many equal |h_i|, which exercises the
	// tie-breaking of the heap against the reference's stable sort.
	for _, c := range checkCases(t) {
		t.Run(c.name, func(t *testing.T) {
			const budget = 150
			p, err := allocate.Run(c.h, budget, &allocate.Greedy{}, nil)
			if err != nil {
				t.Fatal(err)
			}
			got, want := planStrings(p), greedyReference(c.h, budget)
			for k := range want {
				if got[k] != want[k] {
					t.Fatalf("setting %d = %s, want %s (reference re-sorting every round)", k, got[k], want[k])
				}
			}
		})
	}
}

// derandReference evaluates the conditional expectation of MATH §5.2 in full
// for every candidate letter.
func derandReference(h *hamiltonian.Hamiltonian, budget int, eps float64) []string {
	n, m := h.Qubits(), h.Len()
	nu := eps * eps / 2
	a := 1 - math.Exp(-nu)
	hits := make([]int, m)
	var out []string
	for t := range budget {
		letters := make([]pauli.Letter, n)
		cost := func() float64 {
			s := 0.0
			for i := range m {
				p := h.Pauli(i)
				free, dead := 0, false
				for q, l := range p.Letters() {
					switch {
					case q >= len(letters) || letters[q] == pauli.I:
						free++
					case letters[q] != l:
						dead = true
					}
				}
				cur := 1.0
				if !dead {
					cur = 1 - a*math.Pow(3, -float64(free))
				}
				fut := math.Pow(1-a*math.Pow(3, -float64(p.Weight())), float64(budget-t-1))
				s += math.Abs(h.Coeff(i)) * math.Exp(-nu*float64(hits[i])) * cur * fut
			}
			return s
		}
		for q := range n {
			best, bestCost := pauli.I, math.Inf(1)
			for _, l := range []pauli.Letter{pauli.X, pauli.Y, pauli.Z} {
				letters[q] = l
				if c := cost(); c < bestCost {
					best, bestCost = l, c
				}
			}
			letters[q] = best
		}
		s, _ := pauli.NewSetting(pauli.FromLetters(letters))
		for i := range m {
			if s.Covers(h.Pauli(i)) {
				hits[i]++
			}
		}
		out = append(out, s.String())
	}
	return out
}

func TestDerandomizedMatchesReference(t *testing.T) {
	for _, c := range referenceCases(t) {
		if c.H.Qubits() > 70 {
			continue // the reference costs O(n·M·n) per setting
		}
		t.Run(c.Name, func(t *testing.T) {
			const budget = 12
			p, err := allocate.Run(c.H, budget, &allocate.Derandomized{Epsilon: 0.7}, nil)
			if err != nil {
				t.Fatal(err)
			}
			got, want := planStrings(p), derandReference(c.H, budget, 0.7)
			for k := range want {
				if got[k] != want[k] {
					t.Fatalf("setting %d = %s, want %s (reference evaluating the full conditional cost)", k, got[k], want[k])
				}
			}
		})
	}
}

// sortedReference groups by checking qubit-wise commutation with every
// member (MATH §5.5).
func sortedReference(h *hamiltonian.Hamiltonian) (groups [][]int) {
	for _, i := range rankOf(h) {
		p := h.Pauli(i)
		placed := false
		for g := range groups {
			ok := true
			for _, j := range groups[g] {
				if !qubitwiseCommute(p, h.Pauli(j)) {
					ok = false
					break
				}
			}
			if ok {
				groups[g] = append(groups[g], i)
				placed = true
				break
			}
		}
		if !placed {
			groups = append(groups, []int{i})
		}
	}
	return groups
}

// qubitwiseCommute is the letter-by-letter definition of MATH §1: on every
// qubit the letters are equal or one is I.
func qubitwiseCommute(a, b pauli.String) bool {
	for q := range a.Qubits() {
		la, lb := a.At(q), b.At(q)
		if la != pauli.I && lb != pauli.I && la != lb {
			return false
		}
	}
	return true
}

func TestSortedMatchesReference(t *testing.T) {
	for _, c := range referenceCases(t) {
		t.Run(c.Name, func(t *testing.T) {
			groups := sortedReference(c.H)
			budget := 10 * len(groups)
			s := &allocate.Sorted{}
			if err := s.Init(c.H, budget); err != nil {
				t.Fatal(err)
			}
			settings, shots := s.Groups()
			if len(settings) != len(groups) {
				t.Fatalf("%d groups get shots, reference forms %d groups", len(settings), len(groups))
			}
			total := 0.0
			for _, g := range groups {
				for _, i := range g {
					total += math.Abs(c.H.Coeff(i))
				}
			}
			sum := 0
			for g, members := range groups {
				w := 0.0
				for _, i := range members {
					w += math.Abs(c.H.Coeff(i))
					if !settings[g].Covers(c.H.Pauli(i)) {
						t.Errorf("group %d setting %s does not cover its member %s", g, settings[g], c.H.Pauli(i))
					}
				}
				// Largest remainder: within one shot of the exact quota.
				if q := float64(budget) * w / total; math.Abs(float64(shots[g])-q) >= 1 {
					t.Errorf("group %d: %d shots, quota %.3f", g, shots[g], q)
				}
				sum += shots[g]
			}
			if sum != budget {
				t.Errorf("shots sum to %d, want %d", sum, budget)
			}
		})
	}
}

func TestLargestRemainder(t *testing.T) {
	// Worked by hand: quotas 7·(0.5, 0.3, 0.15, 0.05) = 3.5, 2.1, 1.05, 0.35;
	// floors 3, 2, 1, 0 leave one shot, which goes to the largest fraction
	// (0.5, group 0).
	for _, tc := range []struct {
		name   string
		total  int
		weight []float64
		want   []int
	}{
		{"hand-worked", 7, []float64{0.5, 0.3, 0.15, 0.05}, []int{4, 2, 1, 0}},
		{"tie to the earlier group", 3, []float64{1, 1}, []int{2, 1}},
		{"exact", 10, []float64{2, 3}, []int{4, 6}},
		{"fewer shots than groups", 2, []float64{1, 1, 1, 1}, []int{1, 1, 0, 0}},
		// Weights near the float64 limit: their sum and budget·weight
		// overflow unless the weights are scaled first; the quotas are the
		// same as for {1, 1}.
		{"huge weights", 4, []float64{1e308, 1e308}, []int{2, 2}},
		{"huge single weight", 100, []float64{1e307}, []int{100}},
	} {
		if got := allocate.LargestRemainder(tc.total, tc.weight); !slices.Equal(got, tc.want) {
			t.Errorf("%s: largestRemainder(%d, %v) = %v, want %v", tc.name, tc.total, tc.weight, got, tc.want)
		}
	}
}

func TestSortedSmallBudgetDropsGroups(t *testing.T) {
	// Three mutually incompatible terms, weights 0.6, 0.3, 0.1, budget 2:
	// quotas 1.2, 0.6, 0.2 → floors 1, 0, 0, the spare shot to group 1.
	h := mustH(t, 0, "XI", 0.6, "ZI", 0.3, "YI", 0.1)
	p, err := allocate.Run(h, 2, &allocate.Sorted{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	got := fmt.Sprint(p.Settings, p.Shots)
	if want := "[XZ ZZ] [1 1]"; got != want {
		t.Errorf("plan = %s, want %s", got, want)
	}
}

func TestSortedHugeCoefficients(t *testing.T) {
	// Coefficients near the float64 limit: the group weights (their sum
	// for the one-norm rule, their squares for the two-norm rule) overflow
	// unless they are scaled first. The shares depend only on the ratios
	// of the coefficients, so they are those of the same Hamiltonian
	// divided by 1e300: groups {XI, XX} and {ZI} with one-norm weights
	// 2 : 1 and two-norm weights √2 : 1, budget 30 → 20, 10 and
	// 30·√2/(1+√2) = 17.57 → 18, 12 (largest remainder, hand-worked).
	h := mustH(t, 0, "XI", 1e308, "XX", 1e308, "ZI", 1e308)
	for _, tc := range []struct {
		name  string
		share allocate.Share
		want  string
		shots []int // shares of the groups {XI, XX} and {ZI}
	}{
		{"one-norm", allocate.ShareOneNorm, "[XX ZZ] [20 10]", []int{20, 10}},
		{"two-norm", allocate.ShareTwoNorm, "[XX ZZ] [18 12]", []int{18, 12}},
	} {
		p, err := allocate.Run(h, 30, &allocate.Sorted{Share: tc.share}, nil)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if got := fmt.Sprint(p.Settings, p.Shots); got != tc.want {
			t.Errorf("%s: plan = %s, want %s", tc.name, got, tc.want)
		}
		// The generally commuting groups are the same two here (XI and XX
		// commute, ZI anticommutes with both), with the same shares;
		// ColorGC takes ZI (two anticommuting partners) first.
		for _, a := range []allocate.Allocator{&allocate.SortedGC{Share: tc.share}, &allocate.ColorGC{Share: tc.share}} {
			p, err := allocate.Run(h, 30, a, nil)
			if err != nil {
				t.Fatalf("%s %s: %v", allocate.Name(a), tc.name, err)
			}
			want := tc.shots
			if _, ok := a.(*allocate.ColorGC); ok {
				want = []int{tc.shots[1], tc.shots[0]}
			}
			if !slices.Equal(p.Shots, want) {
				t.Errorf("%s %s: shots = %v, want %v", allocate.Name(a), tc.name, p.Shots, want)
			}
		}
	}
}

// TestNarrowedGreedyMatchesReference forces Greedy to finish its walks from
// the terms they can still accept after reading a few entries (normally it
// does so only after thousands), and compares the plans setting by setting
// with the reference that re-sorts every round (MATH §5.1 as written), on
// the reference cases (including registers of several words) and on
// molecules.
func TestNarrowedGreedyMatchesReference(t *testing.T) {
	type hcase struct {
		name string
		h    *hamiltonian.Hamiltonian
	}
	var cases []hcase
	for _, c := range referenceCases(t) {
		cases = append(cases, hcase{c.Name, c.H})
	}
	for _, c := range checkCases(t) {
		cases = append(cases, hcase(c))
	}
	for _, c := range cases {
		for _, read := range []int{0, 100} {
			t.Run(fmt.Sprintf("%s/read=%d", c.name, read), func(t *testing.T) {
				const budget = 60
				p, err := allocate.Run(c.h, budget, allocate.NarrowedGreedy(read), nil)
				if err != nil {
					t.Fatal(err)
				}
				got, want := planStrings(p), greedyReference(c.h, budget)
				for k := range want {
					if got[k] != want[k] {
						t.Fatalf("setting %d = %s, want %s (reference re-sorting every round)", k, got[k], want[k])
					}
				}
			})
		}
	}
}
