package estimate_test

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// splitHamiltonian is an invented 4-qubit Hamiltonian whose terms are
// covered by several of the overlap strategy's settings.
func splitHamiltonian(t *testing.T) *hamiltonian.Hamiltonian {
	t.Helper()
	var terms []hamiltonian.Term
	for _, c := range []struct {
		p string
		h float64
	}{
		{"ZIII", 0.9}, {"IZII", -0.7}, {"ZZII", 0.5}, {"IIZZ", 0.45}, {"XXII", 0.3},
		{"IIXX", -0.35}, {"YYII", 0.2}, {"ZIZI", 0.25}, {"IXIX", 0.15}, {"XIIZ", -0.1},
		{"IIIZ", 0.6}, {"ZIIX", 0.12},
	} {
		terms = append(terms, hamiltonian.Term{Pauli: pauli.MustParse(c.p), Coeff: c.h})
	}
	h, err := hamiltonian.New(4, -0.4, terms)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// denseEnergy returns ⟨ψ|H|ψ⟩ from the 2×2 Pauli matrices (textbook),
// applying each string letter by letter to ψ: qubit q is bit q of the
// index.
func denseEnergy(h *hamiltonian.Hamiltonian, psi []complex128) float64 {
	e := complex(h.Offset(), 0)
	for i := range h.Len() {
		phi := hamiltoniantest.ApplyString(h.Pauli(i), psi)
		s := complex(0, 0)
		for b := range psi {
			s += cmplx.Conj(psi[b]) * phi[b]
		}
		e += complex(h.Coeff(i), 0) * s
	}
	return real(e)
}

// bornProbabilities returns the outcome probabilities of a local setting:
// qubit q is rotated by H (X basis) or H·S† (Y basis), which take the +1
// eigenvector to |0⟩ (textbook), then read in Z.
func bornProbabilities(psi []complex128, s pauli.Setting) []float64 {
	n := s.Qubits()
	amp := append([]complex128(nil), psi...)
	r := complex(1/math.Sqrt2, 0)
	for q := range n {
		var u [2][2]complex128
		switch s.At(q) {
		case pauli.X:
			u = [2][2]complex128{{r, r}, {r, -r}}
		case pauli.Y:
			u = [2][2]complex128{{r, -1i * r}, {r, 1i * r}}
		default:
			continue
		}
		for b := range amp {
			if b>>q&1 == 0 {
				a0, a1 := amp[b], amp[b|1<<q]
				amp[b], amp[b|1<<q] = u[0][0]*a0+u[0][1]*a1, u[1][0]*a0+u[1][1]*a1
			}
		}
	}
	p := make([]float64, len(amp))
	for b, a := range amp {
		p[b] = real(a)*real(a) + imag(a)*imag(a)
	}
	return p
}

// TestGroupedSplitUnbiased checks that the grouped estimate with the
// overlap strategy's coefficient split is unbiased (MATH.md §2.5), by its
// exact expectation: the estimate is affine in each setting's outcomes, so
// with E_0 the estimate when every shot reads 0 and E_g(b) the estimate
// when the shots of setting g read b (the others 0),
// E[Ê] = E_0 + Σ_g Σ_b p_g(b)(E_g(b) − E_0), p_g the Born probabilities of
// setting g. The reference is ⟨ψ|H|ψ⟩ from the Pauli matrices. Each
// estimate is a sum of about 10^3 products of numbers at most ‖h‖_1 in size,
// and the expectation sums 16·G of them weighted by probabilities adding up
// to one per setting, so the rounding error is below
// 10^3·16·G·2^−53·‖h‖_1 ≈ 2·10^−12·G·‖h‖_1: the tolerance.
func TestGroupedSplitUnbiased(t *testing.T) {
	h := splitHamiltonian(t)
	rng := rand.New(rand.NewPCG(5, 11))
	for trial := range 3 {
		psi := make([]complex128, 16)
		norm := 0.0
		for b := range psi {
			psi[b] = complex(rng.NormFloat64(), rng.NormFloat64())
			norm += real(psi[b])*real(psi[b]) + imag(psi[b])*imag(psi[b])
		}
		for b := range psi {
			psi[b] /= complex(math.Sqrt(norm), 0)
		}
		px, err := allocate.NewStateProxy(psi)
		if err != nil {
			t.Fatal(err)
		}
		budget := 23 + 10*trial
		p, err := allocate.Run(h, budget, &allocate.Overlap{Proxy: px}, nil)
		if err != nil {
			t.Fatal(err)
		}
		settings, shots := p.Distinct()
		if !splitDiffers(p, settings, shots) {
			t.Fatalf("trial %d: the split is the implicit one; the test needs a real split", trial)
		}
		energy := func(g int, b uint64) float64 {
			rec := estimate.NewRecords(4)
			for k, s := range settings {
				out := pauli.Bits{0}
				if k == g {
					out[0] = b
				}
				for range shots[k] {
					if err := rec.Add(s, out); err != nil {
						t.Fatal(err)
					}
				}
			}
			r, err := estimate.Grouped(h, rec, &estimate.Options{Split: p.Split})
			if err != nil {
				t.Fatal(err)
			}
			return r.Energy
		}
		e0 := energy(-1, 0)
		mean := e0
		for g, s := range settings {
			for b, pb := range bornProbabilities(psi, s) {
				mean += pb * (energy(g, uint64(b)) - e0)
			}
		}
		want := denseEnergy(h, psi)
		tol := 2e-12 * float64(len(settings)) * h.OneNorm()
		if math.Abs(mean-want) > tol {
			t.Errorf("trial %d: E[Ê] = %.15g, ⟨ψ|H|ψ⟩ = %.15g (difference %.3g, tolerance %.3g)", trial, mean, want, mean-want, tol)
		}
	}
}

// splitDiffers reports whether some weight of the plan's split differs
// from the implicit m_g/N_i by more than 10^−3.
func splitDiffers(p *allocate.Plan, settings []pauli.Setting, shots []int) bool {
	for _, gr := range p.Split {
		for k, i := range gr.Terms {
			for j, s := range settings {
				if s.Equal(gr.Setting) && math.Abs(gr.Weights[k]-float64(shots[j])/float64(p.Cover[i])) > 1e-3 {
					return true
				}
			}
		}
	}
	return false
}

// TestGroupedSplitImplicit checks the split path of Grouped against the
// usual one: a split that lists every covered term with its implicit
// weights m_g/N_i is the estimator of MATH.md §2, so the energy, the means
// and the standard error agree up to rounding (the two paths sum in
// different orders: a few ulps of ‖h‖_1 per term).
func TestGroupedSplitImplicit(t *testing.T) {
	h := splitHamiltonian(t)
	psi := make([]complex128, 16)
	for b := range psi {
		psi[b] = complex(float64(b%5)-1.5, float64(b%3))
	}
	norm := 0.0
	for _, a := range psi {
		norm += real(a)*real(a) + imag(a)*imag(a)
	}
	for b := range psi {
		psi[b] /= complex(math.Sqrt(norm), 0)
	}
	p, err := allocate.Run(h, 40, &allocate.Overlap{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	// Two settings measured once, to exercise the leave-one-out residuals.
	shots[0], shots[1] = 1, 1
	cover, err := allocate.CoverCounts(h, settings, shots)
	if err != nil {
		t.Fatal(err)
	}
	var split hamiltonian.Split
	for k, s := range settings {
		gr := hamiltonian.SplitGroup{Setting: s}
		for _, i := range h.Table().Covered(nil, s) {
			gr.Terms = append(gr.Terms, i)
			gr.Weights = append(gr.Weights, float64(shots[k])/float64(cover[i]))
		}
		split = append(split, gr)
	}
	sim, err := estimate.NewSimulator(psi, 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(4)
	if err := sim.Run(settings, shots, rec); err != nil {
		t.Fatal(err)
	}
	plain, err := estimate.Grouped(h, rec, nil)
	if err != nil {
		t.Fatal(err)
	}
	withSplit, err := estimate.Grouped(h, rec, &estimate.Options{Split: split})
	if err != nil {
		t.Fatal(err)
	}
	tol := 1e-13 * h.OneNorm()
	if d := math.Abs(plain.Energy - withSplit.Energy); d > tol {
		t.Errorf("energy %.15g without the split, %.15g with it", plain.Energy, withSplit.Energy)
	}
	if d := math.Abs(plain.StdErr - withSplit.StdErr); d > tol {
		t.Errorf("standard error %.15g without the split, %.15g with it", plain.StdErr, withSplit.StdErr)
	}
	for i := range plain.Means {
		if d := math.Abs(plain.Means[i] - withSplit.Means[i]); d > 1e-13 {
			t.Errorf("term %d: mean %.15g without the split, %.15g with it", i, plain.Means[i], withSplit.Means[i])
		}
	}
	// A split naming a setting the records lack is refused.
	short := estimate.NewRecords(4)
	if err := sim.Run(settings[1:], shots[1:], short); err != nil {
		t.Fatal(err)
	}
	if _, err := estimate.Grouped(h, short, &estimate.Options{Split: split}); err == nil {
		t.Errorf("Grouped accepted records without the split's setting %s", settings[0])
	}
}

// TestStreamSplitMatchesGrouped checks the streamed estimate of a plan
// with a coefficient split (the overlap strategy's) against Grouped with
// the same split on the same shots: every number equal to the last bit,
// for shots fed one by one in a shuffled order and through AddCSV, with
// two settings measured once (leave-one-out residuals, terms covered by a
// single shot) and with terms left out. Grouped's split path itself is
// checked against ⟨ψ|H|ψ⟩ in TestGroupedSplitUnbiased.
func TestStreamSplitMatchesGrouped(t *testing.T) {
	h := splitHamiltonian(t)
	psi := make([]complex128, 16)
	for b := range psi {
		psi[b] = complex(float64(b%5)-1.5, float64(b%3))
	}
	norm := 0.0
	for _, a := range psi {
		norm += real(a)*real(a) + imag(a)*imag(a)
	}
	for b := range psi {
		psi[b] /= complex(math.Sqrt(norm), 0)
	}
	px, err := allocate.NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 400, &allocate.Overlap{Proxy: px}, nil)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	if !splitDiffers(p, settings, shots) {
		t.Fatal("the split is the implicit one; the test needs a real split")
	}
	// Two settings measured once (the split still fits: it fixes weights,
	// not counts).
	shots[0], shots[1] = 1, 1
	sim, err := estimate.NewSimulator(psi, 4, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(4)
	if err := sim.Run(settings, shots, rec); err != nil {
		t.Fatal(err)
	}
	// The shots in a shuffled order: the groups' order is that of their
	// first shot in both paths.
	type shot struct {
		s pauli.Setting
		b pauli.Bits
	}
	var all []shot
	for _, sh := range rec.Shots() {
		all = append(all, shot{sh.Setting, sh.Outcome})
	}
	rng := rand.New(rand.NewPCG(3, 3))
	rng.Shuffle(len(all), func(i, j int) { all[i], all[j] = all[j], all[i] })
	shuffled := estimate.NewRecords(4)
	var csv strings.Builder
	csv.WriteString("setting,outcome\n")
	for _, sh := range all {
		if err := shuffled.Add(sh.s, sh.b); err != nil {
			t.Fatal(err)
		}
		csv.WriteString(sh.s.String() + "," + string(sh.b.AppendText(nil, 4)) + "\n")
	}
	same := cmp.Comparer(func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) })
	exclude := make([]bool, h.Len())
	exclude[2], exclude[7] = true, true
	for _, opts := range []*estimate.Options{{Split: p.Split}, {Split: p.Split, Exclude: exclude}} {
		want, err := estimate.Grouped(h, shuffled, opts)
		if err != nil {
			t.Fatal(err)
		}
		st, err := estimate.NewStream(h, settings, shots, opts)
		if err != nil {
			t.Fatal(err)
		}
		for _, sh := range all {
			if err := st.Add(sh.s, sh.b); err != nil {
				t.Fatal(err)
			}
		}
		got, err := st.Result()
		if err != nil {
			t.Fatal(err)
		}
		if diff := cmp.Diff(want, got, same); diff != "" {
			t.Errorf("exclude %v: stream differs from Grouped (-Grouped +stream):\n%s", opts.Exclude != nil, diff)
		}
		st, err = estimate.NewStream(h, settings, shots, opts)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := st.AddCSV(strings.NewReader(csv.String()), nil, nil); err != nil {
			t.Fatal(err)
		}
		if got, err = st.Result(); err != nil {
			t.Fatal(err)
		}
		if diff := cmp.Diff(want, got, same); diff != "" {
			t.Errorf("exclude %v: AddCSV stream differs from Grouped (-Grouped +stream):\n%s", opts.Exclude != nil, diff)
		}
	}
}
