package estimate_test

import (
	"bytes"
	"math"
	"math/bits"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// pauliExpectation returns ⟨ψ|P|ψ⟩ by the action of P on basis states:
// P = i^(#Y)·X^x·Z^z qubit by qubit (Y = iXZ), so P|a⟩ =
// i^(#Y)·(−1)^|a∧z|·|a⊕x⟩ (Nielsen & Chuang §2.1.3; common practice).
func pauliExpectation(psi []complex128, p pauli.String) float64 {
	xw, zw := p.Words()
	x, z := xw[0], zw[0]
	ph := []complex128{1, 1i, -1, -1i}[bits.OnesCount64(x&z)&3]
	var e complex128
	for a, v := range psi {
		sign := complex(float64(1-2*(bits.OnesCount64(uint64(a)&z)&1)), 0)
		e += cmplx.Conj(psi[uint64(a)^x]) * ph * sign * v
	}
	return real(e)
}

func randomState(rng *rand.Rand, n int) []complex128 {
	psi := make([]complex128, 1<<n)
	norm := 0.0
	for a := range psi {
		psi[a] = complex(rng.NormFloat64(), rng.NormFloat64())
		norm += real(psi[a])*real(psi[a]) + imag(psi[a])*imag(psi[a])
	}
	for a := range psi {
		psi[a] /= complex(math.Sqrt(norm), 0)
	}
	return psi
}

// TestSimulatorEntangledExpectation checks the simulator's circuit on
// amplitudes: for entangled settings, Σ_b Prob(b)·Sample(P, b) must equal
// ⟨ψ|P|ψ⟩ from the direct action of P for every covered P, within 1e-12
// (rounding of a few hundred products).
func TestSimulatorEntangledExpectation(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	families := [][]string{
		{"XX", "ZZ"},
		{"XXYY", "ZZII", "IIZZ", "YXXY"},
		{"XZX", "ZZZ"},
		{"XYZI", "YXIZ", "ZIXY", "IZYX"},
	}
	for _, f := range families {
		fam := make([]pauli.String, len(f))
		for i, s := range f {
			fam[i] = pauli.MustParse(s)
		}
		s, err := pauli.NewFamilySetting(fam)
		if err != nil {
			t.Fatalf("family %v: %v", f, err)
		}
		n := s.Qubits()
		psi := randomState(rng, n)
		sim, err := estimate.NewSimulator(psi, 1, nil)
		if err != nil {
			t.Fatal(err)
		}
		prob := sim.Probabilities(nil, s)
		// Every string on n qubits that s covers.
		for code := range 1 << (2 * n) {
			ls := make([]pauli.Letter, n)
			for q := range ls {
				ls[q] = pauli.Letter(code >> (2 * q) & 3)
			}
			p := pauli.FromLetters(ls)
			if !s.Covers(p) {
				continue
			}
			got := 0.0
			for b, pr := range prob {
				got += pr * float64(s.Sample(p, pauli.Bits{uint64(b)}))
			}
			if want := pauliExpectation(psi, p); math.Abs(got-want) > 1e-12 {
				t.Errorf("setting %s, string %s: Σ_b Prob(b)·Sample = %.15f, want ⟨ψ|P|ψ⟩ = %.15f", s, p, got, want)
			}
		}
	}
}

// TestSimulatorBellState: the Bell state (|00⟩+|11⟩)/√2 has XX = ZZ = +1 and
// YY = −1 with certainty (Nielsen & Chuang §2.6), so every shot of the
// entangled setting XX|ZZ must read those values.
func TestSimulatorBellState(t *testing.T) {
	r := complex(1/math.Sqrt2, 0)
	sim, err := estimate.NewSimulator([]complex128{r, 0, 0, r}, 5, nil)
	if err != nil {
		t.Fatal(err)
	}
	s := pauli.MustParseSetting("XX|ZZ")
	rec := estimate.NewRecords(2)
	if err := sim.Run([]pauli.Setting{s}, []int{50}, rec); err != nil {
		t.Fatal(err)
	}
	for k, sh := range rec.Shots() {
		for p, want := range map[string]int{"XX": 1, "ZZ": 1, "YY": -1} {
			if got := s.Sample(pauli.MustParse(p), sh.Outcome); got != want {
				t.Fatalf("shot %d outcome %s: %s sample %d, want %d", k, sh.Outcome.Format(2), p, got, want)
			}
		}
	}
}

// TestQASMEntangled checks the exported program of an entangled setting:
// its circuit's gates in order, in OpenQASM 3 standard-library names, then
// the measurement.
func TestQASMEntangled(t *testing.T) {
	s := pauli.MustParseSetting("XXX|ZZI|IZZ")
	got := string(estimate.AppendQASM(nil, s))
	var want strings.Builder
	for _, g := range s.Circuit().Gates() {
		name := map[pauli.GateKind]string{pauli.GateH: "h", pauli.GateS: "s", pauli.GateSdg: "sdg", pauli.GateCNOT: "cx", pauli.GateCZ: "cz"}[g.Kind]
		want.WriteString(name + " q[" + itoa(g.Q0) + "]")
		if g.Kind.TwoQubit() {
			want.WriteString(", q[" + itoa(g.Q1) + "]")
		}
		want.WriteString(";\n")
	}
	want.WriteString("c = measure q;\n")
	if !strings.HasSuffix(got, want.String()) || !strings.Contains(got, "// setting XXX|ZZI|IZZ;") {
		t.Errorf("AppendQASM(%s) =\n%s\nwant it to end with\n%s", s, got, want.String())
	}
	if s.Circuit().TwoQubitGates() == 0 || !strings.Contains(got, "cx q[") && !strings.Contains(got, "cz q[") {
		t.Errorf("AppendQASM(%s) has no entangling gate:\n%s", s, got)
	}
}

func itoa(v int) string {
	return string(rune('0' + v)) // qubits below 10 here
}

// TestRecordsEntangledRoundTrip writes records with entangled and local
// settings as CSV and JSON and reads them back.
func TestRecordsEntangledRoundTrip(t *testing.T) {
	rec := estimate.NewRecords(3)
	set := []pauli.Setting{pauli.MustParseSetting("XXI|ZZI|IIZ"), pauli.MustParseSetting("XYZ"), pauli.MustParseSetting("XXX|ZZI|IZZ")}
	rng := rand.New(rand.NewPCG(1, 2))
	for k := range 20 {
		if err := rec.Add(set[k%3], pauli.Bits{rng.Uint64() & 7}); err != nil {
			t.Fatal(err)
		}
	}
	var buf bytes.Buffer
	if err := estimate.WriteCSV(&buf, rec); err != nil {
		t.Fatal(err)
	}
	back, err := estimate.ReadCSV(&buf, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !back.Equal(rec) {
		t.Errorf("CSV round trip differs")
	}
	buf.Reset()
	if err := estimate.WriteJSON(&buf, rec); err != nil {
		t.Fatal(err)
	}
	back, err = estimate.ReadJSON(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if !back.Equal(rec) {
		t.Errorf("JSON round trip differs")
	}
}

// TestGroupedEntangledReference checks the grouped estimator on records of
// mixed local and entangled settings (groups of one and of several shots)
// against a direct evaluation of MATH.md §2 and of the standard error
// documented at [estimate.Grouped], computed shot by shot with
// Setting.Sample; tolerance 1e-12.
func TestGroupedEntangledReference(t *testing.T) {
	h, err := hamiltonian.New(3, 0.5, []hamiltonian.Term{
		{Pauli: pauli.MustParse("XXI"), Coeff: 0.7},
		{Pauli: pauli.MustParse("ZZI"), Coeff: -0.4},
		{Pauli: pauli.MustParse("YYI"), Coeff: 0.3},
		{Pauli: pauli.MustParse("IZZ"), Coeff: 0.2},
		{Pauli: pauli.MustParse("XYZ"), Coeff: -0.6},
		{Pauli: pauli.MustParse("IIZ"), Coeff: 0.25},
		{Pauli: pauli.MustParse("ZIZ"), Coeff: 0.15},
	})
	if err != nil {
		t.Fatal(err)
	}
	set := []pauli.Setting{
		pauli.MustParseSetting("XXI|ZZI|IIZ"),
		pauli.MustParseSetting("XYZ"),
		pauli.MustParseSetting("XXX|ZZI|IZZ"),
		pauli.MustParseSetting("ZZZ"),
		pauli.MustParseSetting("YYI|XXI|IIZ"),
	}
	rng := rand.New(rand.NewPCG(9, 10))
	rec := estimate.NewRecords(3)
	counts := []int{7, 5, 1, 4, 1}
	for k, s := range set {
		for range counts[k] {
			if err := rec.Add(s, pauli.Bits{rng.Uint64() & 7}); err != nil {
				t.Fatal(err)
			}
		}
	}
	res, err := estimate.Grouped(h, rec, nil)
	if err != nil {
		t.Fatal(err)
	}
	m := h.Len()
	cover := make([]int, m)
	sum := make([]float64, m)
	for _, sh := range rec.Shots() {
		for i := range m {
			if p := h.Pauli(i); sh.Setting.Covers(p) {
				cover[i]++
				sum[i] += float64(sh.Setting.Sample(p, sh.Outcome))
			}
		}
	}
	energy := h.Offset()
	a := make([]float64, m)
	means := make([]float64, m)
	for i := range m {
		if res.Cover[i] != cover[i] {
			t.Errorf("Cover[%d] (%s) = %d, want %d", i, h.Pauli(i), res.Cover[i], cover[i])
		}
		if cover[i] == 0 {
			continue
		}
		means[i] = sum[i] / float64(cover[i])
		a[i] = h.Coeff(i) / float64(cover[i])
		energy += h.Coeff(i) * means[i]
	}
	if math.Abs(res.Energy-energy) > 1e-12 {
		t.Errorf("Energy = %.15f, want %.15f", res.Energy, energy)
	}
	// Standard error: Σ_g m_g·(sample variance of Z_n) for groups of
	// several shots, the squared leave-one-out residual for one-shot
	// groups, and h_i²/N_i²·1 for terms seen once.
	v := 0.0
	for i := range m {
		if cover[i] == 1 {
			v += a[i] * a[i]
		}
	}
	for g := range rec.Groups() {
		s := rec.Setting(g)
		ng := rec.GroupLen(g)
		zs := make([]float64, ng)
		for j := range ng {
			b := rec.Outcome(g, j)
			for i := range m {
				p := h.Pauli(i)
				if !s.Covers(p) {
					continue
				}
				smp := float64(s.Sample(p, b))
				if ng > 1 {
					zs[j] += a[i] * smp
				} else if n := cover[i]; n > 1 {
					loo := (sum[i] - smp) / float64(n-1)
					zs[j] += h.Coeff(i) / float64(n) * (smp - loo)
				}
			}
		}
		if ng > 1 {
			mean := 0.0
			for _, z := range zs {
				mean += z / float64(ng)
			}
			ss := 0.0
			for _, z := range zs {
				ss += (z - mean) * (z - mean)
			}
			v += float64(ng) * ss / float64(ng-1)
		} else {
			v += zs[0] * zs[0]
		}
	}
	if math.Abs(res.StdErr-math.Sqrt(v)) > 1e-12 {
		t.Errorf("StdErr = %.15f, want %.15f", res.StdErr, math.Sqrt(v))
	}
}

// TestEntangledNeedsLocal: the estimators that read letters refuse
// entangled settings with an error that names the setting.
func TestEntangledNeedsLocal(t *testing.T) {
	h, _ := hamiltonian.New(2, 0, []hamiltonian.Term{{Pauli: pauli.MustParse("XX"), Coeff: 1}})
	rec := estimate.NewRecords(2)
	_ = rec.Add(pauli.MustParseSetting("XX|ZZ"), pauli.Bits{0})
	if _, err := estimate.UniformShadow(h, rec, nil); err == nil || !strings.Contains(err.Error(), "XX|ZZ") {
		t.Errorf("UniformShadow on an entangled setting: error %v, want one naming XX|ZZ", err)
	}
	if _, err := estimate.Grouped(h, rec, &estimate.Options{Readout: []estimate.Readout{{}, {}}}); err == nil {
		t.Errorf("Grouped with readout mitigation on an entangled setting: no error")
	}
	if _, err := estimate.EigenState(pauli.MustParseSetting("XX|ZZ"), pauli.Bits{0}); err == nil {
		t.Errorf("EigenState of an entangled setting: no error")
	}
}

func jwHamiltonian(t *testing.T, name string) *hamiltonian.Hamiltonian {
	t.Helper()
	h, err := hamiltoniantest.Molecule(name, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// TestEntangledPlansUnbiased plans 200 shots with the strategies that
// measure generally commuting groups, for the ground states of H2 and LiH
// (Jordan–Wigner, 4 and 12 qubits), simulates them and estimates with the
// grouped estimator, 400 times (the plans are deterministic; one seeded
// simulator draws every run). The mean estimate must lie within 4 standard
// errors of the estimator's expectation: the exact energy of the simulated
// state less the terms the plan never covers. The simulated ground energy
// is also checked against the molecule's full-CI energy (psi4,
// hamiltonian/hamiltoniantest/energies.json via hamiltoniantest.FullCI) to 1e-8 hartree. For a
// normal mean the false-failure rate is
// 6e-5 per case. The simulator's cache keeps each setting's distribution,
// so the 400 runs cost one distribution per setting.
func TestEntangledPlansUnbiased(t *testing.T) {
	if testing.Short() {
		t.Skip("400 repetitions per plan")
	}
	cases := []struct{ name, path string }{
		{"H2", hamiltoniantest.H2},
		{"LiH", hamiltoniantest.LiH},
	}
	for _, c := range cases {
		h := jwHamiltonian(t, c.path)
		sim, ev, err := estimate.GroundStateSimulator(h, 21, nil)
		if err != nil {
			t.Fatal(err)
		}
		fci, err := hamiltoniantest.FullCI(c.path)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(ev.Energy-fci) > 1e-8 {
			t.Fatalf("%s: ground energy %v, want the full-CI %v", c.name, ev.Energy, fci)
		}
		for _, name := range []string{"sorted-gc", "greedy-gc"} {
			a, err := allocate.ByName(name, 0)
			if err != nil {
				t.Fatal(err)
			}
			plan, err := allocate.Run(h, 200, a, nil)
			if err != nil {
				t.Fatal(err)
			}
			entangled := 0
			for _, s := range plan.Settings {
				if !s.IsLocal() {
					entangled++
				}
			}
			if entangled == 0 {
				t.Fatalf("%s, %s: plan has no entangled setting", c.name, name)
			}
			// The plan is fixed, so the estimator's mean is the energy
			// less the terms it never covers: target = E − Σ_{N_i=0} h_i⟨P_i⟩,
			// with ⟨P_i⟩ from the state vector.
			target := ev.Energy
			for i, n := range plan.Cover {
				if n == 0 {
					target -= h.Coeff(i) * pauliExpectation(ev.State, h.Pauli(i))
				}
			}
			const reps = 400
			es := make([]float64, 0, reps)
			for range reps {
				rec := estimate.NewRecords(h.Qubits())
				if err := simRun(sim, plan, rec); err != nil {
					t.Fatal(err)
				}
				res, err := estimate.Grouped(h, rec, nil)
				if err != nil {
					t.Fatal(err)
				}
				es = append(es, res.Energy)
			}
			mean, sd := meanSD(es)
			se := sd / math.Sqrt(reps)
			t.Logf("%s, %s (%d settings, %d entangled): mean %.5f, target %.5f (exact energy %.5f), %.2f standard errors apart; spread %.4f",
				c.name, name, len(plan.Settings), entangled, mean, target, ev.Energy, (mean-target)/se, sd)
			if math.Abs(mean-target) > 4*se {
				t.Errorf("%s, %s: mean %v over %d runs is %.1f standard errors from %v, want at most 4",
					c.name, name, mean, reps, math.Abs(mean-target)/se, target)
			}
		}
	}
}

func simRun(sim *estimate.Simulator, plan *allocate.Plan, rec *estimate.Records) error {
	return sim.Run(plan.Settings, plan.Shots, rec)
}

// TestExportQASMEntangledManifest: the manifest of exported programs lists
// entangled settings in their text form, and ReadManifest reads them back.
func TestExportQASMEntangledManifest(t *testing.T) {
	settings := []pauli.Setting{pauli.MustParseSetting("XXX|ZZI|IZZ"), pauli.MustParseSetting("XYZ")}
	dir := t.TempDir() + "/progs"
	if err := estimate.ExportQASM(dir, settings, []int{3, 4}); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(dir + "/" + estimate.ManifestName)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	got, shots, err := estimate.ReadManifest(f)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 2 || !got[0].Equal(settings[0]) || !got[1].Equal(settings[1]) || shots[0] != 3 || shots[1] != 4 {
		t.Errorf("ReadManifest = %v %v, want %v [3 4]", got, shots, settings)
	}
}

// TestImportanceSamplingEntangled: on the Bell state (|00⟩+|11⟩)/√2 the
// entangled setting XX|ZZ reads XX = ZZ = +1 and YY = −1 with certainty
// (Nielsen & Chuang §2.6), so with H = XX + YY + ZZ (‖h‖₁ = 3) a shot that
// drew XX or ZZ has value +3 and one that drew YY has −3 (MATH.md §3.5),
// whatever the outcome. Drawing XX, YY, ZZ, ZZ in turn, gives
// an exactly known mean.
func TestImportanceSamplingEntangled(t *testing.T) {
	h, err := hamiltonian.New(2, 0, []hamiltonian.Term{
		{Pauli: pauli.MustParse("XX"), Coeff: 1},
		{Pauli: pauli.MustParse("YY"), Coeff: 1},
		{Pauli: pauli.MustParse("ZZ"), Coeff: 1},
	})
	if err != nil {
		t.Fatal(err)
	}
	r := complex(1/math.Sqrt2, 0)
	sim, err := estimate.NewSimulator([]complex128{r, 0, 0, r}, 11, nil)
	if err != nil {
		t.Fatal(err)
	}
	s := pauli.MustParseSetting("XX|ZZ")
	rec := estimate.NewRecords(2)
	if err := sim.Run([]pauli.Setting{s}, []int{40}, rec); err != nil {
		t.Fatal(err)
	}
	drawn := make([]int, 40)
	want := 0.0
	for k := range drawn {
		drawn[k] = []int{0, 1, 2, 2}[k%4]
		want += []float64{3, -3, 3, 3}[k%4] / 40
	}
	res, err := estimate.ImportanceSampling(h, rec, drawn, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Each value is ±3 exactly; the mean of 40 of them is exact to 1e-12.
	if math.Abs(res.Energy-want) > 1e-12 {
		t.Errorf("ImportanceSampling energy = %v, want %v", res.Energy, want)
	}
	for i, m := range []float64{1, -1, 1} {
		if res.Means[i] != m {
			t.Errorf("ImportanceSampling Means[%d] = %v, want %v", i, res.Means[i], m)
		}
	}
}
