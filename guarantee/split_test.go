package guarantee

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// A worked example of the certificate with a coefficient split, computed
// by hand from MATH.md §2.5: H = 1·ZI − 0.5·IZ + 0.25·IX, settings ZZ ×3
// and ZX ×2; ZI is split 1/4 to ZZ and 3/4 to ZX, the others have one
// setting each (weight 1).
//
//	s_ZZ = (1·1/4 + 0.5)/3 = 1/4,  s_ZX = (1·3/4 + 0.25)/2 = 1/2,
//	V = 3·(1/4)² + 2·(1/2)² = 0.6875,
//	r_ZI² = (1/4)²/3 + (3/4)²/2 = 29/96, r_IZ² = 1/3, r_IX² = 1/2,
//	‖h'‖ = sqrt(29/96) + 0.5·sqrt(1/3) + 0.25·sqrt(1/2),
//	v_ZI = 1·(1/4·1/4 + 1/2·3/4) = 0.4375, v_IZ = 0.5·1/4, v_IX = 0.25·1/2.
func TestCertifySplitWorkedExample(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI", -0.5, "IZ", 0.25, "IX")
	zz, zx := settingsOf("ZZ", "ZX")[0], settingsOf("ZZ", "ZX")[1]
	p := &allocate.Plan{
		Qubits: 2, Settings: settingsOf("ZZ", "ZX"), Shots: []int{3, 2}, Cover: []int{5, 3, 2},
		Split: hamiltonian.Split{
			{Setting: zz, Terms: []int{0}, Weights: []float64{0.25}},
			{Setting: zx, Terms: []int{0}, Weights: []float64{0.75}},
		},
	}
	const delta = 0.05
	c, err := CertifyPlan(h, p, delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	l := math.Log(2 / delta)
	radius := math.Sqrt(2 * 0.6875 * l)
	const tol = 1e-14
	for _, k := range []struct {
		name      string
		got, want float64
	}{
		{"Variance", c.Variance, 0.6875},
		{"Radius", c.Radius, radius},
		{"Bound", c.Bound, radius},
		{"ScaledOneNorm", c.ScaledOneNorm, math.Sqrt(29.0/96) + 0.5*math.Sqrt(1.0/3) + 0.25*math.Sqrt(0.5)},
		{"Share[0]", c.Share[0], radius * 0.4375 / 0.6875},
		{"Share[1]", c.Share[1], radius * 0.125 / 0.6875},
		{"Share[2]", c.Share[2], radius * 0.125 / 0.6875},
	} {
		if math.Abs(k.got-k.want) > tol*max(1, math.Abs(k.want)) {
			t.Errorf("%s = %.17g, want %.17g", k.name, k.got, k.want)
		}
	}
	if c.RelaxedRadius < c.Radius {
		t.Errorf("RelaxedRadius %g < Radius %g (Cauchy–Schwarz, MATH.md §2.5)", c.RelaxedRadius, c.Radius)
	}
	// The same plan without the split is §3.1: a = (1/5, 1/6, 1/8),
	// s_ZZ = 1/5 + 1/6 = 11/30 (ZI, IZ), s_ZX = 1/5 + 1/8 = 13/40 (ZI, IX),
	// V = 3·(11/30)² + 2·(13/40)².
	p.Split = nil
	c0, err := CertifyPlan(h, p, delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	if want := 3*(11.0/30)*(11.0/30) + 2*(13.0/40)*(13.0/40); math.Abs(c0.Variance-want) > tol {
		t.Errorf("without the split: Variance = %.17g, want %.17g", c0.Variance, want)
	}
	// A split that does not fit is refused.
	p.Split = hamiltonian.Split{{Setting: zz, Terms: []int{2}, Weights: []float64{1}}}
	if _, err := CertifyPlan(h, p, delta, nil); err == nil {
		t.Errorf("CertifyPlan accepted a split listing IX under ZZ, which does not cover it")
	}
}

// TestEmpiricalSplitEnergy checks that the data bound with a split is
// about the split estimate: its Energy equals estimate.Grouped's with the
// same split (two implementations), and every form gives a finite bound
// no smaller than the worst-case one over the groups' widths allows
// (Radius ≤ Σ_g m_g·2·s'_g, the sum of the groups' full ranges).
func TestEmpiricalSplitEnergy(t *testing.T) {
	h := mustH(t, 4, -0.4, 0.9, "ZIII", -0.7, "IZII", 0.5, "ZZII", 0.45, "IIZZ", 0.3, "XXII",
		-0.35, "IIXX", 0.2, "YYII", 0.25, "ZIZI", 0.15, "IXIX", -0.1, "XIIZ", 0.6, "IIIZ", 0.12, "ZIIX")
	psi := make([]complex128, 16)
	for b := range psi {
		psi[b] = complex(float64(b%3)-0.7, float64(b%2)*0.4)
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
	if len(p.Split) == 0 {
		t.Fatal("the plan has no split; the test needs one")
	}
	sim, err := estimate.NewSimulator(psi, 9, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(4)
	if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
		t.Fatal(err)
	}
	est, err := estimate.Grouped(h, rec, &estimate.Options{Split: p.Split})
	if err != nil {
		t.Fatal(err)
	}
	cert, err := CertifyPlan(h, p, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, form := range []EmpiricalForm{Pooled, PerGroupAMS, PerGroupMP, Residual} {
		db, err := Empirical(h, rec, 0.05, &EmpiricalOptions{Form: form, Split: p.Split})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(db.Energy-est.Energy) > 1e-12 {
			t.Errorf("%v: Energy %.15g, Grouped with the split %.15g", form, db.Energy, est.Energy)
		}
		widths := 0.0
		for _, g := range db.Groups {
			widths += float64(g.Samples) * 2 * g.Half
		}
		if !(db.Radius > 0) || db.Radius > widths*(1+1e-12) {
			t.Errorf("%v: Radius %g, want in (0, %g]", form, db.Radius, widths)
		}
		// Each group's half-width is Σ_i |h_i| α_{ig}/m_g, so
		// Σ_g m_g Half_g² = V of the certificate (MATH.md §2.5).
		v := 0.0
		for _, g := range db.Groups {
			v += float64(g.Samples) * g.Half * g.Half
		}
		if math.Abs(v-cert.Variance) > 1e-12*cert.Variance {
			t.Errorf("%v: Σ m_g Half_g² = %.15g, certificate's V = %.15g", form, v, cert.Variance)
		}
	}
}

// TestSplitVarianceSimulated checks the split estimator's spread against
// its exact variance Var(Ê) = Σ_g Var(O_g)/m_g (MATH.md §2.5), computed by
// MeritOf (PlanValue/M, itself checked against dense matrices in
// TestMeritOfH2Outside): over R = 400 seeded simulations of an overlap plan
// on a 4-qubit state, the sample variance of the estimates and the mean of
// the squared standard errors must lie within 30% of it, and the certified
// bound at δ = 0.05 must hold in all but at most 40 runs. False-failure
// rates: the sample variance of 400 near-normal estimates has relative
// standard deviation sqrt(2/399) ≈ 0.071, so 30% is 4.2σ (about 3·10^−5);
// the mean of the squared standard errors (every setting has ≥ 2 shots, so
// each is unbiased) varies less; a bound failing with probability 0.05
// fails in more than 40 of 400 runs with probability 1.4·10^−5 (binomial
// tail), and less often when it fails less.
func TestSplitVarianceSimulated(t *testing.T) {
	h := mustH(t, 4, -0.4, 0.9, "ZIII", -0.7, "IZII", 0.5, "ZZII", 0.45, "IIZZ", 0.3, "XXII",
		-0.35, "IIXX", 0.2, "YYII", 0.25, "ZIZI", 0.15, "IXIX", -0.1, "XIIZ", 0.6, "IIIZ", 0.12, "ZIIX")
	psi := make([]complex128, 16)
	for b := range psi {
		psi[b] = complex(math.Cos(float64(3*b)), math.Sin(float64(b*b)))
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
	const budget = 200
	p, err := allocate.Run(h, budget, &allocate.Overlap{Proxy: px}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range p.Shots {
		if k < 2 {
			t.Fatalf("a setting with %d shots; the test needs ≥ 2 each", k)
		}
	}
	m, err := MeritOf(h, p, psi)
	if err != nil {
		t.Fatal(err)
	}
	want := m.PlanValue / budget
	cert, err := CertifyPlan(h, p, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	exact := h.Offset()
	for i := range h.Len() {
		exact += h.Coeff(i) * hamiltonian.Expectation(psi, h.Pauli(i))
	}
	const runs = 400
	var e []float64
	se2, fails := 0.0, 0
	for r := range runs {
		sim, err := estimate.NewSimulator(psi, uint64(1000+r), nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(4)
		if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
			t.Fatal(err)
		}
		res, err := estimate.Grouped(h, rec, &estimate.Options{Split: p.Split})
		if err != nil {
			t.Fatal(err)
		}
		e = append(e, res.Energy)
		se2 += res.StdErr * res.StdErr / runs
		if math.Abs(res.Energy-exact) > cert.Bound {
			fails++
		}
	}
	mean := 0.0
	for _, v := range e {
		mean += v / runs
	}
	v := 0.0
	for _, x := range e {
		v += (x - mean) * (x - mean) / (runs - 1)
	}
	if math.Abs(v/want-1) > 0.3 {
		t.Errorf("sample variance of the estimates %.4g, exact %.4g", v, want)
	}
	if math.Abs(se2/want-1) > 0.3 {
		t.Errorf("mean squared standard error %.4g, exact variance %.4g", se2, want)
	}
	if fails > 40 {
		t.Errorf("the certified bound ±%.4g failed in %d of %d runs", cert.Bound, fails, runs)
	}
}
