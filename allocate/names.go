package allocate

import (
	"fmt"
	"slices"
	"strings"
)

// strategies maps the short name of every built-in strategy to a
// constructor taking the seed.
var strategies = map[string]func(seed uint64) Allocator{
	"greedy":     func(uint64) Allocator { return &Greedy{} },
	"derand":     func(uint64) Allocator { return &Derandomized{} },
	"random":     func(seed uint64) Allocator { return &Random{Seed: seed} },
	"biased":     func(seed uint64) Allocator { return &Biased{Seed: seed} },
	"sorted":     func(uint64) Allocator { return &Sorted{} },
	"importance": func(seed uint64) Allocator { return &Importance{Seed: seed} },
	"fixed":      func(uint64) Allocator { return &Fixed{} },
	"sorted-gc":  func(uint64) Allocator { return &SortedGC{} },
	"color-gc":   func(uint64) Allocator { return &ColorGC{} },
	"greedy-gc":  func(uint64) Allocator { return &GreedyGC{} },
	"overlap":    func(uint64) Allocator { return &Overlap{} },
	"overlap-gc": func(uint64) Allocator { return &OverlapGC{} },
}

// Names returns the short names of the built-in strategies, sorted:
// "biased", "color-gc", "derand", "fixed", "greedy", "greedy-gc",
// "importance", "overlap", "overlap-gc", "random", "sorted", "sorted-gc".
// The "-gc" strategies group by general commutation and produce entangled
// settings; "overlap" and "overlap-gc" split coefficients among
// overlapping groups ([Plan].Split).
func Names() []string {
	names := make([]string, 0, len(strategies))
	for k := range strategies {
		names = append(names, k)
	}
	slices.Sort(names)
	return names
}

// ByName returns a new built-in strategy by its short name (see [Names]),
// with its default knobs; seed seeds the strategies that draw at random and
// is ignored by the deterministic ones. "fixed" returns a *[Fixed] with no
// settings, which the caller fills in before running it. Names match in any
// case ("Greedy" is "greedy"), as encoding names do. An unknown name is an
// error that lists the known ones.
func ByName(name string, seed uint64) (Allocator, error) {
	mk, ok := strategies[strings.ToLower(name)]
	if !ok {
		return nil, fmt.Errorf("allocate: unknown strategy %q (known: %s)", name, strings.Join(Names(), ", "))
	}
	return mk(seed), nil
}
