package guarantee

import (
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

// TestEmpiricalSharedRows checks that the data bounds, which read every
// group's covered terms from the coverage's shared lists (stored or
// rescanned), are bit-identical to bounds from per-group copies of the
// covered terms found by Table.Covered (every term tested against the
// setting, MATH.md §1), the reference here, on a random plan with one- and
// many-shot groups and excluded terms, for every form.
func TestEmpiricalSharedRows(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	h := randomH(t, rng, 12, 300, 4)
	rec := estimate.NewRecords(h.Qubits())
	for range 60 {
		b := make([]byte, h.Qubits())
		for q := range b {
			b[q] = "XYZ"[rng.IntN(3)]
		}
		s := pauli.MustParseSetting(string(b))
		for range 1 + rng.IntN(4)*rng.IntN(2) {
			if err := rec.Add(s, pauli.Bits{rng.Uint64() & (1<<h.Qubits() - 1)}); err != nil {
				t.Fatal(err)
			}
		}
	}
	exclude := make([]bool, h.Len())
	for i := range exclude {
		exclude[i] = rng.IntN(10) == 0
	}
	settings := make([]pauli.Setting, rec.Groups())
	shots := make([]int, rec.Groups())
	for g := range settings {
		settings[g], shots[g] = rec.Setting(g), rec.GroupLen(g)
	}
	for _, form := range []EmpiricalForm{Pooled, PerGroupAMS, PerGroupMP, Residual} {
		got, err := Empirical(h, rec, 0.05, &EmpiricalOptions{Form: form, Exclude: exclude})
		if err != nil {
			t.Fatal(err)
		}
		// Reference: per-group copies from Table.Covered.
		c, err := newCoverage(h, settings, shots)
		if err != nil {
			t.Fatal(err)
		}
		coef, bias := estimatorWeights(h, c.cover, 1, exclude)
		rows := make([][]int, len(settings))
		cfs := make([][]float64, len(settings))
		gs := make([]*groupStat, len(settings))
		var buf []int8
		for g, s := range settings {
			for _, i := range h.Table().Covered(nil, s) {
				if coef[i] != 0 {
					rows[g] = append(rows[g], i)
					cfs[g] = append(cfs[g], coef[i])
				}
			}
			gs[g] = &groupStat{setting: s, weight: float64(shots[g])}
			for _, a := range cfs[g] {
				gs[g].half += max(a, -a)
			}
			buf = gs[g].addOutcomes(h.Table(), rows[g], cfs[g], func(j int) pauli.Bits { return rec.Outcome(g, j) }, shots[g], buf)
		}
		copies := func(q int) ([]int, []float64, float64) { return rows[q], cfs[q], gs[q].half }
		want := fixedBound(h, gs, copies, coef, bias, rec.Len(), 0.05, form, nil, rec.Outcome)
		sameBound(t, form.String()+", stored lists", got, want)

		// The same with lists rescanned instead of stored.
		c, err = newCoverageStoring(h, settings, shots, 10)
		if err != nil {
			t.Fatal(err)
		}
		if c.rows != nil {
			t.Fatal("coverage kept its lists past the limit")
		}
		gs2, rowsOf := prepareGroups(c, coef)
		for g, gr := range gs2 {
			gr.weight = float64(shots[g])
			r, cf, half := rowsOf(g)
			gr.half = half
			buf = gr.addOutcomes(h.Table(), r, cf, func(j int) pauli.Bits { return rec.Outcome(g, j) }, shots[g], buf)
		}
		sameBound(t, form.String()+", rescanned lists", fixedBound(h, gs2, rowsOf, coef, bias, rec.Len(), 0.05, form, nil, rec.Outcome), want)
	}
}

// sameBound reports every field of got that is not bit-identical to want.
func sameBound(t *testing.T, name string, got, want *DataBound) {
	t.Helper()
	if got.Energy != want.Energy || got.Shots != want.Shots || got.Radius != want.Radius || got.Bias != want.Bias ||
		got.Bound != want.Bound || got.ApproxRadius != want.ApproxRadius || len(got.Groups) != len(want.Groups) {
		t.Fatalf("%s: got %+v, want %+v", name, *got, *want)
	}
	for k, g := range got.Groups {
		w := want.Groups[k]
		if !g.Setting.Equal(w.Setting) || g.Samples != w.Samples || g.Weight != w.Weight || g.Mean != w.Mean ||
			g.Variance != w.Variance || g.Half != w.Half || g.Delta != w.Delta || g.Radius != w.Radius {
			t.Errorf("%s: group %d: got %+v, want %+v", name, k, g, w)
		}
	}
}
