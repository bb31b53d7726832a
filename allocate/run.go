package allocate

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"time"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// Options adjusts a run of [Run]. A nil *Options means the zero value,
// whose every field has a default described beside it.
type Options struct {
	// Progress, if not nil, is called after a round in which the number of
	// planned shots reached the next multiple of ProgressShots, and once at
	// the end of the run. Nil means no progress reports.
	Progress func(Progress)
	// ProgressShots is the number of shots between progress reports; zero
	// or negative means one hundredth of the budget, at least 1.
	ProgressShots int
	// Measure measures one shot of s and writes its outcome into b. It is
	// required when the allocator is an [Observer] and ignored otherwise:
	// nil with an Observer is an error.
	Measure func(s pauli.Setting, b pauli.Bits) error
	// Compact, if true, merges every repeat of a setting as the run goes,
	// not only consecutive ones, so that the plan's memory grows with its
	// distinct settings rather than with its runs of shots: the plan is
	// then that of a run without Compact after [Plan.Compact]. For a
	// [TermDrawer], whose drawn terms follow the shot order, the merge is
	// done once at the end.
	Compact bool
}

// Progress reports how far a run has come.
type Progress struct {
	Shots   int           // shots planned so far
	Budget  int           // the run's budget
	Rounds  int           // calls to Next or NextBatch so far
	Elapsed time.Duration // wall-clock time since the run started
}

// Run runs the allocator a to plan budget shots for h and returns the plan.
// It is the driver of every strategy: it checks the input, detects the
// interfaces ([Stepper] or [Batcher], and the optional [Observer], [Counter],
// [TermDrawer], [QubitLimit]) once, calls Init, then NextBatch (or Next) until the budget
// is spent, merges consecutive repeats of a setting, and counts every term's
// cover N_i. The plan has exactly budget shots.
//
// Run returns an error wrapping [ErrEmpty] if h has no non-identity term,
// [ErrBudget] if budget ≤ 0, [ErrNonFinite] if a coefficient is NaN or
// infinite, [ErrTooManyQubits] if a's [QubitLimit] is below h's width,
// [ErrStrategy] if a breaks the [Allocator] contract, and any error of
// a's methods or of Options.Measure, prefixed by the strategy's name.
// h is not modified.
//
// Run does not take a strategy's word for its results: the cover counts of
// a [Counter] are checked against a count of its own (through the shared
// cover index for local settings, and for entangled ones through the terms
// grouped by X part, each covered term tested in full), and every term a [TermDrawer] reports must be a term of h
// that the setting of its shot covers; a disagreement is an [ErrStrategy]
// naming the strategy and the term or shot.
//
// A panic inside the strategy's methods (or inside Options.Measure or
// Progress) is recovered: Run returns an error wrapping [ErrStrategy] that
// names the strategy, the method and the panic value, and no plan.
func Run(h *hamiltonian.Hamiltonian, budget int, a Allocator, opts *Options) (plan *Plan, err error) {
	start := time.Now()
	var set Options
	if opts != nil {
		set = *opts
	}
	if a == nil {
		return nil, fmt.Errorf("%w: nil Allocator", ErrStrategy)
	}
	name, phase := "", "String"
	defer func() {
		if r := recover(); r != nil {
			if name == "" {
				name = fmt.Sprintf("%T", a)
			}
			plan, err = nil, fmt.Errorf("%w: %s panicked in %s: %v", ErrStrategy, name, phase, r)
		}
	}()
	name = Name(a)
	if h == nil || h.Len() == 0 {
		return nil, fmt.Errorf("%w (strategy %s)", ErrEmpty, name)
	}
	if budget <= 0 {
		return nil, fmt.Errorf("%w: got %d (strategy %s)", ErrBudget, budget, name)
	}
	if err := checkFinite(h.Coeffs(), h); err != nil {
		return nil, err
	}
	n := h.Qubits()
	if l, ok := a.(QubitLimit); ok && n > l.MaxQubits() {
		return nil, fmt.Errorf("%w: %s supports at most %d qubits, Hamiltonian has %d", ErrTooManyQubits, name, l.MaxQubits(), n)
	}
	obs, _ := a.(Observer)
	batch, _ := a.(Batcher)
	step, _ := a.(Stepper)
	if batch == nil && step == nil {
		return nil, fmt.Errorf("%w: %s has neither Next (Stepper) nor NextBatch (Batcher)", ErrStrategy, name)
	}
	counter, _ := a.(Counter)
	drawer, _ := a.(TermDrawer)
	if obs != nil && set.Measure == nil {
		return nil, fmt.Errorf("allocate: %s reads outcomes back (Observer) but Options.Measure is nil", name)
	}
	every := set.ProgressShots
	if every <= 0 {
		every = max(1, budget/100)
	}

	phase = "Init"
	if err := a.Init(h, budget); err != nil {
		return nil, fmt.Errorf("allocate: %s: %w", name, err)
	}

	p := &Plan{Qubits: n}
	var (
		used, rounds int
		nextReport   = every
		letters      = make([]pauli.Letter, n)
		bits         pauli.Bits
		batchS       []pauli.Setting
		batchK       []int
	)
	if obs != nil {
		bits = pauli.NewBits(n)
	}
	var index map[string]int // setting key → entry, with Compact
	if set.Compact && drawer == nil {
		index = make(map[string]int)
	}
	add := func(s pauli.Setting, k int) error {
		if k < 1 {
			return fmt.Errorf("%w: %s: round %d: setting %s given %d shots", ErrStrategy, name, rounds, s, k)
		}
		k = min(k, budget-used)
		if last := len(p.Settings) - 1; last >= 0 && p.Settings[last].Equal(s) {
			p.Shots[last] += k
		} else if index != nil {
			key := s.Key()
			if j, ok := index[key]; ok {
				p.Shots[j] += k
			} else {
				index[key] = len(p.Settings)
				p.Settings = append(p.Settings, s)
				p.Shots = append(p.Shots, k)
			}
		} else {
			p.Settings = append(p.Settings, s)
			p.Shots = append(p.Shots, k)
		}
		used += k
		if obs != nil {
			phase = "Observe"
			for range k {
				clear(bits)
				if err := set.Measure(s, bits); err != nil {
					return fmt.Errorf("allocate: %s: measuring %s: %w", name, s, err)
				}
				obs.Observe(s, bits)
			}
		}
		return nil
	}
	for used < budget {
		rounds++
		if batch != nil {
			var err error
			phase = "NextBatch"
			batchS, batchK, err = batch.NextBatch(batchS[:0], batchK[:0], budget-used)
			if err != nil {
				return nil, fmt.Errorf("allocate: %s: round %d: %w", name, rounds, err)
			}
			if len(batchS) == 0 || len(batchS) != len(batchK) {
				return nil, fmt.Errorf("%w: %s: round %d: batch of %d settings and %d shot counts", ErrStrategy, name, rounds, len(batchS), len(batchK))
			}
			for j, s := range batchS {
				if used == budget {
					break
				}
				if s.Qubits() != n {
					return nil, fmt.Errorf("%w: %s: round %d: setting %s has %d qubits, Hamiltonian has %d", ErrStrategy, name, rounds, s, s.Qubits(), n)
				}
				if err := add(s, batchK[j]); err != nil {
					return nil, err
				}
			}
		} else {
			phase = "Next"
			k, err := step.Next(letters)
			if err != nil {
				return nil, fmt.Errorf("allocate: %s: round %d: %w", name, rounds, err)
			}
			s, err := settingOf(letters)
			if err != nil {
				return nil, fmt.Errorf("%w: %s: round %d: %v", ErrStrategy, name, rounds, err)
			}
			if err := add(s, k); err != nil {
				return nil, err
			}
		}
		if set.Progress != nil && used >= nextReport && used < budget {
			phase = "Progress"
			set.Progress(Progress{Shots: used, Budget: budget, Rounds: rounds, Elapsed: time.Since(start)})
			nextReport = (used/every + 1) * every
		}
	}

	p.Cover = make([]int, h.Len())
	countCover(p.Cover, h.Table(), p.Settings, p.Shots)
	if counter != nil {
		phase = "Cover"
		if err := checkCounter(counter, p.Cover, h); err != nil {
			return nil, fmt.Errorf("%w: %s: %v", ErrStrategy, name, err)
		}
	}
	if sp, ok := a.(Splitter); ok {
		phase = "Split"
		split := sp.Split()
		if err := split.Check(h, p.Settings, p.Shots); err != nil {
			return nil, fmt.Errorf("%w: %s: %v", ErrStrategy, name, err)
		}
		p.Split = cloneSplit(split)
	}
	if drawer != nil {
		phase = "Drawn"
		d := drawer.Drawn()
		if err := checkDrawn(d, p, h); err != nil {
			return nil, fmt.Errorf("%w: %s: %v", ErrStrategy, name, err)
		}
		p.Drawn = append([]int(nil), d...)
		if set.Compact {
			p = p.Compact()
		}
	}
	phase = "Progress"
	p.Stats = Stats{Strategy: name, Rounds: rounds, Elapsed: time.Since(start)}
	if set.Progress != nil {
		set.Progress(Progress{Shots: used, Budget: budget, Rounds: rounds, Elapsed: p.Stats.Elapsed})
	}
	return p, nil
}

// checkCounter compares a Counter's cover counts with the driver's own.
func checkCounter(counter Counter, want []int, h *hamiltonian.Hamiltonian) error {
	got := make([]int, len(want))
	counter.Cover(got)
	for i := range want {
		if got[i] != want[i] {
			return fmt.Errorf("reports term %d (%s) covered %d times, its settings cover it %d times", i, inputcap.Clip(h.Pauli(i).String()), got[i], want[i])
		}
	}
	return nil
}

// checkDrawn checks a TermDrawer's terms: one per shot, each a term of h
// covered by the setting of its shot.
func checkDrawn(d []int, p *Plan, h *hamiltonian.Hamiltonian) error {
	budget := p.TotalShots()
	if len(d) != budget {
		return fmt.Errorf("drew %d terms for %d shots", len(d), budget)
	}
	t := h.Table()
	n := 0
	for k, s := range p.Settings {
		for range p.Shots[k] {
			switch i := d[n]; {
			case i < 0 || i >= h.Len():
				return fmt.Errorf("shot %d drew term %d, outside [0, %d)", n, i, h.Len())
			case !t.CoversRow(i, s):
				return fmt.Errorf("shot %d drew term %d (%s), which its setting %s does not cover", n, i, inputcap.Clip(h.Pauli(i).String()), inputcap.Clip(s.String()))
			}
			n++
		}
	}
	return nil
}

// Name returns the name of a strategy: its String method if it has one,
// otherwise its type name.
func Name(a Allocator) string {
	if s, ok := a.(fmt.Stringer); ok {
		return s.String()
	}
	t := reflect.TypeOf(a)
	for t != nil && t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	if t == nil {
		return "<nil>"
	}
	return t.Name()
}

// checkFinite returns an error wrapping ErrNonFinite naming the first term
// whose coefficient is NaN or infinite.
func checkFinite(coef []float64, h *hamiltonian.Hamiltonian) error {
	for i, c := range coef {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			term := fmt.Sprint(i)
			if h != nil {
				term = fmt.Sprintf("%d (%s)", i, h.Pauli(i))
			}
			return fmt.Errorf("%w: term %s has coefficient %v", ErrNonFinite, term, c)
		}
	}
	return nil
}

// settingOf converts letters to a setting, with an error naming the first
// qubit that is not X, Y or Z.
func settingOf(letters []pauli.Letter) (pauli.Setting, error) {
	for q, l := range letters {
		if l == pauli.I || l > pauli.Z {
			return pauli.Setting{}, fmt.Errorf("qubit %d has letter %v, want X, Y or Z", q, l)
		}
	}
	return pauli.NewSetting(pauli.FromLetters(letters))
}

// countCover adds to cover[i] the shots of every distinct setting that
// covers row i of t.
func countCover(cover []int, t *pauli.Table, settings []pauli.Setting, shots []int) {
	distinct, total := pauli.MergeSettings(settings, shots)
	if len(distinct) < 16 {
		splitCounts(cover, len(distinct), t.Len(), func() func(int, []int) {
			var idx []int
			return func(j int, dst []int) {
				idx = t.Covered(idx[:0], distinct[j])
				for _, i := range idx {
					dst[i] += total[j]
				}
			}
		})
		return
	}
	// Many settings: bucket the terms once so that each setting reads only
	// the buckets it can cover. The settings are split among cores
	// (splitCounts), each with its own copy of the index's scratch.
	ci := localIndexFor(t, distinct)
	xp := xPartsFor(t, distinct)
	splitCounts(cover, len(distinct), t.Len(), func() func(int, []int) {
		var c *coverindex.Index
		if ci != nil {
			c = ci.Clone()
		}
		var xq *xQuery
		if xp != nil {
			xq = xp.query()
		}
		var idx []int32
		var rows []int
		return func(j int, dst []int) {
			idx, rows = addCover(dst, t, c, xq, distinct[j], total[j], idx, rows)
		}
	})
}

// localIndexFor returns the cover index of t if some of the settings are
// local, otherwise nil.
func localIndexFor(t *pauli.Table, settings []pauli.Setting) *coverindex.Index {
	for _, s := range settings {
		if s.IsLocal() {
			return coverindex.New(t.Qubits(), t.Len(), t.Words)
		}
	}
	return nil
}

// xPartsFor returns the X-part buckets of t if some of the settings are
// entangled and the buckets pay for a query's elimination (n² ≤ rows),
// otherwise nil.
func xPartsFor(t *pauli.Table, settings []pauli.Setting) *xParts {
	if n := t.Qubits(); n*n > t.Len() {
		return nil
	}
	for _, s := range settings {
		if !s.IsLocal() {
			return newXParts(t.Qubits(), t.Len(), t.Words)
		}
	}
	return nil
}

// addCover adds n to cover[i] for every row i of t that setting s covers,
// through the cover index ci for a local setting. An entangled one has no
// letters to bucket by: it goes through the X-part buckets of xq if not nil
// (see xParts), otherwise row by row. idx and rows are scratch space,
// returned for reuse.
func addCover(cover []int, t *pauli.Table, ci *coverindex.Index, xq *xQuery, s pauli.Setting, n int, idx []int32, rows []int) ([]int32, []int) {
	if !s.IsLocal() {
		if xq != nil {
			var ok bool
			covers := func(r int32) bool { return t.CoversRow(int(r), s) }
			if idx, ok = xq.appendCovered(idx[:0], s, covers); ok {
				for _, i := range idx {
					cover[i] += n
				}
				return idx, rows
			}
		}
		rows = t.Covered(rows[:0], s)
		for _, i := range rows {
			cover[i] += n
		}
		return idx, rows
	}
	x, z := s.Words()
	idx = ci.AppendCovered(idx[:0], x, z)
	for _, i := range idx {
		cover[i] += n
	}
	return idx, rows
}

// cloneSplit returns a deep copy of s (nil for an empty split), so that the
// plan does not share slices with the strategy.
func cloneSplit(s hamiltonian.Split) hamiltonian.Split {
	if len(s) == 0 {
		return nil
	}
	out := make(hamiltonian.Split, len(s))
	for g, gr := range s {
		out[g] = hamiltonian.SplitGroup{Setting: gr.Setting, Terms: slices.Clone(gr.Terms), Weights: slices.Clone(gr.Weights)}
	}
	return out
}
