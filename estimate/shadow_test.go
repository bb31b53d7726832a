package estimate

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// allSettings returns every setting on n qubits.
func allSettings(n int) []pauli.Setting {
	var out []pauli.Setting
	ls := make([]pauli.Letter, n)
	total := 1
	for range n {
		total *= 3
	}
	for k := range total {
		c := k
		for q := range ls {
			ls[q] = pauli.Letter(1 + c%3)
			c /= 3
		}
		s, _ := pauli.NewSetting(pauli.FromLetters(ls))
		out = append(out, s)
	}
	return out
}

// oneShot returns records holding the single shot (s, b).
func oneShot(n int, s pauli.Setting, b uint64) *Records {
	rec := NewRecords(n)
	rec.appendShot(rec.group(s), []uint64{b})
	return rec
}

// TestUniformShadowSecondMoment checks, by enumerating every setting, that
// the single-shot estimate of a weight-k string has second moment exactly
// 3^k for any outcome (Huang, Kueng & Preskill, arXiv:2002.08953;
// REFERENCE_VALUES.md: "second moment exactly 3^k for every state").
func TestUniformShadowSecondMoment(t *testing.T) {
	for _, tc := range []struct {
		name string
		p    string
		k    int
	}{
		{"weight 1", "IZII", 1},
		{"weight 2", "XIIY", 2},
		{"weight 3", "XYZI", 3},
		{"weight 4", "XXYY", 4},
	} {
		h := mustH(t, 4, 0, map[string]float64{tc.p: 1})
		m2 := 0.0
		settings := allSettings(4)
		for j, s := range settings {
			res, err := UniformShadow(h, oneShot(4, s, uint64(j)%16), nil)
			if err != nil {
				t.Fatal(err)
			}
			m2 += res.Energy * res.Energy / float64(len(settings))
		}
		if want := math.Pow(3, float64(tc.k)); math.Abs(m2-want) > 1e-9 {
			t.Errorf("%s: second moment of the single-shot estimate of %s = %v, want 3^%d = %v", tc.name, tc.p, m2, tc.k, want)
		}
	}
}

// TestShadowUnbiasedExact averages the single-shot estimate over every
// setting (weighted by its probability under the plan's distribution) and
// every outcome (weighted by the Born probability), which must give the
// exact energy ⟨ψ|H|ψ⟩ (hamiltonian.Expectation per term) for the H2
// Hamiltonian and a random state. Tolerance 1e-12.
func TestShadowUnbiasedExact(t *testing.T) {
	h := h2JW(t)
	psi := randomState(4, 17)
	sim, err := NewSimulator(psi, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	unit := sim.state // normalised copy
	exact := h.Offset()
	for i := range h.Len() {
		exact += h.Coeff(i) * hamiltonian.Expectation(unit, h.Pauli(i))
	}
	beta := [][3]float64{{0.2, 0.3, 0.5}, {0.1, 0.1, 0.8}, {0.5, 0.25, 0.25}, {1.0 / 3, 1.0 / 3, 1.0 / 3}}
	tests := []struct {
		name string
		beta [][3]float64 // nil: uniform
	}{
		{"uniform", nil},
		{"locally biased", beta},
	}
	for _, tc := range tests {
		mean := 0.0
		for _, s := range allSettings(4) {
			ps := math.Pow(1.0/3, 4)
			if tc.beta != nil {
				ps = 1
				for q := range 4 {
					ps *= tc.beta[q][s.At(q)-pauli.X]
				}
			}
			prob := sim.Probabilities(nil, s)
			for b, pb := range prob {
				var res *Result
				var err error
				if tc.beta == nil {
					res, err = UniformShadow(h, oneShot(4, s, uint64(b)), nil)
				} else {
					res, err = BiasedShadow(h, oneShot(4, s, uint64(b)), tc.beta, nil)
				}
				if err != nil {
					t.Fatal(err)
				}
				mean += ps * pb * res.Energy
			}
		}
		if math.Abs(mean-exact) > 1e-12 {
			t.Errorf("%s: expected single-shot estimate = %v, want ⟨H⟩ = %v", tc.name, mean, exact)
		}
	}
}

// TestShadowMedianOfMeans checks the batching against a hand computation:
// shots in order are cut into contiguous batches ⌊k·K/N⌋.
func TestShadowMedianOfMeans(t *testing.T) {
	h := mustH(t, 1, 0.5, map[string]float64{"Z": 1})
	rec := NewRecords(1)
	z, x := pauli.MustParseSetting("Z"), pauli.MustParseSetting("X")
	// Single-shot energies 0.5 + 3·s when Z is measured, 0.5 otherwise.
	shots := []struct {
		s pauli.Setting
		b uint64
	}{{z, 0}, {z, 1}, {x, 0}, {z, 0}, {z, 0}, {x, 1}}
	for _, sh := range shots {
		rec.Add(sh.s, pauli.Bits{sh.b})
	}
	// Values 3.5, −2.5, 0.5, 3.5, 3.5, 0.5. Three batches: means 0.5, 2,
	// 2 → median 2. One batch: mean 9/6 = 1.5.
	for _, tc := range []struct {
		batches    int
		want, mean float64
	}{{3, 2, 1.5}, {1, 1.5, 1}, {2, 1.5, 1}} {
		res, err := UniformShadow(h, rec, &Options{Batches: tc.batches})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(res.Energy-tc.want) > 1e-12 {
			t.Errorf("UniformShadow with %d batches = %v, want %v", tc.batches, res.Energy, tc.want)
		}
		if math.Abs(res.Means[0]-tc.mean) > 1e-12 {
			t.Errorf("UniformShadow with %d batches: Means[0] = %v, want %v", tc.batches, res.Means[0], tc.mean)
		}
	}
	if _, err := UniformShadow(h, rec, &Options{Batches: 7}); err == nil {
		t.Errorf("UniformShadow with 7 batches for 6 shots succeeded")
	}
}

func TestBiasedShadowErrors(t *testing.T) {
	h := mustH(t, 2, 0, map[string]float64{"XZ": 1, "YI": 2})
	rec := NewRecords(2)
	rec.Add(pauli.MustParseSetting("XZ"), pauli.Bits{0})
	tests := []struct {
		name string
		beta [][3]float64
		want string
	}{
		{"too few qubits", [][3]float64{{1, 0, 0}}, "1 distributions"},
		{"not summing to one", [][3]float64{{0.5, 0.5, 0.5}, {0, 0, 1}}, "sum to"},
		{"negative", [][3]float64{{1.5, -0.5, 0}, {0, 0, 1}}, "outside"},
		{"record impossible under beta", [][3]float64{{0, 1, 0}, {0, 0, 1}}, "probability zero"},
	}
	for _, tc := range tests {
		if _, err := BiasedShadow(h, rec, tc.beta, nil); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: BiasedShadow error = %v, want one mentioning %q", tc.name, err, tc.want)
		}
	}
	// A term whose letter has probability zero is left out, with its |h_i|
	// in the bias.
	res, err := BiasedShadow(h, rec, [][3]float64{{1, 0, 0}, {0, 0, 1}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Bias != 2 || !math.IsNaN(res.Means[1]) {
		t.Errorf("BiasedShadow with Y never drawn: Bias = %v, Means = %v, want 2 and NaN for YI", res.Bias, res.Means)
	}
}

// TestInverseProbabilityMitigation: with readout mitigation a covering
// shot's value is divided by Π(1 − P01 − P10) over the term's support.
func TestInverseProbabilityMitigation(t *testing.T) {
	h := mustH(t, 2, 0, map[string]float64{"ZZ": 1})
	flips := []Readout{{0.1, 0.1}, {0.05, 0.15}}
	lambda := 0.8 * 0.8
	rec := oneShot(2, pauli.MustParseSetting("ZZ"), 0)
	us, err := UniformShadow(h, rec, &Options{Readout: flips})
	if err != nil {
		t.Fatal(err)
	}
	is, err := ImportanceSampling(h, rec, []int{0}, &Options{Readout: flips})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"UniformShadow", us.Energy, 9 / lambda},
		{"ImportanceSampling", is.Energy, 1 / lambda},
	} {
		if math.Abs(c.got-c.want) > 1e-12 {
			t.Errorf("%s with mitigation = %v, want %v", c.name, c.got, c.want)
		}
	}
	// ReadoutBias: qubit 1 has |P10 − P01| / λ = 0.1/0.8.
	if want := 1.125 - 1; math.Abs(us.ReadoutBias-want) > 1e-12 {
		t.Errorf("ReadoutBias = %v, want %v", us.ReadoutBias, want)
	}
}

// refShadow computes the shadow estimate directly, shot by shot, with
// median of means, used as the reference for the word-wise code: shot k of
// N goes to batch ⌊k·K/N⌋; a covering shot gives term i the value
// 3^weight·s (uniform shadows).
func refShadow(h *hamiltonian.Hamiltonian, rec *Records, batches int) (energy float64, means []float64) {
	n := rec.Len()
	m := h.Len()
	size := make([]float64, batches)
	xsum := make([]float64, batches)
	tsum := make([][]float64, m)
	for i := range tsum {
		tsum[i] = make([]float64, batches)
	}
	for k, sh := range rec.Shots() {
		b := k * batches / n
		size[b]++
		x := h.Offset()
		for i := range m {
			if !refLetterCovers(sh.Setting, h.Pauli(i)) {
				continue
			}
			v := math.Pow(3, float64(h.Pauli(i).Weight())) * refLetterSample(h.Pauli(i), sh.Outcome)
			tsum[i][b] += v
			x += h.Coeff(i) * v
		}
		xsum[b] += x
	}
	bm := make([]float64, batches)
	for b := range bm {
		bm[b] = xsum[b] / size[b]
	}
	energy = median(bm)
	means = make([]float64, m)
	for i := range m {
		for b := range bm {
			bm[b] = tsum[i][b] / size[b]
		}
		means[i] = median(bm)
	}
	return energy, means
}

// TestUniformShadowMatchesReference compares UniformShadow with refShadow
// on random records that mix one-shot and many-shot settings, with batch
// boundaries inside runs of one-shot settings. Tolerance 1e-9 relative.
func TestUniformShadowMatchesReference(t *testing.T) {
	for _, tc := range []struct {
		name           string
		n, terms, k    int
		shots, batches int
	}{
		{"6 qubits, 1 batch", 6, 40, 3, 300, 1},
		{"6 qubits, 7 batches", 6, 40, 3, 300, 7},
		{"70 qubits, 3 batches", 70, 300, 2, 500, 3},
	} {
		rng := rand.New(rand.NewPCG(uint64(tc.n), uint64(tc.batches)))
		h, err := hamiltonian.RandomLocal(tc.n, tc.terms, tc.k, 5)
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecords(tc.n)
		fixed := randomSetting(rng, tc.n)
		for k := range tc.shots {
			s := randomSetting(rng, tc.n)
			if k%10 < 2 {
				s = fixed
			}
			b := pauli.NewBits(tc.n)
			for q := range tc.n {
				b.Set(q, rng.Uint64())
			}
			rec.Add(s, b)
		}
		res, err := UniformShadow(h, rec, &Options{Batches: tc.batches})
		if err != nil {
			t.Fatal(err)
		}
		e, means := refShadow(h, rec, tc.batches)
		close := func(a, b float64) bool { return math.Abs(a-b) <= 1e-9*max(1, math.Abs(b)) }
		if !close(res.Energy, e) {
			t.Errorf("%s: UniformShadow = %v, reference %v", tc.name, res.Energy, e)
		}
		for i := range means {
			if !close(res.Means[i], means[i]) {
				t.Errorf("%s: Means[%d] = %v, reference %v", tc.name, i, res.Means[i], means[i])
				break
			}
		}
	}
}
