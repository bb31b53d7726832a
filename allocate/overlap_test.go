package allocate_test

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestOverlapTwoGroupsByHand checks the split of the overlap strategy
// against a closed form. H = 1·ZI + 0.5·IX + 0.2·IY: sorted insertion
// groups {ZI, IX} and {IY}; the extension adds ZI to the second group, so
// the settings are ZX and ZY and ZI is split, α to ZX and 1 − α to ZY.
// Without a proxy the weights minimise the certificate's
// V = (α + 0.5)²/m_0 + (1 − α + 0.2)²/m_1 for the final counts, whose
// derivative vanishes at α = (1.2 m_0 − 0.5 m_1)/(m_0 + m_1), clipped to
// [0, 1] (MATH.md §2.5; derived here).
func TestOverlapTwoGroupsByHand(t *testing.T) {
	h := mustH(t, 0, "ZI", 1.0, "IX", 0.5, "IY", 0.2)
	for _, budget := range []int{2, 3, 10, 101, 1000} {
		p, err := allocate.Run(h, budget, &allocate.Overlap{}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(p.Settings) != 2 || p.Settings[0].String() != "ZX" || p.Settings[1].String() != "ZY" {
			t.Fatalf("budget %d: settings %v, want ZX, ZY", budget, p.Settings)
		}
		m0, m1 := float64(p.Shots[0]), float64(p.Shots[1])
		want := min(1, max(0, (1.2*m0-0.5*m1)/(m0+m1)))
		got := 0.0
		for _, gr := range p.Split {
			if gr.Setting.String() == "ZX" && len(gr.Terms) == 1 && gr.Terms[0] == 0 {
				got = gr.Weights[0]
			}
		}
		if math.Abs(got-want) > 1e-12 {
			t.Errorf("budget %d (m = %v, %v): weight of ZI in ZX %.15g, want %.15g", budget, m0, m1, got, want)
		}
	}
}

// TestSimplexMin compares the per-term step with a brute-force search:
// the minimum of Σ d_j x_j² + 2 e_j x_j over a fine grid of the simplex
// (three groups, step 1/400) may not beat it, and the closed form's value
// is at most the grid's best plus the grid's resolution error.
func TestSimplexMin(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	f := func(d, e, x []float64) float64 {
		s := 0.0
		for j := range x {
			s += d[j]*x[j]*x[j] + 2*e[j]*x[j]
		}
		return s
	}
	for trial := range 200 {
		d := []float64{0.1 + rng.Float64(), 0.1 + rng.Float64(), 0.1 + rng.Float64()}
		e := []float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
		x := make([]float64, 3)
		allocate.SimplexMin(d, e, x)
		sum := 0.0
		for _, v := range x {
			if v < 0 {
				t.Fatalf("trial %d: negative weight %v", trial, x)
			}
			sum += v
		}
		if math.Abs(sum-1) > 1e-12 {
			t.Fatalf("trial %d: weights %v add up to %v", trial, x, sum)
		}
		got := f(d, e, x)
		const steps = 400
		best := math.Inf(1)
		for a := 0; a <= steps; a++ {
			for b := 0; a+b <= steps; b++ {
				y := []float64{float64(a) / steps, float64(b) / steps, float64(steps-a-b) / steps}
				best = min(best, f(d, e, y))
			}
		}
		if got > best+1e-12 {
			t.Errorf("trial %d: closed form %.12g above the grid's %.12g (d %v, e %v, x %v)", trial, got, best, d, e, x)
		}
		// The grid point nearest the optimum is within 1/400 per
		// coordinate; the objective's gradient is at most 2(d + |e|) ≤ 2·(1.1 + 5).
		if best-got > 3*2*(1.1+5)/steps {
			t.Errorf("trial %d: grid %.12g far below the closed form %.12g", trial, best, got)
		}
	}
}

// TestOverlapGroupsReference rebuilds the overlap strategy's settings
// letter by letter: sorted insertion (first fit by |h_i| descending, ties
// by index, qubit-wise compatibility) and then the extension of each group
// by every compatible term in the same order (MATH.md §2.5), free qubits
// Z, repeats merged. The strategy's groups must be these, in order.
func TestOverlapGroupsReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	for trial := range 20 {
		n := 3 + trial%5
		var terms []hamiltonian.Term
		for range 4 * n {
			l := make([]pauli.Letter, n)
			for q := range l {
				if rng.IntN(3) == 0 {
					l[q] = pauli.Letter(1 + rng.IntN(3))
				}
			}
			p := pauli.FromLetters(l)
			if !p.IsIdentity() {
				terms = append(terms, hamiltonian.Term{Pauli: p, Coeff: rng.NormFloat64()})
			}
		}
		h, err := hamiltonian.New(n, 0, terms)
		if err != nil {
			t.Fatal(err)
		}
		want := referenceOverlapGroups(h)
		o := &allocate.Overlap{}
		if _, err := allocate.Run(h, 1000, o, nil); err != nil {
			t.Fatal(err)
		}
		groups, _ := o.Groups()
		var gs []string
		for _, s := range groups {
			gs = append(gs, s.String())
		}
		if !slices.Equal(gs, want) {
			t.Errorf("trial %d: settings %v, reference %v", trial, gs, want)
		}
	}
}

// badSplitter is sorted insertion reporting a split that does not add up.
type badSplitter struct{ allocate.Sorted }

func (b *badSplitter) Split() hamiltonian.Split {
	s, _ := b.Groups()
	return hamiltonian.Split{{Setting: s[0], Terms: []int{0}, Weights: []float64{0.5}}}
}

// TestRunChecksSplit checks that the driver refuses a strategy's split
// that fails hamiltonian.Split.Check, as a broken contract.
func TestRunChecksSplit(t *testing.T) {
	h := mustH(t, 0, "ZI", 1.0, "IX", 0.5, "IY", 0.2)
	_, err := allocate.Run(h, 10, &badSplitter{}, nil)
	if !errors.Is(err, allocate.ErrStrategy) || !strings.Contains(err.Error(), "add up to 0.5") {
		t.Errorf("Run = %v, want an ErrStrategy about the weights of term 0", err)
	}
}

func referenceOverlapGroups(h *hamiltonian.Hamiltonian) []string {
	n := h.Qubits()
	order := make([]int, h.Len())
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		x, y := math.Abs(h.Coeff(a)), math.Abs(h.Coeff(b))
		switch {
		case x > y:
			return -1
		case x < y:
			return 1
		}
		return 0
	})
	fits := func(g []pauli.Letter, p pauli.String) bool {
		for q := range n {
			if l := p.At(q); l != pauli.I && g[q] != pauli.I && g[q] != l {
				return false
			}
		}
		return true
	}
	join := func(g []pauli.Letter, p pauli.String) {
		for q := range n {
			if l := p.At(q); l != pauli.I {
				g[q] = l
			}
		}
	}
	var groups [][]pauli.Letter
	for _, i := range order {
		p := h.Pauli(i)
		k := slices.IndexFunc(groups, func(g []pauli.Letter) bool { return fits(g, p) })
		if k < 0 {
			groups = append(groups, make([]pauli.Letter, n))
			k = len(groups) - 1
		}
		join(groups[k], p)
	}
	var out []string
	for _, g := range groups {
		for _, i := range order {
			if fits(g, h.Pauli(i)) {
				join(g, h.Pauli(i))
			}
		}
		for q := range g {
			if g[q] == pauli.I {
				g[q] = pauli.Z
			}
		}
		s := pauli.FromLetters(g).String()
		if !slices.Contains(out, s) {
			out = append(out, s)
		}
	}
	return out
}

// badProxy returns a number outside [−1, 1] for every string.
type badProxy struct{}

func (badProxy) Expect(pauli.String) float64 { return 2 }

// TestOverlapProxyChecks checks that a proxy of the wrong width or with an
// expectation outside [−1, 1], and a floor outside (0, 1], are refused
// with errors that say so.
func TestOverlapProxyChecks(t *testing.T) {
	h := mustH(t, 0, "ZI", 1.0, "IX", 0.5, "IY", 0.2)
	psi := make([]complex128, 8)
	psi[0] = 1
	three, err := allocate.NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		a    *allocate.Overlap
		want string
	}{
		{&allocate.Overlap{Proxy: three}, "proxy state has 3 qubits, Hamiltonian has 2"},
		{&allocate.Overlap{Proxy: badProxy{}}, "outside [−1, 1]"},
		{&allocate.Overlap{Proxy: allocate.BasisProxy{}}, "proxy basis state has 0 words"},
		{&allocate.Overlap{Floor: 1.5}, "floor 1.5 is not in (0, 1]"},
		{&allocate.Overlap{Rounds: -1}, "negative round count"},
	} {
		if _, err := allocate.Run(h, 10, c.a, nil); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("Run = %v, want an error containing %q", err, c.want)
		}
	}
}

// hiddenProxy hides a StateProxy's type, so that Overlap asks it string by
// string instead of through its Born probabilities.
type hiddenProxy struct{ allocate.Proxy }

// TestOverlapStateProxyPaths checks the transform path of a StateProxy
// (Walsh–Hadamard transform of each setting's Born probabilities) against
// the string-by-string path (hamiltonian.Expectation of every product):
// the same plan and, up to rounding, the same weights, on a random
// 5-qubit state.
func TestOverlapStateProxyPaths(t *testing.T) {
	rng := rand.New(rand.NewPCG(12, 13))
	var terms []hamiltonian.Term
	for range 30 {
		l := make([]pauli.Letter, 5)
		for q := range l {
			if rng.IntN(2) == 0 {
				l[q] = pauli.Letter(1 + rng.IntN(3))
			}
		}
		if p := pauli.FromLetters(l); !p.IsIdentity() {
			terms = append(terms, hamiltonian.Term{Pauli: p, Coeff: rng.NormFloat64()})
		}
	}
	h, err := hamiltonian.New(5, 0, terms)
	if err != nil {
		t.Fatal(err)
	}
	psi := make([]complex128, 32)
	norm := 0.0
	for b := range psi {
		psi[b] = complex(rng.NormFloat64(), rng.NormFloat64())
		norm += real(psi[b])*real(psi[b]) + imag(psi[b])*imag(psi[b])
	}
	for b := range psi {
		psi[b] /= complex(math.Sqrt(norm), 0)
	}
	sp, err := allocate.NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	fast, err := allocate.Run(h, 1000, &allocate.Overlap{Proxy: sp}, nil)
	if err != nil {
		t.Fatal(err)
	}
	slow, err := allocate.Run(h, 1000, &allocate.Overlap{Proxy: hiddenProxy{sp}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(fast.Shots, slow.Shots) || len(fast.Split) != len(slow.Split) || len(fast.Split) == 0 {
		t.Fatalf("shots %v and %v, %d and %d split groups", fast.Shots, slow.Shots, len(fast.Split), len(slow.Split))
	}
	for g := range fast.Split {
		a, b := fast.Split[g], slow.Split[g]
		if !a.Setting.Equal(b.Setting) || !slices.Equal(a.Terms, b.Terms) {
			t.Fatalf("group %d: %s %v and %s %v", g, a.Setting, a.Terms, b.Setting, b.Terms)
		}
		for k := range a.Weights {
			if math.Abs(a.Weights[k]-b.Weights[k]) > 1e-9 {
				t.Errorf("group %d term %d: weight %.15g and %.15g", g, a.Terms[k], a.Weights[k], b.Weights[k])
			}
		}
	}
}

// BenchmarkOverlap plans 10^4 shots with the overlap strategy and no proxy
// (the worst-case model) on both molecular fixtures, 14 250 and 571 875
// terms, as the other strategies' benchmarks do.
func BenchmarkOverlap(b *testing.B) {
	benchMoleculePlan(b, func() allocate.Allocator { return &allocate.Overlap{} }, benchSettings)
}
