package guarantee

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/internal/shotsum"
	"github.com/shotplan/shotplan/pauli"
)

// TestEmpiricalStreamEntangled is TestEmpiricalStreamMatches for plans with
// entangled settings: sorted-gc and greedy-gc on H2 (Jordan–Wigner) and on
// a random 6-qubit Hamiltonian, overlap-gc (with its coefficient split) on
// the latter, and sorted-gc's settings of H2 mixed with local ones.
// EmpiricalStream of a stream against Empirical on the same shots (random
// outcomes, two settings cut to one shot, shuffled), with and without
// terms left out: every form equal to the last bit but the residual one,
// which checkResidual holds to the rounding bound of MATH.md §4.10; and,
// for the plans without a split, the same bounds from a stream whose local
// lists are not stored (shotsum.MaxStored).
func TestEmpiricalStreamEntangled(t *testing.T) {
	h2, err := hamiltoniantest.Molecule(hamiltoniantest.H2, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	six, err := hamiltonian.RandomLocal(6, 40, 3, 8)
	if err != nil {
		t.Fatal(err)
	}
	type plan struct {
		name     string
		h        *hamiltonian.Hamiltonian
		settings []pauli.Setting
		shots    []int
		split    hamiltonian.Split
	}
	var plans []plan
	for _, c := range []struct {
		name, strategy string
		h              *hamiltonian.Hamiltonian
	}{
		{"H2", "sorted-gc", h2}, {"H2", "greedy-gc", h2}, {"six", "sorted-gc", six},
		{"six", "greedy-gc", six}, {"six", "overlap-gc", six},
	} {
		a, err := allocate.ByName(c.strategy, 0)
		if err != nil {
			t.Fatal(err)
		}
		p, err := allocate.Run(c.h, 400, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		settings, shots := p.Distinct()
		plans = append(plans, plan{c.name + "/" + c.strategy, c.h, settings, shots, p.Split})
	}
	mixed := plans[0]
	mixed.name = "H2/mixed"
	mixed.settings = append(append([]pauli.Setting(nil), mixed.settings...), pauli.MustParseSetting("ZZZZ"), pauli.MustParseSetting("XYZX"))
	mixed.shots = append(append([]int(nil), mixed.shots...), 70, 1)
	plans = append(plans, mixed)
	rng := rand.New(rand.NewPCG(51, 52))
	for _, p := range plans {
		entangled := false
		for _, s := range p.settings {
			entangled = entangled || !s.IsLocal()
		}
		if !entangled {
			t.Fatalf("%s: the plan has no entangled setting; the test needs one", p.name)
		}
		if p.name == "six/overlap-gc" && len(p.split) == 0 {
			t.Fatalf("%s: the plan has no split", p.name)
		}
		n := p.h.Qubits()
		shots := append([]int(nil), p.shots...)
		if len(shots) > 3 {
			shots[0], shots[2] = 1, 1
		}
		var order []int
		for k, c := range shots {
			for range c {
				order = append(order, k)
			}
		}
		rng.Shuffle(len(order), func(i, j int) { order[i], order[j] = order[j], order[i] })
		outs := make([]pauli.Bits, len(order))
		for j := range outs {
			outs[j] = pauli.Bits{rng.Uint64() & (1<<n - 1)}
		}
		for _, exclude := range [][]bool{nil, make([]bool, p.h.Len())} {
			for i := 1; i < len(exclude); i += 3 {
				exclude[i] = true
			}
			name := fmt.Sprintf("%s, exclude %v", p.name, exclude != nil)
			feed := func() (*estimate.Records, *estimate.Stream) {
				rec := estimate.NewRecords(n)
				st, err := estimate.NewStream(p.h, p.settings, shots, &estimate.Options{Split: p.split, Exclude: exclude})
				if err != nil {
					t.Fatal(err)
				}
				for j, k := range order {
					if err := rec.Add(p.settings[k], outs[j]); err != nil {
						t.Fatal(err)
					}
					if err := st.Add(p.settings[k], outs[j]); err != nil {
						t.Fatal(err)
					}
				}
				return rec, st
			}
			rec, st := feed()
			var unstored *estimate.Stream
			if len(p.split) == 0 {
				func() {
					defer func(m int) { shotsum.MaxStored = m }(shotsum.MaxStored)
					shotsum.MaxStored = 10
					_, unstored = feed()
				}()
			}
			for _, form := range []EmpiricalForm{Pooled, PerGroupAMS, PerGroupMP, Residual} {
				want, err := Empirical(p.h, rec, 0.05, &EmpiricalOptions{Form: form, Exclude: exclude, Split: p.split})
				if err != nil {
					t.Fatal(err)
				}
				got, err := EmpiricalStream(st, 0.05, &EmpiricalOptions{Form: form})
				if err != nil {
					t.Fatal(err)
				}
				if unstored != nil {
					re, err := EmpiricalStream(unstored, 0.05, &EmpiricalOptions{Form: form})
					if err != nil {
						t.Fatal(err)
					}
					sameBound(t, fmt.Sprintf("%s %v, lists not stored", name, form), re, got)
				}
				if form != Residual {
					sameBound(t, fmt.Sprintf("%s %v", name, form), got, want)
					continue
				}
				r := *got
				r.Radius, r.Bound = want.Radius, want.Bound
				sameBound(t, fmt.Sprintf("%s %v (all but the radius)", name, form), &r, want)
				checkResidual(t, name, p.h, rec, st, exclude, p.split, got, want)
			}
		}
	}
}
