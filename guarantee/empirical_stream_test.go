package guarantee

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/shotsum"
	"github.com/shotplan/shotplan/pauli"
)

// streamFixture is a seeded plan (one setting of 150 shots, a few of 2–41,
// the rest of one shot), its shots in random order as records and as a
// stream.
func streamFixture(t *testing.T, qubits, terms, nset int, seed uint64, opts *estimate.Options) (*hamiltonian.Hamiltonian, *estimate.Records, *estimate.Stream) {
	t.Helper()
	h, err := hamiltonian.RandomLocal(qubits, terms, 3, seed)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 78))
	var settings []pauli.Setting
	var shots, order []int
	letters := make([]byte, qubits)
	for k := range nset {
		for q := range letters {
			letters[q] = "XYZ"[rng.IntN(3)]
		}
		settings = append(settings, pauli.MustParseSetting(string(letters)))
		n := 1
		switch {
		case k == 0:
			n = 150
		case k < 8:
			n = 2 + rng.IntN(40)
		}
		shots = append(shots, n)
		for range n {
			order = append(order, k)
		}
	}
	rng.Shuffle(len(order), func(i, j int) { order[i], order[j] = order[j], order[i] })
	rec := estimate.NewRecords(qubits)
	st, err := estimate.NewStream(h, settings, shots, opts)
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range order {
		b := pauli.NewBits(qubits)
		for q := range qubits {
			if rng.Float64() < 0.3 {
				b[q>>6] |= 1 << (q & 63)
			}
		}
		if err := rec.Add(settings[k], b); err != nil {
			t.Fatal(err)
		}
		if err := st.Add(settings[k], b); err != nil {
			t.Fatal(err)
		}
	}
	return h, rec, st
}

// TestEmpiricalStreamMatches checks EmpiricalStream against Empirical on
// the same shots: equal to the last bit for the pooled and per-group forms
// and the approximate radius; for the residual form the folds' sums of
// squared residuals within the rounding bound of MATH.md §4.10, and the
// radius within the radii at the ends of that interval (the radius grows
// with each sum).
func TestEmpiricalStreamMatches(t *testing.T) {
	for _, tc := range []struct {
		qubits, terms int
		seed          uint64
		exclude       bool
	}{{8, 60, 1, false}, {8, 60, 2, true}, {70, 300, 3, false}} {
		var eo *estimate.Options
		var exclude []bool
		if tc.exclude {
			exclude = make([]bool, tc.terms)
			for i := 0; i < tc.terms; i += 4 {
				exclude[i] = true
			}
			eo = &estimate.Options{Exclude: exclude}
		}
		h, rec, st := streamFixture(t, tc.qubits, tc.terms, 40, tc.seed, eo)
		var stu *estimate.Stream
		func() {
			defer func(m int) { shotsum.MaxStored = m }(shotsum.MaxStored)
			shotsum.MaxStored = 10
			_, _, stu = streamFixture(t, tc.qubits, tc.terms, 40, tc.seed, eo)
		}()
		for _, form := range []EmpiricalForm{Pooled, PerGroupAMS, PerGroupMP, Residual} {
			want, err := Empirical(h, rec, 0.05, &EmpiricalOptions{Form: form, Exclude: exclude})
			if err != nil {
				t.Fatal(err)
			}
			got, err := EmpiricalStream(st, 0.05, &EmpiricalOptions{Form: form})
			if err != nil {
				t.Fatal(err)
			}
			if stu != nil {
				// The same shots with the lists not stored: bit-identical.
				re, err := EmpiricalStream(stu, 0.05, &EmpiricalOptions{Form: form})
				if err != nil {
					t.Fatal(err)
				}
				sameBound(t, fmt.Sprintf("case %+v %v, lists not stored", tc, form), re, got)
			}
			if got.Energy != want.Energy || got.Bias != want.Bias || got.ApproxRadius != want.ApproxRadius || got.Shots != want.Shots || len(got.Groups) != len(want.Groups) {
				t.Fatalf("case %+v %v: stream %+v, Empirical %+v", tc, form, got, want)
			}
			for k := range want.Groups {
				g, w := got.Groups[k], want.Groups[k]
				if !g.Setting.Equal(w.Setting) || g.Samples != w.Samples || g.Mean != w.Mean || g.Variance != w.Variance || g.Half != w.Half || g.Radius != w.Radius || g.Delta != w.Delta {
					t.Fatalf("case %+v %v: group %d: stream %+v, Empirical %+v", tc, form, k, g, w)
				}
			}
			if form != Residual {
				if got.Radius != want.Radius {
					t.Errorf("case %+v %v: radius %v, Empirical %v", tc, form, got.Radius, want.Radius)
				}
				continue
			}
			checkResidual(t, fmt.Sprintf("case %+v", tc), h, rec, st, exclude, nil, got, want)
		}
	}
}

// TestEmpiricalLettersPath checks Empirical past the storage cap, where it
// visits the cover pairs term by term through the transposed settings on
// GOMAXPROCS goroutines (blocks of 64 groups here, so that 300 groups are
// shared), against the stored path: bit-identical for every form, on one
// goroutine and on two.
func TestEmpiricalLettersPath(t *testing.T) {
	defer func(c int) { letterChunk = c }(letterChunk)
	letterChunk = 1
	for _, tc := range []struct {
		qubits, terms int
		seed          uint64
		exclude       bool
	}{{8, 60, 1, false}, {8, 60, 2, true}, {70, 300, 3, false}} {
		var exclude []bool
		if tc.exclude {
			exclude = make([]bool, tc.terms)
			for i := 0; i < tc.terms; i += 4 {
				exclude[i] = true
			}
		}
		h, rec, _ := streamFixture(t, tc.qubits, tc.terms, 300, tc.seed, nil)
		for _, form := range []EmpiricalForm{Pooled, PerGroupAMS, Residual} {
			opts := &EmpiricalOptions{Form: form, Exclude: exclude}
			want, err := Empirical(h, rec, 0.05, opts)
			if err != nil {
				t.Fatal(err)
			}
			for _, procs := range []int{1, 2} {
				old := runtime.GOMAXPROCS(procs)
				got, err := empirical(h, rec, 0.05, opts, 10)
				runtime.GOMAXPROCS(old)
				if err != nil {
					t.Fatal(err)
				}
				sameBound(t, fmt.Sprintf("case %+v %v GOMAXPROCS=%d", tc, form, procs), got, want)
			}
		}
	}
}

// checkResidual checks the Residual form of EmpiricalStream (got) against
// Empirical (want) on the same shots: the leave-one-out and worst-case
// parts equal to the last bit, the folds' sums of squared residuals
// within the rounding bound of MATH.md §4.10, and both radii within the
// radii at the ends of that interval (the radius grows with each sum).
func checkResidual(t *testing.T, name string, h *hamiltonian.Hamiltonian, rec *estimate.Records, st *estimate.Stream, exclude []bool, split hamiltonian.Split, got, want *DataBound) {
	t.Helper()
	const u = 0x1p-53
	gamma := func(k float64) float64 { return k * u / (1 - k*u) }
	tc := name
	settings := make([]pauli.Setting, rec.Groups())
	shots := make([]int, rec.Groups())
	for g := range settings {
		settings[g], shots[g] = rec.Setting(g), rec.GroupLen(g)
	}
	c, err := newCoverage(h, settings, shots)
	if err != nil {
		t.Fatal(err)
	}
	if err := c.setSplit(split); err != nil {
		t.Fatal(err)
	}
	coef, _ := estimatorWeights(h, c.cover, 1, exclude)
	gs, rowsOf := prepareGroups(c, coef)
	for g, gr := range gs {
		gr.t = shots[g]
		_, _, gr.half = rowsOf(g)
	}
	mem := residuals(h.Table(), gs, rowsOf, coef, rec.Outcome)
	sm := st.Sums()
	str := streamResiduals(sm)
	if str.loo != mem.loo || str.big != mem.big || str.worst != mem.worst {
		t.Errorf("%s: stream loo %v big %v worst %v, in memory %v %v %v", tc, str.loo, str.big, str.worst, mem.loo, mem.big, mem.worst)
	}
	lo, hi := mem, mem
	b := 0.0
	for k := range residualFolds {
		tol, mag, nk := 0.0, 0.0, 0.0
		for _, gi := range sm.Order {
			g := sm.Groups[gi]
			tk, h2 := float64(g.FoldT[k]), g.Half*g.Half
			tol += tk * h2 * (16*gamma(tk+4) + 32*gamma(float64(len(g.Kept))+4))
			mag += 16 * tk * h2
			nk += tk
			b = max(b, 2*g.Half)
		}
		tol += gamma(nk+float64(len(sm.Order))) * mag
		if d := math.Abs(str.sq[k] - mem.sq[k]); d > tol {
			t.Errorf("%s: fold %d: stream Σ residual² %v, in memory %v: differ by %g > %g", tc, k, str.sq[k], mem.sq[k], d, tol)
		}
		lo.sq[k] = max(0, mem.sq[k]-tol)
		hi.sq[k] = mem.sq[k] + tol
	}
	if r0, r1 := residualRadius(lo, b, 0.05), residualRadius(hi, b, 0.05); !(got.Radius >= r0 && got.Radius <= r1) || !(want.Radius >= r0 && want.Radius <= r1) {
		t.Errorf("%s: residual radius %v (stream), %v (in memory), bounds [%v, %v]", tc, got.Radius, want.Radius, r0, r1)
	}
}

// TestEmpiricalStreamSplit is TestEmpiricalStreamMatches for a plan with a
// coefficient split (the overlap strategy's): EmpiricalStream of a stream
// given the split against Empirical with the same split, on the same shots
// (random outcomes, two settings measured once), with and without terms
// left out; and the stream's estimate equals DataBound.Energy's source,
// Grouped with the split, as estimate's tests check.
func TestEmpiricalStreamSplit(t *testing.T) {
	h, err := hamiltonian.RandomLocal(6, 40, 2, 4)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 300, &allocate.Overlap{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Split) == 0 {
		t.Fatal("the overlap plan has no split; the test needs one")
	}
	settings, shots := p.Distinct()
	// The split must differ from the implicit weights m_g/N_i somewhere.
	differs := false
	for _, gr := range p.Split {
		for k, i := range gr.Terms {
			for j, s := range settings {
				if s.Equal(gr.Setting) && math.Abs(gr.Weights[k]-float64(shots[j])/float64(p.Cover[i])) > 1e-3 {
					differs = true
				}
			}
		}
	}
	if !differs {
		t.Fatal("the split is the implicit one; the test needs a real split")
	}
	shots[0], shots[1] = 1, 1
	rng := rand.New(rand.NewPCG(4, 5))
	var order []int
	for k, n := range shots {
		for range n {
			order = append(order, k)
		}
	}
	rng.Shuffle(len(order), func(i, j int) { order[i], order[j] = order[j], order[i] })
	outs := make([]pauli.Bits, len(order))
	for j := range outs {
		outs[j] = pauli.Bits{rng.Uint64() & 63}
	}
	for _, exclude := range [][]bool{nil, make([]bool, h.Len())} {
		if exclude != nil {
			for i := 0; i < h.Len(); i += 3 {
				exclude[i] = true
			}
		}
		rec := estimate.NewRecords(6)
		st, err := estimate.NewStream(h, settings, shots, &estimate.Options{Split: p.Split, Exclude: exclude})
		if err != nil {
			t.Fatal(err)
		}
		for j, k := range order {
			if err := rec.Add(settings[k], outs[j]); err != nil {
				t.Fatal(err)
			}
			if err := st.Add(settings[k], outs[j]); err != nil {
				t.Fatal(err)
			}
		}
		name := fmt.Sprintf("exclude %v", exclude != nil)
		for _, form := range []EmpiricalForm{Pooled, PerGroupAMS, PerGroupMP, Residual} {
			want, err := Empirical(h, rec, 0.05, &EmpiricalOptions{Form: form, Exclude: exclude, Split: p.Split})
			if err != nil {
				t.Fatal(err)
			}
			got, err := EmpiricalStream(st, 0.05, &EmpiricalOptions{Form: form})
			if err != nil {
				t.Fatal(err)
			}
			if got.Energy != want.Energy || got.Bias != want.Bias || got.ApproxRadius != want.ApproxRadius || got.Shots != want.Shots || len(got.Groups) != len(want.Groups) {
				t.Fatalf("%s %v: stream %+v, Empirical %+v", name, form, got, want)
			}
			for k := range want.Groups {
				g, w := got.Groups[k], want.Groups[k]
				if !g.Setting.Equal(w.Setting) || g.Samples != w.Samples || g.Mean != w.Mean || g.Variance != w.Variance || g.Half != w.Half || g.Radius != w.Radius || g.Delta != w.Delta {
					t.Fatalf("%s %v: group %d: stream %+v, Empirical %+v", name, form, k, g, w)
				}
			}
			if form != Residual {
				if got.Radius != want.Radius {
					t.Errorf("%s %v: radius %v, Empirical %v", name, form, got.Radius, want.Radius)
				}
				continue
			}
			checkResidual(t, name, h, rec, st, exclude, p.Split, got, want)
		}
		if _, err := EmpiricalStream(st, 0.05, &EmpiricalOptions{Split: p.Split}); err == nil {
			t.Errorf("%s: EmpiricalStream took a split besides the stream's", name)
		}
	}
}
