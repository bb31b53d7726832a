package estimate

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// h2JW returns the Jordan–Wigner H2 Hamiltonian at 0.74 Å, computed by an
// independent script (hamiltonian/hamiltoniantest/README.md; qubit q is character q).
func h2JW(t testing.TB) *hamiltonian.Hamiltonian {
	t.Helper()
	h, _, err := hamiltoniantest.H2Qubit(hamiltoniantest.H2, "jw")
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// h2Plan measures the Z terms together and each XY term on its own setting.
func h2Plan(shotsEach int) ([]pauli.Setting, []int) {
	var settings []pauli.Setting
	for _, s := range []string{"ZZZZ", "XXYY", "XYYX", "YXXY", "YYXX"} {
		settings = append(settings, pauli.MustParseSetting(s))
	}
	return settings, []int{shotsEach, shotsEach, shotsEach, shotsEach, shotsEach}
}

// refLetterSample is the ±1 value outcome b gives string p, letter by
// letter (MATH.md §1).
func refLetterSample(p pauli.String, b pauli.Bits) float64 {
	v := 1.0
	for q := range p.Support() {
		if b.Get(q) == 1 {
			v = -v
		}
	}
	return v
}

// refLetterCovers reports P ◁ Q letter by letter (MATH.md §1).
func refLetterCovers(s pauli.Setting, p pauli.String) bool {
	for q, l := range p.Letters() {
		if s.At(q) != l {
			return false
		}
	}
	return true
}

// refGrouped computes MATH.md §2 directly, shot by shot, together with
// the variance estimate documented on Grouped (the leave-one-out means
// computed as written there), used as the reference for the word-wise
// implementation.
func refGrouped(h *hamiltonian.Hamiltonian, rec *Records, exclude []bool, scale []float64) (energy, stderr float64, means []float64, cover []int) {
	m := h.Len()
	cover = make([]int, m)
	sum := make([]float64, m)
	for _, sh := range rec.Shots() {
		for i := range m {
			if refLetterCovers(sh.Setting, h.Pauli(i)) {
				cover[i]++
				sum[i] += scale[i] * refLetterSample(h.Pauli(i), sh.Outcome)
			}
		}
	}
	means = make([]float64, m)
	energy = h.Offset()
	for i := range m {
		means[i] = math.NaN()
		if cover[i] > 0 {
			means[i] = sum[i] / float64(cover[i])
			if !exclude[i] {
				energy += h.Coeff(i) * means[i]
			}
		}
	}
	// Z_n per shot, grouped by setting; for a one-shot setting the
	// leave-one-out residual R_g, computed from the other shots' mean.
	zs := map[string][]float64{}
	loo := map[string]float64{}
	v := 0.0
	for i := range m {
		if !exclude[i] && cover[i] == 1 {
			v += math.Pow(h.Coeff(i)*scale[i], 2)
		}
	}
	for _, sh := range rec.Shots() {
		z, r := 0.0, 0.0
		for i := range m {
			if exclude[i] || !refLetterCovers(sh.Setting, h.Pauli(i)) {
				continue
			}
			a := h.Coeff(i) / float64(cover[i])
			x := scale[i] * refLetterSample(h.Pauli(i), sh.Outcome)
			z += a * x
			if cover[i] > 1 {
				r += a * (x - (sum[i]-x)/float64(cover[i]-1))
			}
		}
		zs[sh.Setting.String()] = append(zs[sh.Setting.String()], z)
		loo[sh.Setting.String()] = r
	}
	for k, z := range zs {
		if len(z) == 1 {
			v += loo[k] * loo[k]
			continue
		}
		mean := 0.0
		for _, x := range z {
			mean += x
		}
		mean /= float64(len(z))
		ss := 0.0
		for _, x := range z {
			ss += (x - mean) * (x - mean)
		}
		v += float64(len(z)) * ss / float64(len(z)-1)
	}
	return energy, math.Sqrt(v), means, cover
}

// TestGroupedMatchesReference compares Grouped with refGrouped on random
// Hamiltonians and random records mixing many-shot and one-shot settings,
// with and without exclusion and readout mitigation. Tolerance 1e-9
// relative: the two sum the same numbers in different orders.
func TestGroupedMatchesReference(t *testing.T) {
	tests := []struct {
		name       string
		n, terms   int
		k          int
		exclude    bool
		mitigation bool
	}{
		{"6 qubits", 6, 60, 6, false, false},
		{"6 qubits, excluded terms", 6, 60, 6, true, false},
		{"6 qubits, mitigated", 6, 60, 6, false, true},
		{"70 qubits, two words", 70, 400, 6, true, true},
	}
	for ti, tc := range tests {
		rng := rand.New(rand.NewPCG(uint64(ti), 11))
		h, err := hamiltonian.RandomLocal(tc.n, tc.terms, tc.k, uint64(ti))
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecords(tc.n)
		fixed := []pauli.Setting{randomSetting(rng, tc.n), randomSetting(rng, tc.n), randomSetting(rng, tc.n)}
		for k := range 300 {
			s := fixed[k%3]
			if k%4 == 3 {
				s = randomSetting(rng, tc.n) // one-shot groups
			}
			b := pauli.NewBits(tc.n)
			for q := range tc.n {
				b.Set(q, rng.Uint64())
			}
			rec.Add(s, b)
		}
		opts := &Options{}
		exclude := make([]bool, h.Len())
		if tc.exclude {
			for i := range exclude {
				exclude[i] = i%5 == 0
			}
			opts.Exclude = exclude
		}
		scale := make([]float64, h.Len())
		for i := range scale {
			scale[i] = 1
		}
		if tc.mitigation {
			opts.Readout = make([]Readout, tc.n)
			for q := range opts.Readout {
				opts.Readout[q] = Readout{P01: 0.01 * float64(q%4), P10: 0.02}
			}
			for i := range scale {
				for q := range h.Pauli(i).Support() {
					scale[i] /= 1 - opts.Readout[q].P01 - opts.Readout[q].P10
				}
			}
		}
		res, err := Grouped(h, rec, opts)
		if err != nil {
			t.Fatal(err)
		}
		e, se, means, cover := refGrouped(h, rec, exclude, scale)
		close := func(a, b float64) bool { return math.Abs(a-b) <= 1e-9*max(1, math.Abs(b)) }
		if !close(res.Energy, e) || !close(res.StdErr, se) {
			t.Errorf("%s: Grouped = %v ± %v, reference %v ± %v", tc.name, res.Energy, res.StdErr, e, se)
		}
		if !slices.Equal(res.Cover, cover) {
			t.Errorf("%s: Cover = %v, reference %v", tc.name, res.Cover, cover)
		}
		covered := 0
		for i := range means {
			if cover[i] > 0 {
				covered++
			}
			if !(close(res.Means[i], means[i]) || math.IsNaN(res.Means[i]) && math.IsNaN(means[i])) {
				t.Errorf("%s: Means[%d] = %v, reference %v", tc.name, i, res.Means[i], means[i])
			}
		}
		if covered == 0 || covered == h.Len() {
			t.Errorf("%s: %d of %d terms covered; the case should have both kinds", tc.name, covered, h.Len())
		}
		bias := 0.0
		for i := range cover {
			if cover[i] == 0 || exclude[i] {
				bias += math.Abs(h.Coeff(i))
			}
		}
		if !close(res.Bias, bias) {
			t.Errorf("%s: Bias = %v, want %v", tc.name, res.Bias, bias)
		}
	}
}

// TestGroupedProductState checks that a state each setting measures with
// certainty gives exactly its energy and zero spread. The exact energy is
// Σ h_i Π_{q ∈ supp P_i} (−1)^{b_q}, written out letter by letter.
func TestGroupedProductState(t *testing.T) {
	tests := []struct {
		name    string
		h       *hamiltonian.Hamiltonian
		setting string
		bits    string
	}{
		{"computational basis state, diagonal H2 terms", diagonal(h2JW(t)), "ZZZZ", "1100"},
		{"computational basis state |0101⟩", diagonal(h2JW(t)), "ZZZZ", "0101"},
		{"product eigenstate of XZY", mustH(t, 3, 0.25, map[string]float64{"XII": 0.5, "IZI": -1, "IIY": 0.75, "XZI": 0.3, "IZY": -0.2, "XIY": 0.1, "XZY": 2}), "XZY", "101"},
	}
	for _, tc := range tests {
		s := pauli.MustParseSetting(tc.setting)
		b := mustBits(t, tc.bits)
		psi, err := EigenState(s, b)
		if err != nil {
			t.Fatal(err)
		}
		sim, err := NewSimulator(psi, 1, nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecords(s.Qubits())
		if err := sim.Run([]pauli.Setting{s}, []int{50}, rec); err != nil {
			t.Fatal(err)
		}
		res, err := Grouped(tc.h, rec, nil)
		if err != nil {
			t.Fatal(err)
		}
		want := tc.h.Offset()
		for i := range tc.h.Len() {
			want += tc.h.Coeff(i) * refLetterSample(tc.h.Pauli(i), b)
		}
		if math.Abs(res.Energy-want) > 1e-12 || res.StdErr != 0 || res.Bias != 0 {
			t.Errorf("%s: Grouped = %v ± %v (bias %v), want %v ± 0 (bias 0; tolerance 1e-12)", tc.name, res.Energy, res.StdErr, res.Bias, want)
		}
		if res.ApproxInterval[0] != res.Energy || res.ApproxInterval[1] != res.Energy {
			t.Errorf("%s: ApproxInterval = %v, want a single point", tc.name, res.ApproxInterval)
		}
	}
}

// diagonal returns the Z-only terms of h.
func diagonal(h *hamiltonian.Hamiltonian) *hamiltonian.Hamiltonian {
	var terms []hamiltonian.Term
	for _, tm := range h.Terms() {
		x, _ := tm.Pauli.Words()
		if x[0] == 0 {
			terms = append(terms, tm)
		}
	}
	d, _ := hamiltonian.New(h.Qubits(), h.Offset(), terms)
	return d
}

func mustH(t testing.TB, n int, offset float64, terms map[string]float64) *hamiltonian.Hamiltonian {
	t.Helper()
	keys := make([]string, 0, len(terms))
	for k := range terms {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	var ts []hamiltonian.Term
	for _, k := range keys {
		ts = append(ts, hamiltonian.Term{Pauli: pauli.MustParse(k), Coeff: terms[k]})
	}
	h, err := hamiltonian.New(n, offset, ts)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// repeatGrouped runs reps independent repetitions of the plan on sim and
// returns the mean and sample variance of the estimates and the mean of
// the reported variances StdErr².
func repeatGrouped(t *testing.T, h *hamiltonian.Hamiltonian, sim *Simulator, settings []pauli.Setting, shots []int, opts *Options, reps int) (mean, variance, reported float64) {
	t.Helper()
	es := make([]float64, reps)
	for r := range reps {
		rec := NewRecords(h.Qubits())
		if err := sim.Run(settings, shots, rec); err != nil {
			t.Fatal(err)
		}
		res, err := Grouped(h, rec, opts)
		if err != nil {
			t.Fatal(err)
		}
		es[r] = res.Energy
		reported += res.StdErr * res.StdErr / float64(reps)
	}
	for _, e := range es {
		mean += e / float64(reps)
	}
	return mean, sampleVariance(es), reported
}

// checkUnbiased requires the mean of reps estimates to lie within 4
// standard errors of exact (a false-failure rate of 6e-5 for a normal
// mean), and the mean reported variance to be within [0.7, 1.4] of the
// observed variance of the estimates (the observed variance of 400 values
// has a relative standard deviation of about 7%).
func checkUnbiased(t *testing.T, name string, exact, mean, variance, reported float64, reps int) {
	t.Helper()
	se := math.Sqrt(variance / float64(reps))
	t.Logf("%s: mean %.6f, exact %.6f, difference %.2f standard errors; reported/observed variance %.3f", name, mean, exact, (mean-exact)/se, reported/variance)
	if math.Abs(mean-exact) > 4*se {
		t.Errorf("%s: mean estimate %v over %d repetitions, exact %v: %.1f standard errors away, want at most 4", name, mean, reps, exact, math.Abs(mean-exact)/se)
	}
	if r := reported / variance; r < 0.7 || r > 1.4 {
		t.Errorf("%s: mean reported variance %v, observed %v (ratio %.2f), want ratio in [0.7, 1.4]", name, reported, variance, r)
	}
}

func TestGroupedUnbiasedH2(t *testing.T) {
	if testing.Short() {
		t.Skip("400 repetitions")
	}
	h := h2JW(t)
	sim, ev, err := GroundStateSimulator(h, 2026, nil)
	if err != nil {
		t.Fatal(err)
	}
	// The full-CI energy of H2/STO-3G at 0.74 Å (psi4 1.3.2,
	// hamiltonian/hamiltoniantest/energies.json) is the lowest eigenvalue of the JW
	// qubit Hamiltonian.
	fci, err := hamiltoniantest.FullCI(hamiltoniantest.H2)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(ev.Energy-fci) > 1e-8 {
		t.Fatalf("ground energy of the H2 JW Hamiltonian = %v, want the full-CI %v (tolerance 1e-8)", ev.Energy, fci)
	}
	settings, shots := h2Plan(40)
	const reps = 400
	mean, variance, reported := repeatGrouped(t, h, sim, settings, shots, nil, reps)
	checkUnbiased(t, "H2", ev.Energy, mean, variance, reported, reps)
}

// TestGroupedUnbiasedIsing uses the 10-site transverse-field Ising ring at
// J = h = 1, whose ground energy is −2/sin(π/20) (Pfeuty, Ann. Phys. 57, 79
// (1970); REFERENCE_VALUES.md), with the all-Z and all-X settings.
func TestGroupedUnbiasedIsing(t *testing.T) {
	if testing.Short() {
		t.Skip("400 repetitions")
	}
	h, err := hamiltonian.TransverseFieldIsing(hamiltonian.Ring(10), 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	sim, ev, err := GroundStateSimulator(h, 7, nil)
	if err != nil {
		t.Fatal(err)
	}
	if want := -2 / math.Sin(math.Pi/20); math.Abs(ev.Energy-want) > 1e-8 {
		t.Fatalf("ground energy of the Ising ring = %v, want %v (tolerance 1e-8)", ev.Energy, want)
	}
	settings := []pauli.Setting{pauli.MustParseSetting("ZZZZZZZZZZ"), pauli.MustParseSetting("XXXXXXXXXX")}
	const reps = 400
	mean, variance, reported := repeatGrouped(t, h, sim, settings, []int{100, 100}, nil, reps)
	checkUnbiased(t, "Ising", ev.Energy, mean, variance, reported, reps)
}

// TestGroupedMitigation simulates symmetric readout flips (p = 0.05 on
// every qubit) on the H2 ground state: the mitigated estimate must be
// unbiased (4 standard errors, as above), the unmitigated one visibly
// biased, and the mitigated error bar wider.
func TestGroupedMitigation(t *testing.T) {
	if testing.Short() {
		t.Skip("400 repetitions")
	}
	h := h2JW(t)
	flips := []Readout{{0.05, 0.05}, {0.05, 0.05}, {0.05, 0.05}, {0.05, 0.05}}
	sim, ev, err := GroundStateSimulator(h, 99, &SimulatorOptions{Readout: flips})
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := h2Plan(40)
	const reps = 400
	mean, variance, reported := repeatGrouped(t, h, sim, settings, shots, &Options{Readout: flips}, reps)
	checkUnbiased(t, "H2 mitigated", ev.Energy, mean, variance, reported, reps)
	raw, rawVar, _ := repeatGrouped(t, h, sim, settings, shots, nil, reps)
	if se := math.Sqrt(rawVar / reps); math.Abs(raw-ev.Energy) < 4*se {
		t.Errorf("unmitigated mean %v is within 4 standard errors of %v; readout error should bias it", raw, ev.Energy)
	}
	if reported <= rawVar {
		t.Errorf("mitigated reported variance %v is not above the unmitigated variance %v", reported, rawVar)
	}
}

func TestReadoutBiasBound(t *testing.T) {
	h := mustH(t, 2, 0, map[string]float64{"ZZ": -2, "ZI": 0.5})
	rec := NewRecords(2)
	rec.Add(pauli.MustParseSetting("ZZ"), pauli.Bits{0})
	tests := []struct {
		name  string
		flips []Readout
		want  float64
	}{
		// λ = 1 − P01 − P10 = 0.7, |δ| = |P10 − P01| = 0.1 on each qubit: ZZ
		// gets 2·((1 + 1/7)² − 1), ZI gets 0.5·(1/7) (derived in result.go).
		{"asymmetric", []Readout{{0.1, 0.2}, {0.1, 0.2}}, 2*(math.Pow(8.0/7, 2)-1) + 0.5/7},
		{"symmetric", []Readout{{0.1, 0.1}, {0.2, 0.2}}, 0},
	}
	for _, tc := range tests {
		res, err := Grouped(h, rec, &Options{Readout: tc.flips})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(res.ReadoutBias-tc.want) > 1e-12 {
			t.Errorf("%s: ReadoutBias = %v, want %v", tc.name, res.ReadoutBias, tc.want)
		}
		// One shot of outcome 00: the mitigated means are 1/Πλ.
		want := 1 / ((1 - tc.flips[0].P01 - tc.flips[0].P10) * (1 - tc.flips[1].P01 - tc.flips[1].P10))
		if zz := 1; !h.Pauli(zz).Equal(pauli.MustParse("ZZ")) || math.Abs(res.Means[zz]-want) > 1e-12 {
			t.Errorf("%s: Means = %v, want ZZ's mean %v", tc.name, res.Means, want)
		}
	}
}

func TestGroupedOptionErrors(t *testing.T) {
	h := mustH(t, 2, 0, map[string]float64{"ZZ": 1})
	rec := NewRecords(2)
	tests := []struct {
		name string
		h    *hamiltonian.Hamiltonian
		rec  *Records
		opts *Options
	}{
		{"width", h, NewRecords(3), nil},
		{"exclude length", h, rec, &Options{Exclude: []bool{true, false}}},
		{"readout length", h, rec, &Options{Readout: []Readout{{}}}},
		{"nothing to mitigate", h, rec, &Options{Readout: []Readout{{0.5, 0.5}, {}}}},
		{"confidence", h, rec, &Options{Confidence: 1}},
		{"negative batches", h, rec, &Options{Batches: -1}},
	}
	for _, tc := range tests {
		if _, err := Grouped(tc.h, tc.rec, tc.opts); err == nil {
			t.Errorf("%s: Grouped succeeded", tc.name)
		}
	}
}

// TestGroupedSingleShot: a term seen in one shot only has no data on its
// spread, and Grouped charges it the largest variance of a ±1 sample,
// h_i², as documented.
func TestGroupedSingleShot(t *testing.T) {
	h := mustH(t, 2, 0, map[string]float64{"ZI": 0.5, "ZZ": 2, "XX": 1})
	rec := NewRecords(2)
	rec.Add(pauli.MustParseSetting("ZZ"), pauli.Bits{0b01})
	res, err := Grouped(h, rec, nil)
	if err != nil {
		t.Fatal(err)
	}
	// ZI and ZZ both read −1: −0.5 − 2; XX is never covered (bias 1).
	if res.Energy != -2.5 || res.Bias != 1 || math.Abs(res.StdErr-math.Sqrt(0.25+4)) > 1e-15 {
		t.Errorf("Grouped = %v ± %v (bias %v), want -2.5 ± %v (bias 1)", res.Energy, res.StdErr, res.Bias, math.Sqrt(0.25+4))
	}
}

func TestGroupedEdgeCases(t *testing.T) {
	h := mustH(t, 2, 0.75, map[string]float64{"ZZ": -1, "XI": 0.5})
	offsetOnly, err := hamiltonian.New(2, 0.75, nil)
	if err != nil {
		t.Fatal(err)
	}
	one := NewRecords(2)
	one.Add(pauli.MustParseSetting("ZZ"), pauli.Bits{0})
	tests := []struct {
		name             string
		h                *hamiltonian.Hamiltonian
		rec              *Records
		energy, se, bias float64
	}{
		// No terms: the offset exactly.
		{"offset only", offsetOnly, one, 0.75, 0, 0},
	}
	// No shots: an error, not a zero-width interval around the offset.
	for _, est := range []func(*hamiltonian.Hamiltonian, *Records, *Options) (*Result, error){Grouped, UniformShadow} {
		if res, err := est(h, NewRecords(2), nil); err == nil || !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), "no shot") {
			t.Errorf("estimating from empty records = %v, %v; want an error", res, err)
		}
	}
	for _, tc := range tests {
		res, err := Grouped(tc.h, tc.rec, nil)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if res.Energy != tc.energy || res.StdErr != tc.se || res.Bias != tc.bias {
			t.Errorf("%s: Grouped = %v ± %v (bias %v), want %v ± %v (bias %v)", tc.name, res.Energy, res.StdErr, res.Bias, tc.energy, tc.se, tc.bias)
		}
	}
}
