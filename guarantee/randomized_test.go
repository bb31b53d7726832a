package guarantee

import (
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

func uniform(n int) [][3]float64 {
	p := make([][3]float64, n)
	for q := range p {
		p[q] = [3]float64{1.0 / 3, 1.0 / 3, 1.0 / 3}
	}
	return p
}

// Uniform random bases cover a weight-k string with probability 3^{−k}
// (REFERENCE_VALUES.md, "Random single-qubit Pauli measurements (Huang,
// Kueng & Preskill, arXiv:2002.08953)").
func TestProductOfUniform(t *testing.T) {
	h := mustH(t, 4, 0, 1.0, "ZIII", -0.5, "XXII", 0.25, "YZXI", 2.0, "XYZX")
	d, err := ProductOf(h, uniform(4))
	if err != nil {
		t.Fatal(err)
	}
	width := 0.0
	for i := range h.Len() {
		k := h.Pauli(i).Weight()
		if want := math.Pow(3, -float64(k)); !near(d.Cover[i], want, 1e-14) {
			t.Errorf("ProductOf(uniform).Cover[%s] = %g, want 3^-%d = %g", h.Pauli(i), d.Cover[i], k, want)
		}
		width += 2 * math.Abs(h.Coeff(i)) * math.Pow(3, float64(k))
	}
	if !near(d.Width, width, 1e-14) {
		t.Errorf("ProductOf(uniform).Width = %g, want 2Σ|h_i|3^k = %g", d.Width, width)
	}
}

// Worked by hand: H = 1·ZI + 0.5·XX; π(ZZ) = 3/4, π(XX) = 1/4. f = (3/4,
// 1/4); the ranges are 2·(1/(3/4)) = 8/3 for ZZ and 2·(0.5/(1/4)) = 4 for XX.
func TestMixtureOf(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI", 0.5, "XX")
	d, err := MixtureOf(h, settingsOf("ZZ", "XX", "YY"), []float64{3, 1, 0})
	if err != nil {
		t.Fatal(err)
	}
	if !near(d.Cover[0], 0.75, 1e-15) || !near(d.Cover[1], 0.25, 1e-15) || !near(d.Width, 4, 1e-15) {
		t.Errorf("MixtureOf = cover %v width %g, want [0.75 0.25], 4", d.Cover, d.Width)
	}
	rec := estimate.NewRecords(2)
	if err := rec.Add(pauli.MustParseSetting("YY"), pauli.NewBits(2)); err != nil {
		t.Fatal(err)
	}
	if _, err := RandomizedBound(h, rec, d, 0.1, nil); err == nil || !strings.Contains(err.Error(), "YY cannot be drawn") {
		t.Errorf("RandomizedBound(setting of weight 0) error %v, want one naming YY", err)
	}
	for _, bad := range [][]float64{{1, -1, 0}, {0, 0, 0}, {1, math.NaN(), 0}} {
		if _, err := MixtureOf(h, settingsOf("ZZ", "XX", "YY"), bad); err == nil {
			t.Errorf("MixtureOf(weights %v) error nil, want an error", bad)
		}
	}
}

// For uniform random bases the single-shot values are those of the
// uniform classical-shadow estimator, so the estimates agree with
// estimate.UniformShadow; and over 300 seeded repetitions the bound fails
// at most δ + 3σ of the time (σ the binomial standard deviation; the
// false-failure rate of this check is about 0.1%).
func TestRandomizedBoundCoverage(t *testing.T) {
	h := h2JW(t)
	d, err := ProductOf(h, uniform(4))
	if err != nil {
		t.Fatal(err)
	}
	sim, ev, err := estimate.GroundStateSimulator(h, 5, nil)
	if err != nil {
		t.Fatal(err)
	}
	const reps, delta = 300, 0.1
	fail := 0
	for r := range reps {
		p, err := allocate.Run(h, 200, &allocate.Random{Seed: uint64(r)}, nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(4)
		if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
			t.Fatal(err)
		}
		b, err := RandomizedBound(h, rec, d, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		if r == 0 {
			u, err := estimate.UniformShadow(h, rec, nil)
			if err != nil {
				t.Fatal(err)
			}
			if !near(b.Energy, u.Energy, 1e-12) {
				t.Errorf("RandomizedBound.Energy = %.15g, estimate.UniformShadow = %.15g", b.Energy, u.Energy)
			}
		}
		if math.Abs(b.Energy-ev.Energy) > b.Bound {
			fail++
		}
	}
	if allow := delta + 3*math.Sqrt(delta*(1-delta)/reps); float64(fail)/reps > allow {
		t.Errorf("RandomizedBound failed in %d of %d repetitions, more than δ + 3σ = %.3f", fail, reps, allow)
	}
}
