package guarantee

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
)

// gcSplitH is an invented 4-qubit Hamiltonian of the shape of a small
// molecule's (number, hopping and exchange terms): the overlap-gc strategy
// splits its coefficients between entangled settings.
func gcSplitH(t *testing.T) *hamiltonian.Hamiltonian {
	return mustH(t, 4, -0.3,
		0.8, "ZIII", 0.8, "IZII", -0.45, "IIZI", -0.45, "IIIZ",
		0.17, "ZZII", 0.18, "IIZZ", 0.12, "ZIZI", 0.12, "IZIZ", 0.16, "ZIIZ", 0.16, "IZZI",
		-0.045, "XXYY", -0.045, "YYXX", 0.045, "XYYX", 0.045, "YXXY",
		0.21, "XXII", 0.21, "YYII", -0.13, "IIXX", -0.13, "IIYY", 0.07, "XZXI", 0.07, "YZYI")
}

// TestCertifyOverlapGCVariance recomputes the certificate's V of
// overlap-gc plans by the plain formula of MATH.md §2.5,
// V = Σ_g (Σ_{i covered by g} |h_i| α_{ig})²/m_g with α_{ig} the split's
// weight for a listed term and m_g/N_i otherwise, the covers found by
// Setting.Covers string by string, and checks the worked relation
// Radius = sqrt(2V·ln(2/δ)) (Hoeffding, MATH.md §3.1). Both sum the same
// few dozen products in different orders: 1e-12 relative.
func TestCertifyOverlapGCVariance(t *testing.T) {
	h := gcSplitH(t)
	for _, budget := range []int{10, 100, 1001} {
		p, err := allocate.Run(h, budget, &allocate.OverlapGC{}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if p.Split.Entries() == 0 {
			t.Fatalf("budget %d: no split", budget)
		}
		settings, shots := p.Distinct()
		n := make([]int, h.Len())
		for k, s := range settings {
			for i := range h.Len() {
				if s.Covers(h.Pauli(i)) {
					n[i] += shots[k]
				}
			}
		}
		listed := p.Split.Listed(h.Len())
		want := 0.0
		for k, s := range settings {
			w := map[int]float64{}
			for _, gr := range p.Split {
				if gr.Setting.Equal(s) {
					for j, i := range gr.Terms {
						w[i] = gr.Weights[j]
					}
				}
			}
			load := 0.0
			for i := range h.Len() {
				if !s.Covers(h.Pauli(i)) {
					continue
				}
				a := float64(shots[k]) / float64(n[i])
				if listed[i] {
					a = w[i]
				}
				load += math.Abs(h.Coeff(i)) * a
			}
			want += load * load / float64(shots[k])
		}
		const delta = 0.05
		c, err := CertifyPlan(h, p, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(c.Variance-want) > 1e-12*want {
			t.Errorf("budget %d: V = %.15g, plain formula %.15g", budget, c.Variance, want)
		}
		if r := math.Sqrt(2 * want * math.Log(2/delta)); math.Abs(c.Radius-r) > 1e-12*r {
			t.Errorf("budget %d: radius %.15g, sqrt(2V ln(2/δ)) = %.15g", budget, c.Radius, r)
		}
	}
}

// TestOverlapGCCertificateSimulated checks MeritOf on an overlap-gc plan
// against the Pauli matrices, then runs the plan (a state proxy
// of the simulated state, 300 shots) 400 times through the simulator and
// the split estimator and counts the runs whose error exceeds the a-priori
// certified bound (δ = 0.05) and the data bound of Empirical with the
// split (δ = 0.05). A bound that fails with probability at most 0.05
// fails in more than 40 of 400 runs with probability below 1.4·10^−5
// (binomial tail, as in TestSplitVarianceSimulated): the false-failure
// rate of each check.
func TestOverlapGCCertificateSimulated(t *testing.T) {
	h := gcSplitH(t)
	psi := make([]complex128, 16)
	for b := range psi {
		psi[b] = complex(math.Cos(float64(5*b+1)), math.Sin(float64(b*b+2)))
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
	p, err := allocate.Run(h, 300, &allocate.OverlapGC{Proxy: px}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if p.Split.Entries() == 0 {
		t.Fatal("no split")
	}
	cert, err := CertifyPlan(h, p, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	// MeritOf's PlanValue against M·Σ_g Var(O_g)/m_g with
	// O_g = Σ_i α_{ig} h_i P_i applied to ψ string by string
	// (hamiltoniantest.ApplyString, the Pauli matrices), Var = ‖O_gψ‖² −
	// ⟨ψ|O_g|ψ⟩² (O_g Hermitian); a few hundred products: 1e-10 relative.
	m, err := MeritOf(h, p, psi)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	cover := make([]int, h.Len())
	for k, s := range settings {
		for i := range h.Len() {
			if s.Covers(h.Pauli(i)) {
				cover[i] += shots[k]
			}
		}
	}
	listed := p.Split.Listed(h.Len())
	total, planValue := 0, 0.0
	for k, s := range settings {
		total += shots[k]
		w := map[int]float64{}
		for _, gr := range p.Split {
			if gr.Setting.Equal(s) {
				for j, i := range gr.Terms {
					w[i] = gr.Weights[j]
				}
			}
		}
		o := make([]complex128, len(psi))
		for i := range h.Len() {
			if !s.Covers(h.Pauli(i)) {
				continue
			}
			a := float64(shots[k]) / float64(cover[i])
			if listed[i] {
				a = w[i]
			}
			for b, v := range hamiltoniantest.ApplyString(h.Pauli(i), psi) {
				o[b] += complex(a*h.Coeff(i), 0) * v
			}
		}
		var sq, mean float64
		for b, v := range o {
			sq += real(v)*real(v) + imag(v)*imag(v)
			mean += real(complex(real(psi[b]), -imag(psi[b])) * v)
		}
		planValue += (sq - mean*mean) / float64(shots[k])
	}
	planValue *= float64(total)
	if math.Abs(m.PlanValue-planValue) > 1e-10*planValue {
		t.Errorf("MeritOf PlanValue %.15g, from the Pauli matrices %.15g", m.PlanValue, planValue)
	}
	exact := h.Offset()
	for i := range h.Len() {
		exact += h.Coeff(i) * hamiltonian.Expectation(psi, h.Pauli(i))
	}
	const runs = 400
	certFails, dataFails := 0, 0
	for r := range runs {
		sim, err := estimate.NewSimulator(psi, uint64(7000+r), nil)
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
		if math.Abs(res.Energy-exact) > cert.Bound {
			certFails++
		}
		d, err := Empirical(h, rec, 0.05, &EmpiricalOptions{Split: p.Split})
		if err != nil {
			t.Fatal(err)
		}
		// The same estimate summed in another order (as in
		// TestEmpiricalSplitEnergy).
		if math.Abs(d.Energy-res.Energy) > 1e-12 {
			t.Fatalf("run %d: data bound about %v, the split estimate is %v", r, d.Energy, res.Energy)
		}
		if math.Abs(res.Energy-exact) > d.Bound {
			dataFails++
		}
		if r == 0 {
			// Every form of the data bound takes the entangled split: the
			// same estimate and a finite positive radius.
			for _, form := range []EmpiricalForm{Pooled, PerGroupAMS, PerGroupMP, Residual} {
				db, err := Empirical(h, rec, 0.05, &EmpiricalOptions{Form: form, Split: p.Split})
				if err != nil {
					t.Fatalf("%v: %v", form, err)
				}
				if math.Abs(db.Energy-res.Energy) > 1e-12 || !(db.Radius > 0 && db.Radius < math.Inf(1)) {
					t.Errorf("%v: energy %v radius %v, the split estimate %v", form, db.Energy, db.Radius, res.Energy)
				}
			}
		}
	}
	if certFails > 40 {
		t.Errorf("the certified bound ±%.4g failed in %d of %d runs", cert.Bound, certFails, runs)
	}
	if dataFails > 40 {
		t.Errorf("the data bound failed in %d of %d runs", dataFails, runs)
	}
}
