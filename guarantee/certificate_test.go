package guarantee

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/pauli"
)

func settingsOf(ss ...string) []pauli.Setting {
	out := make([]pauli.Setting, len(ss))
	for k, s := range ss {
		out[k] = pauli.MustParseSetting(s)
	}
	return out
}

// A worked example computed by hand from MATH.md §3.1–3.2:
// H = 1·ZI + 0.5·IZ + 0.25·XX − 2·YY, settings ZZ ×3, XX ×1, ZZ ×1.
// N = (4, 4, 1, 0); a = (1/4, 1/8, 1/4); s_ZZ = 3/8, s_XX = 1/4;
// V = 4·(3/8)² + 1·(1/4)² = 0.625; ‖h'‖_1 = 1/2 + 1/4 + 1/4 = 1; B_0 = 2.
func TestCertifyWorkedExample(t *testing.T) {
	h := mustH(t, 2, 0.3, 1.0, "ZI", 0.5, "IZ", 0.25, "XX", -2.0, "YY")
	c, err := Certify(h, settingsOf("ZZ", "XX", "ZZ"), []int{3, 1, 1}, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	l := math.Log(2 / 0.05)
	const tol = 1e-14
	checks := []struct {
		name      string
		got, want float64
	}{
		{"Variance", c.Variance, 0.625},
		{"Radius", c.Radius, math.Sqrt(2 * 0.625 * l)},
		{"OneNorm", c.ScaledOneNorm, 1},
		{"RelaxedRadius", c.RelaxedRadius, math.Sqrt(2 * l)},
		{"Bias", c.Bias, 2},
		{"Bound", c.Bound, 2 + math.Sqrt(2*0.625*l)},
		// v_i = a_i Σ_{Q∋i} m_Q s_Q: ZI: 1/4·4·3/8 = 3/8; IZ: 3/16; XX: 1/16.
		{"Share[ZI]", c.Share[0], c.Radius * (3.0 / 8) / 0.625},
		{"Share[IZ]", c.Share[1], c.Radius * (3.0 / 16) / 0.625},
		{"Share[XX]", c.Share[2], c.Radius * (1.0 / 16) / 0.625},
		{"Share[YY]", c.Share[3], 2},
		{"RelaxedShare[IZ]", c.RelaxedShare[1], math.Sqrt(2*l) * 0.25},
	}
	for _, ch := range checks {
		if !near(ch.got, ch.want, tol) {
			t.Errorf("Certify(worked example).%s = %.15g, want %.15g", ch.name, ch.got, ch.want)
		}
	}
	if c.Shots != 5 || c.Settings != 2 || c.Uncovered != 1 {
		t.Errorf("Certify(worked example): Shots, Settings, Uncovered = %d, %d, %d, want 5, 2, 1", c.Shots, c.Settings, c.Uncovered)
	}
	if diff := cmp.Diff([]int{4, 4, 1, 0}, c.Cover); diff != "" {
		t.Errorf("Certify(worked example).Cover mismatch (-want +got):\n%s", diff)
	}
	if c.Top[0].Term != 3 || c.Top[1].Term != 0 {
		t.Errorf("Certify(worked example).Top starts with terms %d, %d, want 3 (YY), 0 (ZI)", c.Top[0].Term, c.Top[1].Term)
	}
}

// A single term measured N times is a mean of N samples in [−1, 1]: the
// certificate's radius must be Hoeffding's, 0.08589388 at N = 1000, δ = 0.05
// (REFERENCE_VALUES.md, "Hoeffding (Hoeffding 1963, Thm 2)").
func TestCertifySingleTermIsHoeffding(t *testing.T) {
	h := mustH(t, 3, 0, 1.0, "IZI")
	c, err := Certify(h, settingsOf("XZY", "ZZZ"), []int{400, 600}, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(c.Radius-0.08589388) > 1e-6 {
		t.Errorf("Certify(IZI, 1000 shots, δ=0.05).Radius = %.9f, want 0.08589388", c.Radius)
	}
}

// The word-wise certificate against the shot-by-shot reference, V ≤ ‖h'‖_1²
// (MATH.md §3.2), Radius ≤ RelaxedRadius, and shares adding up to Bound, over
// random plans (seeded; deterministic).
func TestCertifyRandomPlans(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 200 {
		n := 1 + rng.IntN(7)
		h := randomH(t, rng, n, 1+rng.IntN(25), min(n, 3))
		settings, shots := randomPlan(rng, n, 1+rng.IntN(12), 5)
		c, err := Certify(h, settings, shots, 0.01+0.9*rng.Float64(), nil)
		if err != nil {
			t.Fatal(err)
		}
		v, one, bias := referenceV(h, settings, shots)
		if !near(c.Variance, v, 1e-12) || !near(c.ScaledOneNorm, one, 1e-12) || !near(c.Bias, bias, 1e-12) {
			t.Errorf("trial %d: (V, ‖h'‖_1, B_0) = (%g, %g, %g), reference (%g, %g, %g)", trial, c.Variance, c.ScaledOneNorm, c.Bias, v, one, bias)
		}
		if c.Variance > c.ScaledOneNorm*c.ScaledOneNorm*(1+1e-12) {
			t.Errorf("trial %d: V = %g > ‖h'‖_1² = %g", trial, c.Variance, c.ScaledOneNorm*c.ScaledOneNorm)
		}
		sum := 0.0
		for _, s := range c.Share {
			sum += s
		}
		if !near(sum, c.Bound, 1e-12) {
			t.Errorf("trial %d: Σ Share = %.15g, want Bound %.15g", trial, sum, c.Bound)
		}
	}
}

// FuzzVarianceBelowOneNorm: for any plan, V ≤ ‖h'‖_1² (MATH.md §3.2) and V
// equals the shot-by-shot reference.
func FuzzVarianceBelowOneNorm(f *testing.F) {
	f.Add(uint64(1), uint8(4), uint8(10), uint8(6))
	f.Add(uint64(7), uint8(1), uint8(1), uint8(1))
	f.Add(uint64(99), uint8(8), uint8(40), uint8(20))
	f.Fuzz(func(t *testing.T, seed uint64, n, m, k uint8) {
		nq := 1 + int(n%10)
		rng := rand.New(rand.NewPCG(seed, 3))
		h := randomH(t, rng, nq, 1+int(m%60), min(nq, 4))
		settings, shots := randomPlan(rng, nq, 1+int(k%30), 4)
		c, err := Certify(h, settings, shots, 0.1, nil)
		if err != nil {
			t.Fatal(err)
		}
		if c.Variance > c.ScaledOneNorm*c.ScaledOneNorm*(1+1e-12) {
			t.Fatalf("V = %g > ‖h'‖_1² = %g", c.Variance, c.ScaledOneNorm*c.ScaledOneNorm)
		}
		if v, _, _ := referenceV(h, settings, shots); !near(c.Variance, v, 1e-12) {
			t.Fatalf("V = %g, shot-by-shot reference %g", c.Variance, v)
		}
	})
}

// TestCertifyPlanReference checks CertifyPlan against MATH.md §3.1–3.2
// evaluated independently: cover counts and V shot by shot with covers
// tested letter by letter on the text forms (referenceV), then
// Radius = sqrt(2 V ln(2/δ)), RelaxedRadius = ‖h'‖_1 sqrt(2 ln(2/δ)) and
// Total = Radius + B_0, the number of distinct settings counted by their
// text. A plan split into repeated entries (the same settings, each shot
// count cut in two) must give the same numbers: the certificate depends on
// multiplicities only (§3.1). A plan whose Cover disagrees with its settings
// is refused, naming the term.
func TestCertifyPlanReference(t *testing.T) {
	if !letterCovers("IXIZ", "YXZZ") || letterCovers("IXIZ", "YYZZ") || !letterCovers("II", "XY") {
		t.Fatal("letterCovers disagrees with MATH.md §1 on hand cases")
	}
	const delta = 0.05
	l := math.Log(2 / delta)
	for trial := range 20 {
		rng := rand.New(rand.NewPCG(5, uint64(6+trial)))
		nq := 2 + trial%7
		h := randomH(t, rng, nq, 5+3*trial, min(nq, 3))
		settings, shots := randomPlan(rng, nq, 3+trial, 6)
		for k := range shots {
			shots[k]++ // a Plan's counts are positive
		}
		// Cover counts letter by letter, as the plan carries them.
		cover := make([]int, h.Len())
		distinct := make(map[string]bool)
		total := 0
		for k, s := range settings {
			distinct[s.String()] = true
			total += shots[k]
			for i := range h.Len() {
				if letterCovers(h.Pauli(i).String(), s.String()) {
					cover[i] += shots[k]
				}
			}
		}
		v, one, bias := referenceV(h, settings, shots)
		want := struct{ v, radius, relaxed, total float64 }{v, math.Sqrt(2 * v * l), one * math.Sqrt(2*l), math.Sqrt(2*v*l) + bias}
		p := &allocate.Plan{Qubits: nq, Settings: settings, Shots: shots, Cover: cover}
		// The same plan with every entry split in two (a shot count of 1
		// stays whole): the same multiplicities.
		var ss []pauli.Setting
		var sn []int
		for k, s := range settings {
			if a := shots[k] / 2; a > 0 {
				ss, sn = append(ss, s), append(sn, a)
			}
			ss, sn = append(ss, s), append(sn, shots[k]-shots[k]/2)
		}
		split := &allocate.Plan{Qubits: nq, Settings: ss, Shots: sn, Cover: cover}
		for name, plan := range map[string]*allocate.Plan{"plan": p, "split": split} {
			c, err := CertifyPlan(h, plan, delta, nil)
			if err != nil {
				t.Fatalf("trial %d %s: %v", trial, name, err)
			}
			if c.Shots != total || c.Settings != len(distinct) {
				t.Errorf("trial %d %s: %d shots in %d settings, want %d in %d", trial, name, c.Shots, c.Settings, total, len(distinct))
			}
			if !slices.Equal(c.Cover, cover) {
				t.Errorf("trial %d %s: Cover = %v, letter by letter %v", trial, name, c.Cover, cover)
			}
			for _, x := range []struct {
				what      string
				got, want float64
			}{
				{"Variance", c.Variance, want.v}, {"Radius", c.Radius, want.radius},
				{"RelaxedRadius", c.RelaxedRadius, want.relaxed}, {"Bias", c.Bias, bias}, {"Total", c.Bound, want.total},
			} {
				if !near(x.got, x.want, 1e-12) {
					t.Errorf("trial %d %s: %s = %.15g, reference %.15g", trial, name, x.what, x.got, x.want)
				}
			}
		}
		// A plan made for another Hamiltonian: one cover count off.
		bad := append([]int(nil), cover...)
		bad[len(bad)-1]++
		_, err := CertifyPlan(h, &allocate.Plan{Qubits: nq, Settings: settings, Shots: shots, Cover: bad}, delta, nil)
		if wantErr := fmt.Sprintf("term %d ", len(bad)-1); err == nil || !strings.Contains(err.Error(), wantErr) {
			t.Errorf("trial %d: plan with a wrong cover count: error %v, want one naming %q", trial, err, wantErr)
		}
	}
}

func TestCertifyErrors(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI", 0.5, "XX")
	other := mustH(t, 2, 0, 1.0, "ZI", 0.5, "YY")
	okPlan := &allocate.Plan{Qubits: 2, Settings: settingsOf("ZZ"), Shots: []int{3}, Cover: []int{3, 0}}
	cases := []struct {
		name string
		err  error
		want string
	}{
		{"δ=0", second(Certify(h, settingsOf("ZZ"), []int{1}, 0, nil)), "δ = 0"},
		{"δ=1", second(Certify(h, settingsOf("ZZ"), []int{1}, 1, nil)), "δ = 1"},
		{"lengths", second(Certify(h, settingsOf("ZZ", "XX"), []int{1}, 0.1, nil)), "2 settings but 1 shot counts"},
		{"width", second(Certify(h, settingsOf("ZZ", "XXX"), []int{1, 1}, 0.1, nil)), "setting 1 (XXX) has 3 qubits"},
		{"negative", second(Certify(h, settingsOf("ZZ", "XX"), []int{1, -2}, 0.1, nil)), "setting 1 (XX) has negative shot count -2"},
		{"nil plan", second(CertifyPlan(h, nil, 0.1, nil)), "nil plan"},
		{"plan for another Hamiltonian", second(CertifyPlan(other, &allocate.Plan{Qubits: 2, Settings: settingsOf("XX"), Shots: []int{2}, Cover: []int{0, 2}}, 0.1, nil)), "term 1 (YY): plan says 2 covering shots, its settings give 0"},
		{"plan width", second(CertifyPlan(mustH(t, 3, 0, 1.0, "ZII"), okPlan, 0.1, nil)), "plan has 2 qubits, Hamiltonian has 3"},
	}
	for _, c := range cases {
		if c.err == nil || !strings.Contains(c.err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, c.err, c.want)
		}
	}
	if _, err := CertifyPlan(h, okPlan, 0.1, nil); err != nil {
		t.Errorf("CertifyPlan(consistent plan) error %v, want nil", err)
	}
}

func second[T any](_ T, err error) error { return err }

// An empty plan certifies nothing but the bias: every term is uncovered.
func TestCertifyEmptyPlan(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI", -0.5, "XX")
	c, err := Certify(h, nil, nil, 0.1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if c.Radius != 0 || c.Bias != 1.5 || c.Bound != 1.5 || c.Uncovered != 2 {
		t.Errorf("Certify(empty plan) = radius %g, bias %g, total %g, uncovered %d; want 0, 1.5, 1.5, 2", c.Radius, c.Bias, c.Bound, c.Uncovered)
	}
}

// A Hamiltonian with only an identity part has nothing to measure: every
// bound is zero.
func TestCertifyOffsetOnly(t *testing.T) {
	h := mustH(t, 2, 1.5)
	c, err := Certify(h, settingsOf("ZZ"), []int{10}, 0.1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if c.Bound != 0 || len(c.Top) != 0 || c.Optimal.Bound != 0 || !c.Optimal.Exact {
		t.Errorf("Certify(offset only) = total %g, %d top terms, optimal %g (exact %v); want 0, 0, 0, true", c.Bound, len(c.Top), c.Optimal.Bound, c.Optimal.Exact)
	}
}

// Past the storage cap the sums over cover pairs go through the transposed
// settings (coverindex.Letters), term by term in table order instead of
// setting by setting in index order; the certificate must not change
// beyond rounding. Every float of it is built from sums of non-negative
// terms (a_i = |h_i|/N_i, s_Q, V, the loads), and two summation orders of
// k non-negative terms differ by at most 2γ_k relatively (γ_k = ku/(1−ku),
// Higham, Accuracy and Stability of Numerical Algorithms, §4.2); through
// V (s_Q squared), the shares (Radius·a_i·load_i/V) and the square root
// of the radius at most 16γ_{m+G} for m terms and G settings.
func TestCertifyRescanPath(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 9))
	h := randomH(t, rng, 6, 60, 3)
	settings, shots := randomPlan(rng, 6, 40, 3)
	stored, err := Certify(h, settings, shots, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	c, err := newCoverageStoring(h, settings, shots, 10)
	if err != nil {
		t.Fatal(err)
	}
	if c.rows != nil || c.letters == nil {
		t.Fatal("a cap of 10 stored pairs kept the rows; the transposed path is not exercised")
	}
	rescanned := certify(c, 0.05, nil)
	const u = 0x1p-53
	k := float64(h.Len() + len(c.settings))
	rel := 16 * k * u / (1 - k*u)
	if diff := cmp.Diff(stored, rescanned, cmp.Comparer(func(a, b pauli.String) bool { return a.Equal(b) }), cmpopts.EquateApprox(rel, 0)); diff != "" {
		t.Errorf("certificate through the transposed settings differs (-stored +rescanned):\n%s", diff)
	}
}

// The transposed path shares its work among GOMAXPROCS goroutines by
// fixed chunks and sums every term and setting in a fixed order: the
// certificate must be identical, bit for bit, on one, two and three.
func TestCertifyWorkersIdentical(t *testing.T) {
	rng := rand.New(rand.NewPCG(10, 11))
	h := randomH(t, rng, 12, 700, 4)
	settings, shots := randomPlan(rng, 12, 3000, 3)
	run := func(procs int) *Certificate {
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(procs))
		c, err := newCoverageStoring(h, settings, shots, 10)
		if err != nil {
			t.Fatal(err)
		}
		if c.letters == nil {
			t.Fatal("the transposed path is not exercised")
		}
		return certify(c, 0.05, nil)
	}
	one := run(1)
	for _, procs := range []int{2, 3} {
		if diff := cmp.Diff(one, run(procs), cmp.Comparer(func(a, b pauli.String) bool { return a.Equal(b) })); diff != "" {
			t.Errorf("certificate on 1 and %d goroutines differs (-1 +%d):\n%s", procs, procs, diff)
		}
	}
}
