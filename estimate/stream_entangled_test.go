package estimate_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/internal/shotsum"
	"github.com/shotplan/shotplan/pauli"
)

// bitExact compares two float64 values bit for bit.
var bitExact = cmp.Comparer(func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) })

// entangledCase is a plan with entangled settings (from a strategy, or
// mixed with local settings by hand) on a small Hamiltonian.
type entangledCase struct {
	name     string
	h        *hamiltonian.Hamiltonian
	settings []pauli.Setting
	shots    []int
	split    hamiltonian.Split
}

// gcPlanCase plans budget shots of h with the named strategy and checks
// that the plan has an entangled setting (and a split, for overlap-gc).
func gcPlanCase(t *testing.T, name, strategy string, h *hamiltonian.Hamiltonian, budget int) entangledCase {
	t.Helper()
	a, err := allocate.ByName(strategy, 0)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, budget, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	c := entangledCase{name: name + "/" + strategy, h: h, settings: settings, shots: shots, split: p.Split}
	if c.entangled() == 0 {
		t.Fatalf("%s: the plan has no entangled setting; the test needs one", c.name)
	}
	if strategy == "overlap-gc" && !splitDiffers(p, settings, shots) {
		t.Fatalf("%s: the split is the implicit one; the test needs a real split", c.name)
	}
	return c
}

func (c entangledCase) entangled() int {
	n := 0
	for k, s := range c.settings {
		if !s.IsLocal() && c.shots[k] > 0 {
			n++
		}
	}
	return n
}

// mixedCase is sorted-gc's plan of gcSplitHamiltonian with three local
// settings added, so that local and entangled settings share terms.
func mixedCase(t *testing.T) entangledCase {
	t.Helper()
	c := gcPlanCase(t, "gcsplit", "sorted-gc", gcSplitHamiltonian(t), 300)
	c.name = "mixed"
	added := 0
	for _, s := range []string{"ZZZZ", "XXYY", "YXZZ", "XXXX", "ZZXX", "YYYY"} {
		st := pauli.MustParseSetting(s)
		if slices.ContainsFunc(c.settings, st.Equal) || added == 3 {
			continue
		}
		c.settings = append(c.settings, st)
		c.shots = append(c.shots, []int{90, 1, 7}[added])
		added++
	}
	if added < 3 {
		t.Fatal("the mixed plan has fewer than three local settings added")
	}
	return c
}

// entangledCases are the plans of the tests below: sorted-gc, color-gc
// and greedy-gc on H2 (Jordan–Wigner), greedy-gc and overlap-gc on a
// random 6-qubit Hamiltonian, overlap-gc on gcSplitHamiltonian, sorted-gc
// on LiH (12 qubits, 630 terms), and a mixed plan.
func entangledCases(t *testing.T) []entangledCase {
	t.Helper()
	h2 := jwHamiltonian(t, hamiltoniantest.H2)
	six := randomSixQubit(t, rand.New(rand.NewPCG(21, 22)))
	cs := []entangledCase{
		gcPlanCase(t, "H2", "sorted-gc", h2, 400),
		gcPlanCase(t, "H2", "color-gc", h2, 400),
		gcPlanCase(t, "H2", "greedy-gc", h2, 400),
		gcPlanCase(t, "six", "greedy-gc", six, 500),
		gcPlanCase(t, "six", "overlap-gc", six, 500),
		gcPlanCase(t, "gcsplit", "overlap-gc", gcSplitHamiltonian(t), 400),
		mixedCase(t),
	}
	if !testing.Short() {
		cs = append(cs, gcPlanCase(t, "LiH", "sorted-gc", jwHamiltonian(t, hamiltoniantest.LiH), 3000))
	}
	return cs
}

// TestStreamEntangledMatchesGrouped checks the streamed estimate of plans
// with entangled settings against Grouped on the same shots in memory:
// every number equal to the last bit (energy, means, covers, standard
// error, bias), with the plan's coefficient split where it has one, with
// and without terms left out, shot by shot through Stream.Add and through
// the CSV reader (Stream.AddCSV), and past the storage cap of local lists
// (shotsum.MaxStored, plans without a split). The shots are simulated on
// a random state, two settings cut to one shot (their leave-one-out
// residuals) and the shots shuffled. Grouped itself is checked against a
// shot-by-shot reference of MATH.md §2 on entangled settings in
// TestGroupedEntangledReference.
func TestStreamEntangledMatchesGrouped(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	for _, c := range entangledCases(t) {
		n := c.h.Qubits()
		shots := append([]int(nil), c.shots...)
		if len(shots) > 3 {
			shots[0], shots[2] = 1, 1
		}
		sim, err := estimate.NewSimulator(randomState(rng, n), rng.Uint64(), nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(n)
		if err := sim.Run(c.settings, shots, rec); err != nil {
			t.Fatal(err)
		}
		var all []estimate.Shot
		for _, sh := range rec.Shots() {
			all = append(all, sh)
		}
		rng.Shuffle(len(all), func(i, j int) { all[i], all[j] = all[j], all[i] })
		shuffled := estimate.NewRecords(n)
		var csv strings.Builder
		csv.WriteString("setting,outcome\n")
		for _, sh := range all {
			if err := shuffled.Add(sh.Setting, sh.Outcome); err != nil {
				t.Fatal(err)
			}
			csv.WriteString(sh.Setting.String() + "," + string(sh.Outcome.AppendText(nil, n)) + "\n")
		}
		exclude := make([]bool, c.h.Len())
		for i := 1; i < len(exclude); i += 4 {
			exclude[i] = true
		}
		for _, opts := range []*estimate.Options{{Split: c.split}, {Split: c.split, Exclude: exclude}} {
			name := fmt.Sprintf("%s, exclude %v", c.name, opts.Exclude != nil)
			want, err := estimate.Grouped(c.h, shuffled, opts)
			if err != nil {
				t.Fatal(err)
			}
			stream := func() *estimate.Stream {
				st, err := estimate.NewStream(c.h, c.settings, shots, opts)
				if err != nil {
					t.Fatal(err)
				}
				return st
			}
			// feed adds every shot to st, one by one, and returns the result.
			feed := func(st *estimate.Stream) *estimate.Result {
				t.Helper()
				for _, sh := range all {
					if err := st.Add(sh.Setting, sh.Outcome); err != nil {
						t.Fatal(err)
					}
				}
				got, err := st.Result()
				if err != nil {
					t.Fatal(err)
				}
				return got
			}
			if diff := cmp.Diff(want, feed(stream()), bitExact); diff != "" {
				t.Errorf("%s: stream differs from Grouped (-Grouped +stream):\n%s", name, diff)
			}
			st := stream()
			if _, err := st.AddCSV(strings.NewReader(csv.String()), nil, nil); err != nil {
				t.Fatal(err)
			}
			got, err := st.Result()
			if err != nil {
				t.Fatal(err)
			}
			if diff := cmp.Diff(want, got, bitExact); diff != "" {
				t.Errorf("%s: stream through AddCSV differs from Grouped (-Grouped +stream):\n%s", name, diff)
			}
			if len(c.split) > 0 {
				continue
			}
			func() {
				defer func(m int) { shotsum.MaxStored = m }(shotsum.MaxStored)
				shotsum.MaxStored = 10
				st := stream()
				if st.Sums().Stored() {
					t.Fatalf("%s: lists stored past the cap", name)
				}
				if diff := cmp.Diff(want, feed(st), bitExact); diff != "" {
					t.Errorf("%s: stream past the storage cap differs from Grouped (-Grouped +stream):\n%s", name, diff)
				}
			}()
		}
	}
}

// circuitProbabilities returns the Born probabilities of the outcomes of
// setting s on state psi: the gates of s's circuit applied to the
// amplitudes one by one with their textbook matrices (H, S = diag(1, i),
// S† = diag(1, −i), CNOT, CZ; Nielsen & Chuang §4.2–4.3), then |amplitude|²,
// bit q of the index for qubit q. It shares with the code under test only
// the list of gates; which Z-string and sign each covered term is read
// through is derived by the stream from the setting's tableau.
func circuitProbabilities(psi []complex128, s pauli.Setting) []float64 {
	amp := append([]complex128(nil), psi...)
	r := complex(1/math.Sqrt2, 0)
	for _, g := range s.Circuit().Gates() {
		q0, q1 := g.Q0, g.Q1
		for b := range amp {
			switch g.Kind {
			case pauli.GateH:
				if b>>q0&1 == 0 {
					a0, a1 := amp[b], amp[b|1<<q0]
					amp[b], amp[b|1<<q0] = r*(a0+a1), r*(a0-a1)
				}
			case pauli.GateS:
				if b>>q0&1 == 1 {
					amp[b] *= 1i
				}
			case pauli.GateSdg:
				if b>>q0&1 == 1 {
					amp[b] *= -1i
				}
			case pauli.GateCNOT:
				if b>>q0&1 == 1 && b>>q1&1 == 0 {
					amp[b], amp[b|1<<q1] = amp[b|1<<q1], amp[b]
				}
			case pauli.GateCZ:
				if b>>q0&1 == 1 && b>>q1&1 == 1 {
					amp[b] = -amp[b]
				}
			}
		}
	}
	p := make([]float64, len(amp))
	for b, a := range amp {
		p[b] = real(a)*real(a) + imag(a)*imag(a)
	}
	return p
}

// TestStreamEntangledExpectation checks the streamed estimate of plans
// with entangled settings (with a coefficient split for overlap-gc, and a
// mixed plan) against the exact energy ⟨ψ|H|ψ⟩ of a random state, from
// the Pauli matrices (hamiltoniantest.ApplyString), without sampling: the
// estimate of a fixed plan is affine in each setting's outcomes, so with
// E_0 the estimate when every shot reads 0 and E_g(b) the one when the
// shots of setting g read b (the others 0),
// E[Ê] = E_0 + Σ_g Σ_b p_g(b)(E_g(b) − E_0), with p_g the Born
// probabilities of g (circuitProbabilities), and likewise every term's
// mean. The grouped estimator is unbiased for the covered terms
// (MATH.md §2, §2.5), so E[Ê] must be h_0 + Σ_{N_i>0} h_i⟨ψ|P_i|ψ⟩ and
// E[ô_i] = ⟨ψ|P_i|ψ⟩. A wrong image or sign of one term moves its mean by
// 2|⟨P_i⟩|. Tolerance, as in TestGroupedSplitUnbiased: each estimate is a
// sum of at most 10^3 products of numbers at most ‖h‖_1 (a mean: 1) in
// size, and the expectation sums 2^n·G of them weighted by probabilities
// adding up to one per setting, so the rounding error is below
// 10^3·2^n·G·2^−53·‖h‖_1.
func TestStreamEntangledExpectation(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	for _, c := range entangledCases(t) {
		n := c.h.Qubits()
		if n > 6 {
			continue // 2^n outcomes a setting: the small plans only
		}
		psi := randomState(rng, n)
		m := c.h.Len()
		run := func(g int, b uint64) *estimate.Result {
			st, err := estimate.NewStream(c.h, c.settings, c.shots, &estimate.Options{Split: c.split})
			if err != nil {
				t.Fatal(err)
			}
			for k, s := range c.settings {
				out := pauli.Bits{0}
				if k == g {
					out[0] = b
				}
				for range c.shots[k] {
					if err := st.Add(s, out); err != nil {
						t.Fatal(err)
					}
				}
			}
			r, err := st.Result()
			if err != nil {
				t.Fatal(err)
			}
			return r
		}
		r0 := run(-1, 0)
		energy := r0.Energy
		means := append([]float64(nil), r0.Means...)
		for g, s := range c.settings {
			p := circuitProbabilities(psi, s)
			total := 0.0
			for b, pb := range p {
				total += pb
				if pb == 0 {
					continue
				}
				r := run(g, uint64(b))
				energy += pb * (r.Energy - r0.Energy)
				for i := range m {
					if r0.Cover[i] > 0 {
						means[i] += pb * (r.Means[i] - r0.Means[i])
					}
				}
			}
			if math.Abs(total-1) > 1e-12 {
				t.Fatalf("%s: setting %s: probabilities add up to %v", c.name, s, total)
			}
		}
		want := c.h.Offset()
		tolMean := 1e3 * float64(len(psi)*len(c.settings)) * 0x1p-53
		for i := range m {
			if r0.Cover[i] == 0 {
				continue
			}
			phi := hamiltoniantest.ApplyString(c.h.Pauli(i), psi)
			var e complex128
			for b := range psi {
				e += cmplx.Conj(psi[b]) * phi[b]
			}
			want += c.h.Coeff(i) * real(e)
			if math.Abs(means[i]-real(e)) > tolMean {
				t.Errorf("%s: term %d (%s): E[ô] = %.15g, ⟨ψ|P|ψ⟩ = %.15g", c.name, i, c.h.Pauli(i), means[i], real(e))
			}
		}
		tol := tolMean * c.h.OneNorm()
		if math.Abs(energy-want) > tol {
			t.Errorf("%s: E[Ê] = %.15g, ⟨ψ|H|ψ⟩ over the covered terms = %.15g (difference %.3g, tolerance %.3g)", c.name, energy, want, energy-want, tol)
		}
	}
}

// TestStreamEntangledAddAllocs: adding a shot of an entangled setting
// allocates nothing once every setting has been seen (counted by
// testing.AllocsPerRun, which is deterministic).
func TestStreamEntangledAddAllocs(t *testing.T) {
	c := mixedCase(t)
	shots := make([]int, len(c.settings))
	for k := range shots {
		shots[k] = 1 << 30
	}
	st, err := estimate.NewStream(c.h, c.settings, shots, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Every setting seen, and past its first batch of 64 shots.
	b := pauli.Bits{0b1011}
	for range 100 {
		for _, s := range c.settings {
			if err := st.Add(s, b); err != nil {
				t.Fatal(err)
			}
		}
	}
	k := 0
	if a := testing.AllocsPerRun(1000, func() {
		k++
		b[0] = uint64(k) & 15
		if err := st.Add(c.settings[k%len(c.settings)], b); err != nil {
			t.Fatal(err)
		}
	}); a != 0 {
		t.Errorf("Add allocates %v times per shot, want 0", a)
	}
}
