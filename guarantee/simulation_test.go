package guarantee

import (
	"flag"
	"fmt"
	"io"
	"math"
	"math/bits"
	"math/rand/v2"
	"slices"
	"sort"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

var reportPath = flag.String("report", "", "write the coverage table of TestCoverage as Markdown to this file")

// coverageCase is a Hamiltonian, a state and its exact energy.
type coverageCase struct {
	name   string
	h      *hamiltonian.Hamiltonian
	state  []complex128
	energy float64
}

func coverageCases(t *testing.T) []coverageCase {
	var cs []coverageCase

	// H2 (Jordan–Wigner) ground state; its energy is the full-CI value
	// −1.137270174657 hartree of h2_qubit_hamiltonians.json.
	h2 := h2JW(t)
	ev, err := hamiltonian.GroundState(h2, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(ev.Energy-(-1.137270174657)) > 1e-8 {
		t.Fatalf("H2 ground energy %.12f, want −1.137270174657 (h2_qubit_hamiltonians.json)", ev.Energy)
	}
	cs = append(cs, coverageCase{"H2 (JW) ground state", h2, ev.State, ev.Energy})

	// 10-qubit transverse-field Ising ring at J = h = 1; ground energy
	// −2/sin(π/(2N)) (REFERENCE_VALUES.md, Pfeuty 1970).
	tfim, err := hamiltonian.TransverseFieldIsing(hamiltonian.Ring(10), 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	ev, err = hamiltonian.GroundState(tfim, nil)
	if err != nil {
		t.Fatal(err)
	}
	if want := -2 / math.Sin(math.Pi/20); math.Abs(ev.Energy-want) > 1e-8 {
		t.Fatalf("TFIM ground energy %.12f, want −2/sin(π/20) = %.12f", ev.Energy, want)
	}
	cs = append(cs, coverageCase{"TFIM ring, 10 qubits, ground state", tfim, ev.State, ev.Energy})

	// A random 3-local Hamiltonian on 8 qubits in a random state (complex
	// Gaussian amplitudes, normalised).
	rl, err := hamiltonian.RandomLocal(8, 60, 3, 17)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(17, 18))
	psi := make([]complex128, 1<<8)
	norm := 0.0
	for a := range psi {
		psi[a] = complex(rng.NormFloat64(), rng.NormFloat64())
		norm += real(psi[a])*real(psi[a]) + imag(psi[a])*imag(psi[a])
	}
	for a := range psi {
		psi[a] /= complex(math.Sqrt(norm), 0)
	}
	cs = append(cs, coverageCase{"random 3-local, 8 qubits, random state", rl, psi, rl.Energy(psi)})
	return cs
}

// sampler draws the shots of a fixed plan cheaply: for each distinct
// setting it keeps the Born distribution (from the simulator) and the
// per-shot value w(b) = Σ_{i◁Q} (h_i/N_i) s_i(b) of every outcome b, so a
// repetition is one table lookup per shot.
type sampler struct {
	cum    [][]float64 // cumulative outcome probabilities per setting
	w      [][]float64 // w of every outcome per setting
	mult   []int
	half   []float64
	offset float64
}

func newSampler(t *testing.T, h *hamiltonian.Hamiltonian, state []complex128, c *coverage) *sampler {
	sim, err := estimate.NewSimulator(state, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	sp := &sampler{offset: h.Offset(), mult: c.mult}
	tab := h.Table()
	for q, s := range c.settings {
		p := sim.Probabilities(nil, s)
		cum := make([]float64, len(p))
		acc := 0.0
		for k, v := range p {
			acc += v
			cum[k] = acc
		}
		w := make([]float64, len(p))
		half := 0.0
		for _, i := range c.terms(q) {
			x, z := tab.Words(int(i))
			supp := x[0] | z[0]
			coef := h.Coeff(int(i)) / float64(c.cover[i])
			half += math.Abs(coef)
			for b := range w {
				w[b] += coef * float64(1-2*(bits.OnesCount64(uint64(b)&supp)&1))
			}
		}
		sp.cum, sp.w = append(sp.cum, cum), append(sp.w, w)
		sp.half = append(sp.half, half)
	}
	return sp
}

// draw returns an outcome index of setting q.
func (sp *sampler) draw(q int, rng *rand.Rand) int {
	cum := sp.cum[q]
	u := rng.Float64() * cum[len(cum)-1]
	k := sort.Search(len(cum), func(j int) bool { return cum[j] > u })
	return min(k, len(cum)-1)
}

// repetition draws one run of the plan and returns the estimate and the
// groups' statistics; outcomes, if not nil, receives every drawn outcome.
func (sp *sampler) repetition(rng *rand.Rand, outcomes func(q, b int)) (float64, []*groupStat) {
	e := sp.offset
	gs := make([]*groupStat, len(sp.w))
	for q := range sp.w {
		g := &groupStat{weight: float64(sp.mult[q]), half: sp.half[q]}
		for range sp.mult[q] {
			b := sp.draw(q, rng)
			if outcomes != nil {
				outcomes(q, b)
			}
			g.add(sp.w[q][b])
			e += sp.w[q][b]
		}
		gs[q] = g
	}
	return e, gs
}

func quantile(x []float64, p float64) float64 {
	s := slices.Clone(x)
	slices.Sort(s)
	return s[int(math.Ceil(p*float64(len(s))))-1]
}

// TestCoverage checks by simulation that the bounds hold as often as they
// claim: 2000 seeded repetitions (200 under -short) of a 500-shot greedy
// plan at δ = 0.1, for each case. The fraction of repetitions with
// |Ê − E| above the bound must be at most δ + 3·sqrt(δ(1−δ)/reps), a
// three-sigma binomial allowance: a correct bound fails this check with
// probability about 0.1% per bound and case (normal approximation to the
// binomial). Every bound here is conservative, so the observed fractions
// are far below δ.
func TestCoverage(t *testing.T) {
	reps := 2000
	if testing.Short() {
		reps = 200
	}
	const delta, budget = 0.1, 500
	allow := delta + 3*math.Sqrt(delta*(1-delta)/float64(reps))
	forms := []EmpiricalForm{PerGroupAMS, PerGroupMP, Pooled}

	var report strings.Builder
	fmt.Fprintf(&report, "| case | terms | settings | ε a-priori (§3.1) | q₀.₉ of \\|Ê−E\\| | ε / q₀.₉ | fails | EB AMS median / q₀.₉ | fails | EB MP median / q₀.₉ | fails | pooled median / q₀.₉ | fails | approx. normal (not a guarantee) fails |\n")
	fmt.Fprintf(&report, "|---|---|---|---|---|---|---|---|---|---|---|---|---|---|\n")
	for ci, cc := range coverageCases(t) {
		plan, err := allocate.Run(cc.h, budget, &allocate.Greedy{}, nil)
		if err != nil {
			t.Fatal(err)
		}
		cert, err := CertifyPlan(cc.h, plan, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		c, err := newCoverage(cc.h, plan.Settings, plan.Shots)
		if err != nil {
			t.Fatal(err)
		}
		sp := newSampler(t, cc.h, cc.state, c)
		errs := make([]float64, reps)
		eb := make([][]float64, len(forms))
		ebFail := make([]int, len(forms))
		priorFail, approxFail := 0, 0
		for r := range reps {
			rng := rand.New(rand.NewPCG(uint64(ci), uint64(r)))
			var rec *estimate.Records
			var record func(q, b int)
			if r == 0 {
				// The first repetition also goes through the public API:
				// records, estimate.Grouped and Empirical must agree with
				// the table-driven path.
				rec = estimate.NewRecords(cc.h.Qubits())
				record = func(q, b int) {
					bb := pauli.NewBits(cc.h.Qubits())
					bb[0] = uint64(b)
					if err := rec.Add(c.settings[q], bb); err != nil {
						t.Fatal(err)
					}
				}
			}
			e, gs := sp.repetition(rng, record)
			errs[r] = math.Abs(e - cc.energy)
			if errs[r] > cert.Bound {
				priorFail++
			}
			for f, form := range forms {
				rad, _ := radius(gs, delta, form, nil)
				total := rad + cert.Bias
				eb[f] = append(eb[f], total)
				if errs[r] > total {
					ebFail[f]++
				}
				if r == 0 {
					b, err := Empirical(cc.h, rec, delta, &EmpiricalOptions{Form: form})
					if err != nil {
						t.Fatal(err)
					}
					if !near(b.Energy, e, 1e-12) || !near(b.Bound, total, 1e-12) {
						t.Errorf("%s: Empirical(%v) = %.15g ± %.15g, table-driven %.15g ± %.15g", cc.name, form, b.Energy, b.Bound, e, total)
					}
				}
			}
			if errs[r] > approxRadius(gs, delta)+cert.Bias {
				approxFail++
			}
			if r == 0 {
				g, err := estimate.Grouped(cc.h, rec, nil)
				if err != nil {
					t.Fatal(err)
				}
				if !near(g.Energy, e, 1e-12) {
					t.Errorf("%s: estimate.Grouped = %.15g, table-driven estimate %.15g", cc.name, g.Energy, e)
				}
			}
		}
		check := func(what string, fails int) {
			if frac := float64(fails) / float64(reps); frac > allow {
				t.Errorf("%s: %s exceeded in %d of %d repetitions (%.3f), more than δ + 3σ = %.3f", cc.name, what, fails, reps, frac, allow)
			}
		}
		check("a-priori certificate", priorFail)
		for f, form := range forms {
			check(form.String(), ebFail[f])
		}
		q := quantile(errs, 1-delta)
		fmt.Fprintf(&report, "| %s | %d | %d | %.4g | %.4g | %.1f | %d | %.1f | %d | %.1f | %d | %.1f | %d | %d |\n",
			cc.name, cc.h.Len(), cert.Settings, cert.Bound, q, cert.Bound/q, priorFail,
			quantile(eb[0], 0.5)/q, ebFail[0], quantile(eb[1], 0.5)/q, ebFail[1], quantile(eb[2], 0.5)/q, ebFail[2], approxFail)
	}
	fmt.Fprintf(&report, "\n%d repetitions per case, δ = %g, 500-shot greedy plan; allowed failures %d (δ + 3σ).\n", reps, delta, int(allow*float64(reps)))
	t.Log("\n" + report.String())
	if *reportPath != "" {
		if err := atomicfile.Write(*reportPath, func(w io.Writer) error {
			_, err := io.WriteString(w, report.String())
			return err
		}); err != nil {
			t.Fatal(err)
		}
	}
}
