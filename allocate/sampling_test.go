package allocate_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// chiSquarePValue returns the p-value of Pearson's chi-square statistic of
// the observed counts against the expected ones, with len−1 degrees of
// freedom (gonum's distuv.ChiSquared survival function).
func chiSquarePValue(observed []int, expected []float64) float64 {
	stat := 0.0
	for i, o := range observed {
		d := float64(o) - expected[i]
		stat += d * d / expected[i]
	}
	return distuv.ChiSquared{K: float64(len(observed) - 1)}.Survival(stat)
}

func TestImportanceDrawsInProportion(t *testing.T) {
	// Each shot draws term i with probability |h_i|/‖h‖_1 (MATH §3.5). Two
	// checks, each failing falsely with probability at most 1e-3 for an
	// exact sampler: a chi-square goodness-of-fit test at p < 1e-3 on the
	// counts, and each count within z·sqrt(N p (1−p)) of N p with z = 4.05,
	// the two-sided normal quantile for 1e-3/20 (Bonferroni over ≤ 20
	// terms). Seeded, so the outcome is fixed.
	h := mustH(t, 0.5, "ZZII", 0.9, "XXII", -0.45, "IIYY", 0.3, "ZIZI", -0.15, "IXIX", 0.1, "YYYY", 0.05)
	const n = 20000
	p, err := allocate.Run(h, n, &allocate.Importance{Seed: 11}, nil)
	if err != nil {
		t.Fatal(err)
	}
	counts := make([]int, h.Len())
	for _, i := range p.Drawn {
		counts[i]++
	}
	l1 := h.OneNorm()
	expected := make([]float64, h.Len())
	for i, c := range h.Coeffs() {
		pi := math.Abs(c) / l1
		expected[i] = n * pi
		if d := math.Abs(float64(counts[i]) - expected[i]); d > 4.05*math.Sqrt(n*pi*(1-pi)) {
			t.Errorf("term %d (%s): drawn %d times, want %.1f ± %.1f", i, h.Pauli(i), counts[i], expected[i], 4.05*math.Sqrt(n*pi*(1-pi)))
		}
		if p.Cover[i] < counts[i] {
			t.Errorf("term %d: Cover %d below its %d draws", i, p.Cover[i], counts[i])
		}
	}
	if pv := chiSquarePValue(counts, expected); pv < 1e-3 {
		t.Errorf("chi-square p-value of the draws = %.3g, want ≥ 1e-3 (counts %v)", pv, counts)
	}
}

// TestImportanceInitHugeBudget: Init must not reserve the whole budget up
// front, or a budget beyond memory panics in make before the first shot.
func TestImportanceInitHugeBudget(t *testing.T) {
	h := mustH(t, 0, "XX", 1.0, "ZI", 0.5)
	im := &allocate.Importance{}
	if err := im.Init(h, math.MaxInt); err != nil {
		t.Fatalf("Init(budget MaxInt) = %v, want nil", err)
	}
	if got := len(im.Drawn()); got != 0 {
		t.Errorf("len(Drawn()) after Init = %d, want 0", got)
	}
}

func TestRandomIsUniform(t *testing.T) {
	// Every letter of every qubit is uniform on X, Y, Z (MATH §5.3). The
	// chi-square test of all 3·n letter counts against N/3 each fails
	// falsely with probability 1e-3 per qubit; seeded, so the outcome is fixed.
	h := mustH(t, 0, "ZZZ", 1.0)
	const n = 3000
	p, err := allocate.Run(h, n, &allocate.Random{Seed: 5}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for q := range 3 {
		counts := make([]int, 3)
		for k, s := range p.Settings {
			counts[s.At(q)-1] += p.Shots[k]
		}
		if pv := chiSquarePValue(counts, []float64{n / 3, n / 3, n / 3}); pv < 1e-3 {
			t.Errorf("qubit %d letter counts %v: chi-square p-value %.3g, want ≥ 1e-3", q, counts, pv)
		}
	}
	// A weight-3 term is covered with probability 3^−3 (MATH §5.3);
	// within 4.05 binomial standard deviations (false failure ≈ 5e-5).
	pi := 1.0 / 27
	if d := math.Abs(float64(p.Cover[0]) - n*pi); d > 4.05*math.Sqrt(n*pi*(1-pi)) {
		t.Errorf("ZZZ covered %d times in %d shots, want about %.1f", p.Cover[0], n, n*pi)
	}
}

func TestBiasedDistributions(t *testing.T) {
	t.Run("one qubit, closed form", func(t *testing.T) {
		// For h_X X + h_Z Z the proxy is h_X²/β_X + h_Z²/β_Z, minimised on
		// the simplex at β ∝ |h| (Cauchy–Schwarz; derived in MATH §5.4's
		// setting): β = (0.75, 0, 0.25) for h = (0.6, −0.2).
		h := mustH(t, 0, "X", 0.6, "Z", -0.2)
		beta, err := allocate.BiasedDistributions(h)
		if err != nil {
			t.Fatal(err)
		}
		want := [3]float64{0.75, 0, 0.25}
		for a := range 3 {
			if math.Abs(beta[0][a]-want[a]) > 1e-12 {
				t.Errorf("β_0 = %v, want %v within 1e-12", beta[0], want)
			}
		}
	})
	t.Run("diagonal Hamiltonian measures Z only", func(t *testing.T) {
		// Only Z letters appear, so the optimum puts all weight on Z and the
		// proxy equals Σ h_i² (every term covered by every shot).
		h := mustH(t, 0, "ZZI", 1.0, "IZZ", 0.5, "ZIZ", -0.25, "ZII", 0.1)
		beta, err := allocate.BiasedDistributions(h)
		if err != nil {
			t.Fatal(err)
		}
		for q := range beta {
			if beta[q] != [3]float64{0, 0, 1} {
				t.Errorf("β_%d = %v, want [0 0 1]", q, beta[q])
			}
		}
	})
	t.Run("optimality on a mixed Hamiltonian", func(t *testing.T) {
		h, err := hamiltonian.RandomLocal(6, 40, 3, 3)
		if err != nil {
			t.Fatal(err)
		}
		beta, err := allocate.BiasedDistributions(h)
		if err != nil {
			t.Fatal(err)
		}
		uniform := make([][3]float64, h.Qubits())
		for q := range uniform {
			uniform[q] = [3]float64{1.0 / 3, 1.0 / 3, 1.0 / 3}
		}
		f := biasedProxy(h, beta)
		if u := biasedProxy(h, uniform); !(f < u) {
			t.Errorf("optimised proxy %.6g not below the uniform one %.6g", f, u)
		}
		// First-order optimality on each simplex: moving probability
		// between two letters of one qubit cannot lower the proxy by more
		// than 1e-8 relative, for steps of ±1e-4 (checked numerically).
		for q := range beta {
			for a := range 3 {
				for b := range 3 {
					if a == b || beta[q][a] < 1e-4 {
						continue
					}
					moved := append([][3]float64(nil), beta...)
					moved[q][a] -= 1e-4
					moved[q][b] += 1e-4
					if g := biasedProxy(h, moved); g < f*(1-1e-8) {
						t.Errorf("qubit %d: moving 1e-4 from %s to %s lowers the proxy from %.9g to %.9g", q, pauli.Letter(a+1), pauli.Letter(b+1), f, g)
					}
				}
			}
		}
	})
}

func TestBiasedDrawsFromDistributions(t *testing.T) {
	// The letters of each qubit follow β_q: chi-square at p < 1e-3 per
	// qubit over the letters with positive probability; seeded.
	h := mustH(t, 0, "XZ", 0.6, "ZZ", -0.2, "XY", 0.3)
	b := &allocate.Biased{Seed: 9}
	const n = 5000
	p, err := allocate.Run(h, n, b, nil)
	if err != nil {
		t.Fatal(err)
	}
	beta := b.Distributions()
	for q := range 2 {
		var obs []int
		var exp []float64
		for a := range 3 {
			c := 0
			for k, s := range p.Settings {
				if s.At(q) == pauli.Letter(a+1) {
					c += p.Shots[k]
				}
			}
			if beta[q][a] == 0 {
				if c != 0 {
					t.Errorf("qubit %d letter %s has probability 0 but was drawn %d times", q, pauli.Letter(a+1), c)
				}
				continue
			}
			obs = append(obs, c)
			exp = append(exp, n*beta[q][a])
		}
		if len(obs) > 1 {
			if pv := chiSquarePValue(obs, exp); pv < 1e-3 {
				t.Errorf("qubit %d: counts %v against %v, chi-square p-value %.3g", q, obs, exp, pv)
			}
		}
	}
}
