package fermion

import "testing"

// TestExpandAllocs pins the hot path: expanding a product whose strings are
// already in the accumulator allocates nothing, for one-word (≤ 64 modes)
// and multi-word strings.
func TestExpandAllocs(t *testing.T) {
	for _, n := range []int{50, 130} {
		m := &mapper{accumulator: newAccumulator(n), tab: newLadderTable(BravyiKitaev, n)}
		ops := []Op{Create(1), Create(n - 1), Annihilate(n / 2), Annihilate(0)}
		m.addGroup(0.3, 0.3, ops)
		if got := testing.AllocsPerRun(100, func() { m.addGroup(0.3, 0.3, ops) }); got != 0 {
			t.Errorf("n=%d: addGroup allocates %v times per product, want 0", n, got)
		}
		g := newGroups(4)
		g.add(0.5, ops)
		if got := testing.AllocsPerRun(100, func() { g.add(0.5, ops) }); got != 0 {
			t.Errorf("n=%d: grouping a known product allocates %v times, want 0", n, got)
		}
	}
}
