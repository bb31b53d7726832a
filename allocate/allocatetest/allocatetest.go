package allocatetest

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Case is a named Hamiltonian the suite plans for.
type Case struct {
	Name string
	H    *hamiltonian.Hamiltonian
}

// Options adjusts [Test]. A nil *Options means the zero value.
type Options struct {
	// Cases are the Hamiltonians to plan for; nil means [Cases].
	Cases []Case
	// Budgets are the budgets to plan; nil means 1, 2, 7 and 60.
	Budgets []int
	// Seeds are the seeds passed to the constructor; nil means 1 and 2.
	Seeds []uint64
}

// Cases returns the suite's default Hamiltonians: small invented models on
// 1, 4, 6 and 70 qubits, the last with terms across the 64-qubit word
// boundary.
func Cases() []Case {
	mk := func(name string, n int, offset float64, terms map[string]float64) Case {
		keys := make([]string, 0, len(terms))
		for k := range terms {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		var ts []hamiltonian.Term
		for _, k := range keys {
			p, err := pauli.ParseSparse(k, n)
			if err != nil {
				panic(err)
			}
			ts = append(ts, hamiltonian.Term{Pauli: p, Coeff: terms[k]})
		}
		h, err := hamiltonian.New(n, offset, ts)
		if err != nil {
			panic(err)
		}
		return Case{Name: name, H: h}
	}
	return []Case{
		mk("one-qubit", 1, 0.1, map[string]float64{"X_0": 0.5, "Z_0": -0.25, "Y_0": 0.125}),
		mk("four-qubit-mixed", 4, -0.3, map[string]float64{
			"Z_0": 0.8, "Z_1": 0.8, "Z_0 Z_1": 0.4, "X_0 X_1 Y_2 Y_3": 0.05, "Y_0 Y_1 X_2 X_3": -0.05,
			"Z_2 Z_3": 0.3, "X_3": -0.6, "Z_0 Z_1 Z_2 Z_3": 0.02, "X_1 Z_2": 0.15,
		}),
		mk("six-qubit-ring", 6, 0, map[string]float64{
			"X_0 X_1": 1, "Y_1 Y_2": 1, "Z_2 Z_3": 1, "X_3 X_4": 1, "Y_4 Y_5": 1, "Z_5 Z_0": 1,
			"Z_0": 0.3, "Z_1": -0.3, "X_2": 0.2, "X_5": 0.7, "Y_0 Z_2 X_4": 0.01,
		}),
		mk("seventy-qubit-sparse", 70, 1, map[string]float64{
			"Z_63 Z_64": -1, "X_62 X_63 X_64 X_65": 0.5, "Y_0 Y_69": 0.25, "Z_10": 2, "X_64": -0.75,
			"Z_0 Z_1 Z_2": 0.1, "X_30 Y_31 Z_32 X_33 Y_34": 0.05, "Y_68": 0.33,
		}),
	}
}

// Test runs the conformance suite on the strategies made by newAllocator,
// which must return a fresh, unused allocator for a seed (deterministic
// strategies may ignore the seed). It reports failures through t, in
// subtests named by Hamiltonian, budget and seed, and an "errors" subtest.
// A Hamiltonian wider than the strategy's [allocate.QubitLimit] is skipped.
func Test(t *testing.T, newAllocator func(seed uint64) allocate.Allocator, opts *Options) {
	t.Helper()
	o, limit := prepare(newAllocator, opts)
	for _, c := range o.Cases {
		if limit >= 0 && c.H.Qubits() > limit {
			t.Run(c.Name, func(t *testing.T) {
				t.Skipf("%d qubits, beyond the strategy's limit of %d", c.H.Qubits(), limit)
			})
			continue
		}
		for _, budget := range o.Budgets {
			for _, seed := range o.Seeds {
				name := fmt.Sprintf("%s/budget=%d/seed=%d", c.Name, budget, seed)
				t.Run(name, func(t *testing.T) { checkPlan(t, c.H, budget, seed, newAllocator) })
			}
		}
	}
	t.Run("errors", func(t *testing.T) { checkErrors(t, newAllocator, o) })
}

// Check runs the same suite as [Test] without a testing.T, for programs and
// examples: it returns nil if the strategy passes every check, and otherwise
// the failures joined with errors.Join, each prefixed by the check's name
// (Hamiltonian, budget and seed, or "errors").
func Check(newAllocator func(seed uint64) allocate.Allocator, opts *Options) error {
	o, limit := prepare(newAllocator, opts)
	var errs []error
	for _, c := range o.Cases {
		if limit >= 0 && c.H.Qubits() > limit {
			continue
		}
		for _, budget := range o.Budgets {
			for _, seed := range o.Seeds {
				name := fmt.Sprintf("%s/budget=%d/seed=%d", c.Name, budget, seed)
				errs = collect(errs, name, func(r reporter) { checkPlan(r, c.H, budget, seed, newAllocator) })
			}
		}
	}
	errs = collect(errs, "errors", func(r reporter) { checkErrors(r, newAllocator, o) })
	return errors.Join(errs...)
}

// prepare fills in the defaults of opts and finds the strategy's qubit
// limit (−1 for none).
func prepare(newAllocator func(seed uint64) allocate.Allocator, opts *Options) (Options, int) {
	var o Options
	if opts != nil {
		o = *opts
	}
	if o.Cases == nil {
		o.Cases = Cases()
	}
	if o.Budgets == nil {
		o.Budgets = []int{1, 2, 7, 60}
	}
	if o.Seeds == nil {
		o.Seeds = []uint64{1, 2}
	}
	limit := -1
	if l, ok := newAllocator(o.Seeds[0]).(allocate.QubitLimit); ok {
		limit = l.MaxQubits()
	}
	return o, limit
}

// reporter is the part of *testing.T the checks use, so that [Check] can run
// them outside a test.
type reporter interface {
	Errorf(format string, args ...any)
	Fatalf(format string, args ...any)
	Fatal(args ...any)
}

// collector is a reporter that keeps failures; Fatal and Fatalf end the
// check by panicking with stopCheck, which collect recovers.
type collector struct {
	name string
	errs []error
}

type stopCheck struct{}

func (c *collector) Errorf(format string, args ...any) {
	c.errs = append(c.errs, fmt.Errorf("%s: %s", c.name, fmt.Sprintf(format, args...)))
}

func (c *collector) Fatalf(format string, args ...any) {
	c.Errorf(format, args...)
	panic(stopCheck{})
}

func (c *collector) Fatal(args ...any) {
	c.errs = append(c.errs, fmt.Errorf("%s: %s", c.name, fmt.Sprint(args...)))
	panic(stopCheck{})
}

// collect runs one check with a collector and appends its failures to errs.
// A panic other than stopCheck (a strategy that panics) is reported as a
// failure of that check.
func collect(errs []error, name string, check func(reporter)) []error {
	c := &collector{name: name}
	func() {
		defer func() {
			if r := recover(); r != nil {
				if _, ok := r.(stopCheck); !ok {
					c.errs = append(c.errs, fmt.Errorf("%s: panic: %v", name, r))
				}
			}
		}()
		check(c)
	}()
	return append(errs, c.errs...)
}

// measurer returns a fake measurement for the Observer checks: every shot's
// bits come from a PCG source with a fixed seed. Each produced outcome is
// recorded with its setting.
func measurer(n int) (measure func(pauli.Setting, pauli.Bits) error, log *[]shot) {
	rng := rand.New(rand.NewPCG(0x6d65617375726564, 7))
	log = new([]shot)
	return func(s pauli.Setting, b pauli.Bits) error {
		for q := range n {
			b.Set(q, rng.Uint64()&1)
		}
		*log = append(*log, shot{s, slices.Clone(b)})
		return nil
	}, log
}

type shot struct {
	s pauli.Setting
	b pauli.Bits
}

func run(h *hamiltonian.Hamiltonian, budget int, a allocate.Allocator) (*allocate.Plan, error) {
	measure, _ := measurer(h.Qubits())
	return allocate.Run(h, budget, a, &allocate.Options{Measure: measure})
}

func checkPlan(t reporter, h *hamiltonian.Hamiltonian, budget int, seed uint64, newAllocator func(uint64) allocate.Allocator) {
	before := snapshot(h)
	a := newAllocator(seed)
	p, err := run(h, budget, a)
	if err != nil {
		t.Fatalf("Run(budget %d): %v", budget, err)
	}
	n := h.Qubits()

	// Budget, shot counts, merging.
	if got := p.TotalShots(); got != budget {
		t.Errorf("TotalShots() = %d, want the budget %d", got, budget)
	}
	if len(p.Settings) != len(p.Shots) {
		t.Fatalf("%d settings but %d shot counts", len(p.Settings), len(p.Shots))
	}
	for k, s := range p.Shots {
		if s <= 0 {
			t.Errorf("Shots[%d] = %d, want > 0", k, s)
		}
		if k > 0 && p.Settings[k].Equal(p.Settings[k-1]) {
			t.Errorf("Settings[%d] = Settings[%d] = %s, want consecutive repeats merged", k-1, k, p.Settings[k])
		}
	}

	// Widths and letters.
	if p.Qubits != n {
		t.Errorf("Plan.Qubits = %d, want %d", p.Qubits, n)
	}
	for k, s := range p.Settings {
		if s.Qubits() != n {
			t.Errorf("Settings[%d] has %d qubits, want %d", k, s.Qubits(), n)
			continue
		}
		if !s.IsLocal() {
			// An entangled setting has no letters; its text form must
			// read back to the same setting (same generators and circuit).
			back, err := pauli.ParseSetting(s.String())
			if err != nil || !back.Equal(s) || !back.Circuit().Equal(s.Circuit()) {
				t.Errorf("Settings[%d] = %s: ParseSetting of its text gives %s, %v; want the same entangled setting", k, s, back, err)
			}
			continue
		}
		for q := range n {
			if l := s.At(q); l == pauli.I || l > pauli.Z {
				t.Errorf("Settings[%d].At(%d) = %v, want X, Y or Z", k, q, l)
			}
		}
	}

	// Cover counts.
	want, err := allocate.CoverCounts(h, p.Settings, p.Shots)
	if err != nil {
		t.Fatalf("CoverCounts: %v", err)
	}
	if !slices.Equal(p.Cover, want) {
		t.Errorf("Plan.Cover = %v, want CoverCounts of the settings %v", p.Cover, want)
	}

	// Coefficient split.
	if err := p.Split.Check(h, p.Settings, p.Shots); err != nil {
		t.Errorf("Plan.Split: %v", err)
	}

	// Drawn terms.
	if p.Drawn != nil {
		if len(p.Drawn) != budget {
			t.Errorf("len(Drawn) = %d, want the budget %d", len(p.Drawn), budget)
		} else {
			for j, s := range expand(p) {
				i := p.Drawn[j]
				if i < 0 || i >= h.Len() {
					t.Errorf("Drawn[%d] = %d, out of range [0, %d)", j, i, h.Len())
				} else if !s.Covers(h.Pauli(i)) {
					t.Errorf("Drawn[%d] = term %d (%s), not covered by its shot's setting %s", j, i, h.Pauli(i), s)
				}
			}
		}
	}

	// Reproducible: the same value again, and a new value with the same seed.
	if again, err := run(h, budget, a); err != nil {
		t.Errorf("second Run of the same value: %v", err)
	} else if d := diff(p, again); d != "" {
		t.Errorf("running the same value twice gave different plans: %s", d)
	}
	if fresh, err := run(h, budget, newAllocator(seed)); err != nil {
		t.Errorf("Run of a new value with seed %d: %v", seed, err)
	} else if d := diff(p, fresh); d != "" {
		t.Errorf("two values with seed %d gave different plans: %s", seed, d)
	}

	// Observer called in shot order.
	checkObserver(t, h, budget, newAllocator(seed))

	if !same(before, snapshot(h)) {
		t.Errorf("the Hamiltonian was modified by the strategy")
	}
}

// recorder wraps an allocator, records every Observe call and forwards it
// when the allocator is itself an Observer.
type recorder struct {
	allocate.Allocator
	seen []shot
}

func (r *recorder) Observe(s pauli.Setting, b pauli.Bits) {
	r.seen = append(r.seen, shot{s, slices.Clone(b)})
	if o, ok := r.Allocator.(allocate.Observer); ok {
		o.Observe(s, b)
	}
}

func (r *recorder) String() string { return allocate.Name(r.Allocator) }

// stepRecorder and batchRecorder are recorders that forward
// [allocate.Stepper] and [allocate.Batcher], so that strategies of either
// kind run through the wrapper.
type stepRecorder struct{ *recorder }

func (r stepRecorder) Next(dst []pauli.Letter) (int, error) {
	return r.Allocator.(allocate.Stepper).Next(dst)
}

type batchRecorder struct{ *recorder }

func (r batchRecorder) NextBatch(settings []pauli.Setting, shots []int, remaining int) ([]pauli.Setting, []int, error) {
	return r.Allocator.(allocate.Batcher).NextBatch(settings, shots, remaining)
}

func checkObserver(t reporter, h *hamiltonian.Hamiltonian, budget int, a allocate.Allocator) {
	rec := &recorder{Allocator: a}
	var wrapped allocate.Allocator
	switch a.(type) {
	case allocate.Batcher:
		wrapped = batchRecorder{rec}
	case allocate.Stepper:
		wrapped = stepRecorder{rec}
	default:
		t.Errorf("%s has neither Next (allocate.Stepper) nor NextBatch (allocate.Batcher)", allocate.Name(a))
		return
	}
	measure, measured := measurer(h.Qubits())
	p, err := allocate.Run(h, budget, wrapped, &allocate.Options{Measure: measure})
	if err != nil {
		t.Errorf("Run with an observing wrapper: %v", err)
		return
	}
	shots := expand(p)
	if len(rec.seen) != len(shots) || len(*measured) != len(shots) {
		t.Errorf("Observe called %d times and Measure %d times for %d shots", len(rec.seen), len(*measured), len(shots))
		return
	}
	for j, s := range shots {
		got, m := rec.seen[j], (*measured)[j]
		if !got.s.Equal(s) || !m.s.Equal(s) {
			t.Errorf("shot %d: Observe got setting %s, Measure got %s, plan has %s", j, got.s, m.s, s)
			return
		}
		if !slices.Equal(got.b, m.b) {
			t.Errorf("shot %d: Observe got outcome %s, measured %s", j, got.b.Format(h.Qubits()), m.b.Format(h.Qubits()))
			return
		}
	}
}

func checkErrors(t reporter, newAllocator func(uint64) allocate.Allocator, o Options) {
	h := o.Cases[0].H
	for _, c := range o.Cases {
		if l, ok := newAllocator(1).(allocate.QubitLimit); !ok || c.H.Qubits() <= l.MaxQubits() {
			h = c.H
			break
		}
	}
	empty, err := hamiltonian.New(h.Qubits(), 1.5, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := run(empty, 10, newAllocator(1)); !errors.Is(err, allocate.ErrEmpty) {
		t.Errorf("Run(offset-only Hamiltonian) error = %v, want ErrEmpty", err)
	}
	for _, budget := range []int{0, -3} {
		if _, err := run(h, budget, newAllocator(1)); !errors.Is(err, allocate.ErrBudget) {
			t.Errorf("Run(budget %d) error = %v, want ErrBudget", budget, err)
		}
	}
	a := newAllocator(1)
	if l, ok := a.(allocate.QubitLimit); ok {
		n := l.MaxQubits() + 1
		wide, err := hamiltonian.New(n, 0, []hamiltonian.Term{{Pauli: pauli.Identity(n).With(n-1, pauli.Z), Coeff: 1}})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := run(wide, 10, a); !errors.Is(err, allocate.ErrTooManyQubits) {
			t.Errorf("Run(%d qubits, MaxQubits %d) error = %v, want ErrTooManyQubits", n, l.MaxQubits(), err)
		}
	}
}

// expand returns the setting of every shot of p, in shot order.
func expand(p *allocate.Plan) []pauli.Setting {
	var out []pauli.Setting
	for k, s := range p.Settings {
		for range p.Shots[k] {
			out = append(out, s)
		}
	}
	return out
}

// diff describes the first difference between two plans, ignoring Stats.
func diff(a, b *allocate.Plan) string {
	if len(a.Settings) != len(b.Settings) {
		return fmt.Sprintf("%d settings, then %d", len(a.Settings), len(b.Settings))
	}
	for k := range a.Settings {
		if !a.Settings[k].Equal(b.Settings[k]) || a.Shots[k] != b.Shots[k] {
			return fmt.Sprintf("entry %d: %s×%d, then %s×%d", k, a.Settings[k], a.Shots[k], b.Settings[k], b.Shots[k])
		}
	}
	if !slices.Equal(a.Cover, b.Cover) {
		return fmt.Sprintf("Cover %v, then %v", a.Cover, b.Cover)
	}
	if !slices.Equal(a.Drawn, b.Drawn) {
		return fmt.Sprintf("Drawn %v, then %v", a.Drawn, b.Drawn)
	}
	return ""
}

type term struct {
	p string
	c float64
}

type snap struct {
	n      int
	offset float64
	terms  []term
}

func snapshot(h *hamiltonian.Hamiltonian) snap {
	s := snap{n: h.Qubits(), offset: h.Offset()}
	for _, t := range h.Terms() {
		s.terms = append(s.terms, term{t.Pauli.String(), t.Coeff})
	}
	return s
}

func same(a, b snap) bool {
	return a.n == b.n && a.offset == b.offset && slices.Equal(a.terms, b.terms)
}
