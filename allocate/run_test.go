package allocate_test

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// mustH builds a Hamiltonian from dense strings and coefficients.
func mustH(t testing.TB, offset float64, terms ...any) *hamiltonian.Hamiltonian {
	t.Helper()
	var ts []hamiltonian.Term
	n := 0
	for k := 0; k < len(terms); k += 2 {
		p := pauli.MustParse(terms[k].(string))
		n = p.Qubits()
		ts = append(ts, hamiltonian.Term{Pauli: p, Coeff: terms[k+1].(float64)})
	}
	h, err := hamiltonian.New(n, offset, ts)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// probe is an adaptive allocator that picks its next setting from the last
// outcome it observed, and optionally produces batches.
type probe struct {
	batch    int // settings per batch; 0 means use Next
	observed []string
	last     pauli.Bits
	n        int
}

func (p *probe) Init(h *hamiltonian.Hamiltonian, budget int) error {
	p.observed, p.last, p.n = nil, pauli.NewBits(h.Qubits()), h.Qubits()
	return nil
}

func (p *probe) letter() pauli.Letter {
	if p.last.Get(0) == 1 {
		return pauli.X
	}
	return pauli.Z
}

func (p *probe) Next(dst []pauli.Letter) (int, error) {
	for q := range dst {
		dst[q] = p.letter()
	}
	return 2, nil
}

func (p *probe) Observe(s pauli.Setting, b pauli.Bits) {
	p.observed = append(p.observed, s.String()+":"+b.Format(p.n))
	copy(p.last, b)
}

type batchProbe struct{ probe }

func (p *batchProbe) NextBatch(settings []pauli.Setting, shots []int, remaining int) ([]pauli.Setting, []int, error) {
	for k := range p.batch {
		s := pauli.Complete(pauli.Identity(p.n), p.letter())
		if k%2 == 1 {
			s = pauli.Complete(pauli.Identity(p.n), pauli.Y)
		}
		settings = append(settings, s)
		shots = append(shots, 1+k)
	}
	return settings, shots, nil
}

// alternating returns outcomes 1, 0, 1, 0, ... on qubit 0 and records them.
func alternating(log *[]string, n int) func(pauli.Setting, pauli.Bits) error {
	k := 0
	return func(s pauli.Setting, b pauli.Bits) error {
		b.Set(0, uint64(1-k%2))
		k++
		*log = append(*log, s.String()+":"+b.Format(n))
		return nil
	}
}

func TestRunObserverOrder(t *testing.T) {
	h := mustH(t, 0, "ZZ", 1.0, "XX", 0.5)
	for _, tc := range []struct {
		name string
		a    interface {
			allocate.Allocator
			allocate.Observer
		}
		obs *probe
	}{
		{name: "next", a: &probe{}},
		{name: "batch", a: &batchProbe{probe{batch: 3}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var measured []string
			p, err := allocate.Run(h, 11, tc.a, &allocate.Options{Measure: alternating(&measured, 2)})
			if err != nil {
				t.Fatal(err)
			}
			var observed []string
			switch a := tc.a.(type) {
			case *probe:
				observed = a.observed
			case *batchProbe:
				observed = a.observed
			}
			if !slices.Equal(observed, measured) {
				t.Errorf("observed %v, measured %v", observed, measured)
			}
			var planned []string
			for k, s := range p.Settings {
				for range p.Shots[k] {
					planned = append(planned, s.String())
				}
			}
			for j := range planned {
				if j >= len(observed) || !strings.HasPrefix(observed[j], planned[j]+":") {
					t.Fatalf("shot %d: plan has %s, observed %v", j, planned[j], observed)
				}
			}
			if p.TotalShots() != 11 {
				t.Errorf("TotalShots() = %d, want 11", p.TotalShots())
			}
		})
	}
}

func TestRunObserverAdapts(t *testing.T) {
	// The probe measures ZZ until qubit 0 last read 1, then XX, two shots
	// a round. A measurement returning 0, 1, 0, 1, ... leaves 1 as the last
	// outcome of every round, so every round after the first is XX.
	h := mustH(t, 0, "ZZ", 1.0, "XX", 0.5)
	k := 0
	measure := func(s pauli.Setting, b pauli.Bits) error {
		b.Set(0, uint64(k%2))
		k++
		return nil
	}
	p, err := allocate.Run(h, 6, &probe{}, &allocate.Options{Measure: measure})
	if err != nil {
		t.Fatal(err)
	}
	got := []string{p.Settings[0].String(), p.Settings[1].String()}
	if !slices.Equal(got, []string{"ZZ", "XX"}) || !slices.Equal(p.Shots, []int{2, 4}) {
		t.Errorf("plan = %v×%v, want [ZZ XX]×[2 4]", p.Settings, p.Shots)
	}
}

func TestRunObserverNeedsMeasure(t *testing.T) {
	h := mustH(t, 0, "ZZ", 1.0)
	_, err := allocate.Run(h, 3, &probe{}, nil)
	if err == nil || !strings.Contains(err.Error(), "Measure") {
		t.Errorf("Run(Observer, no Measure) error = %v, want one naming Options.Measure", err)
	}
}

func TestRunProgress(t *testing.T) {
	h := mustH(t, 0, "ZZ", 1.0, "XI", 0.5)
	var got []int
	s := &allocate.Options{ProgressShots: 10, Progress: func(p allocate.Progress) {
		if p.Budget != 35 {
			t.Errorf("Progress.Budget = %d, want 35", p.Budget)
		}
		got = append(got, p.Shots)
	}}
	if _, err := allocate.Run(h, 35, &allocate.Random{Seed: 1}, s); err != nil {
		t.Fatal(err)
	}
	if want := []int{10, 20, 30, 35}; !slices.Equal(got, want) {
		t.Errorf("progress reported at %v shots, want %v", got, want)
	}
}

func TestRunMergesRepeats(t *testing.T) {
	h := mustH(t, 0, "ZZ", 1.0, "XX", 0.5)
	p, err := allocate.Run(h, 9, allocate.NewFixed(pauli.MustParseSetting("ZZ")), nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Settings) != 1 || p.Shots[0] != 9 {
		t.Errorf("plan = %v×%v, want [ZZ]×[9]", p.Settings, p.Shots)
	}
	if want := []int{9, 0}; !slices.Equal(p.Cover, want) {
		t.Errorf("Cover = %v, want %v", p.Cover, want)
	}
	if p.Stats.Strategy != "fixed" || p.Stats.Rounds != 9 {
		t.Errorf("Stats = %+v, want strategy fixed, 9 rounds", p.Stats)
	}
}

// broken allocators, each breaking one rule of the contract.
type broken struct {
	letter pauli.Letter
	shots  int
}

func (b *broken) Init(*hamiltonian.Hamiltonian, int) error { return nil }
func (b *broken) Next(dst []pauli.Letter) (int, error) {
	for q := range dst {
		dst[q] = pauli.Z
	}
	dst[len(dst)-1] = b.letter
	return b.shots, nil
}

type badBatch struct{ broken }

func (b *badBatch) NextBatch(s []pauli.Setting, k []int, _ int) ([]pauli.Setting, []int, error) {
	return append(s, pauli.MustParseSetting("ZZZ")), append(k, 1), nil
}

type badDrawer struct{ broken }

func (b *badDrawer) Drawn() []int { return []int{0} }

type failing struct{ broken }

func (f *failing) Init(*hamiltonian.Hamiltonian, int) error { return errors.New("no luck") }

type limited struct{ broken }

// initOnly has Init but neither Next nor NextBatch.
type initOnly struct{}

func (initOnly) Init(*hamiltonian.Hamiltonian, int) error { return nil }

func (l *limited) MaxQubits() int { return 1 }

func TestRunErrors(t *testing.T) {
	h := mustH(t, 0, "ZZ", 1.0, "XX", 0.5)
	empty, err := hamiltonian.New(2, 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	ok := &broken{letter: pauli.X, shots: 1}
	for _, tc := range []struct {
		name   string
		h      *hamiltonian.Hamiltonian
		budget int
		a      allocate.Allocator
		is     error  // wanted sentinel, or nil
		text   string // wanted substring
	}{
		{"empty Hamiltonian", empty, 5, ok, allocate.ErrEmpty, "broken"},
		{"nil Hamiltonian", nil, 5, ok, allocate.ErrEmpty, ""},
		{"zero budget", h, 0, ok, allocate.ErrBudget, "got 0"},
		{"negative budget", h, -2, ok, allocate.ErrBudget, "got -2"},
		{"identity letter", h, 5, &broken{letter: pauli.I, shots: 1}, allocate.ErrStrategy, "qubit 1 has letter I"},
		{"invalid letter", h, 5, &broken{letter: 7, shots: 1}, allocate.ErrStrategy, "qubit 1"},
		{"zero shots", h, 5, &broken{letter: pauli.X, shots: 0}, allocate.ErrStrategy, "0 shots"},
		{"batch of wrong width", h, 5, &badBatch{*ok}, allocate.ErrStrategy, "ZZZ has 3 qubits"},
		{"short drawn list", h, 5, &badDrawer{*ok}, allocate.ErrStrategy, "drew 1 terms for 5 shots"},
		{"init fails", h, 5, &failing{*ok}, nil, "no luck"},
		{"too many qubits", h, 5, &limited{*ok}, allocate.ErrTooManyQubits, "at most 1 qubits, Hamiltonian has 2"},
		{"fixed of other width", h, 5, allocate.NewFixed(pauli.MustParseSetting("Z")), allocate.ErrTooManyQubits, ""},
		{"fixed without settings", h, 5, &allocate.Fixed{}, nil, "no settings"},
		{"nil allocator", h, 5, nil, allocate.ErrStrategy, "nil Allocator"},
		{"neither Next nor NextBatch", h, 5, initOnly{}, allocate.ErrStrategy, "initOnly has neither Next (Stepper) nor NextBatch (Batcher)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := allocate.Run(tc.h, tc.budget, tc.a, nil)
			if err == nil {
				t.Fatalf("Run = nil error, want one")
			}
			if tc.is != nil && !errors.Is(err, tc.is) {
				t.Errorf("Run error = %v, want errors.Is %v", err, tc.is)
			}
			if !strings.Contains(err.Error(), tc.text) {
				t.Errorf("Run error = %q, want it to contain %q", err, tc.text)
			}
		})
	}
}

func TestCheckFinite(t *testing.T) {
	// A Hamiltonian cannot hold a non-finite coefficient (hamiltonian.New
	// refuses one), so the driver's own check is tested on raw slices.
	for _, tc := range []struct {
		name string
		coef []float64
		want bool
	}{
		{"finite", []float64{1, -2, 0.5}, false},
		{"NaN", []float64{1, math.NaN()}, true},
		{"+Inf", []float64{math.Inf(1)}, true},
		{"-Inf", []float64{0, 0, math.Inf(-1)}, true},
	} {
		err := allocate.CheckFinite(tc.coef, nil)
		if got := err != nil; got != tc.want {
			t.Errorf("checkFinite(%v) error = %v, want error %v", tc.coef, err, tc.want)
		}
		if err != nil && !errors.Is(err, allocate.ErrNonFinite) {
			t.Errorf("checkFinite(%v) error = %v, want ErrNonFinite", tc.coef, err)
		}
	}
}

func TestByName(t *testing.T) {
	want := []string{"biased", "derand", "fixed", "greedy", "importance", "random", "sorted"}
	names := allocate.Names()
	if !slices.IsSorted(names) {
		t.Errorf("Names() = %v, not sorted", names)
	}
	for _, name := range want {
		if !slices.Contains(names, name) {
			t.Errorf("Names() = %v, lacks %q", names, name)
		}
	}
	for _, name := range want {
		a, err := allocate.ByName(name, 7)
		if err != nil {
			t.Fatalf("ByName(%q): %v", name, err)
		}
		if got := allocate.Name(a); got != name {
			t.Errorf("Name(ByName(%q)) = %q", name, got)
		}
	}
	if a, err := allocate.ByName("Sorted-GC", 1); err != nil || allocate.Name(a) != "sorted-gc" {
		t.Errorf("ByName(Sorted-GC) = %v, %v; want sorted-gc in any case", a, err)
	}
	if _, err := allocate.ByName("nonesuch", 1); err == nil || !strings.Contains(err.Error(), "greedy") {
		t.Errorf("ByName(nonesuch) error = %v, want one listing the known names", err)
	}
	if got := allocate.Name(&broken{}); got != "broken" {
		t.Errorf("Name(&broken{}) = %q, want the type name", got)
	}
}
