package allocate_test

import (
	"bytes"
	"io"
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/allocate/allocatetest"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// gcSplitHamiltonian is an invented 4-qubit Hamiltonian of the shape of a
// small molecule's: number terms, hopping terms XX, YY and four-qubit
// exchange terms, which commute generally but not qubit-wise.
func gcSplitHamiltonian(t testing.TB) *hamiltonian.Hamiltonian {
	t.Helper()
	return mustH(t, -0.3,
		"ZIII", 0.8, "IZII", 0.8, "IIZI", -0.45, "IIIZ", -0.45,
		"ZZII", 0.17, "IIZZ", 0.18, "ZIZI", 0.12, "IZIZ", 0.12, "ZIIZ", 0.16, "IZZI", 0.16,
		"XXYY", -0.045, "YYXX", -0.045, "XYYX", 0.045, "YXXY", 0.045,
		"XXII", 0.21, "YYII", 0.21, "IIXX", -0.13, "IIYY", -0.13, "XZXI", 0.07, "YZYI", 0.07)
}

// TestOverlapGCSplit checks the plan of overlap-gc on gcSplitHamiltonian:
// it has entangled settings, the split passes Split.Check (every group's
// setting covers its terms, weights finite and non-negative), each listed
// term's weights add up to one and it is listed only under settings that
// cover it, and a term that two or more measured settings cover is listed
// (otherwise the estimator's implicit weights m_g/N_i would apply).
func TestOverlapGCSplit(t *testing.T) {
	h := gcSplitHamiltonian(t)
	for _, budget := range []int{3, 10, 100, 1001} {
		p, err := allocate.Run(h, budget, &allocate.OverlapGC{}, nil)
		if err != nil {
			t.Fatal(err)
		}
		ent := 0
		for _, s := range p.Settings {
			if !s.IsLocal() {
				ent++
			}
		}
		if ent == 0 {
			t.Fatalf("budget %d: no entangled setting in %v", budget, p.Settings)
		}
		if err := p.Split.Check(h, p.Settings, p.Shots); err != nil {
			t.Fatalf("budget %d: %v", budget, err)
		}
		sum := make([]float64, h.Len())
		for _, gr := range p.Split {
			for k, i := range gr.Terms {
				if !gr.Setting.Covers(h.Pauli(i)) {
					t.Errorf("budget %d: %s listed under %s, which does not cover it", budget, h.Pauli(i), gr.Setting)
				}
				sum[i] += gr.Weights[k]
			}
		}
		listed := p.Split.Listed(h.Len())
		for i := range h.Len() {
			covers := 0
			for k, s := range p.Settings {
				if p.Shots[k] > 0 && s.Covers(h.Pauli(i)) {
					covers++
				}
			}
			if covers >= 2 && !listed[i] {
				t.Errorf("budget %d: %s is covered by %d settings but not listed", budget, h.Pauli(i), covers)
			}
			if listed[i] && math.Abs(sum[i]-1) > 1e-12 {
				t.Errorf("budget %d: the weights of %s add up to %.17g", budget, h.Pauli(i), sum[i])
			}
		}
	}
}

func TestConformanceOverlapGC(t *testing.T) {
	allocatetest.Test(t, func(uint64) allocate.Allocator { return &allocate.OverlapGC{} }, nil)
}

func TestConformanceOverlapGCProxy(t *testing.T) {
	// A basis-state proxy of 70 qubits fits every case of the suite.
	allocatetest.Test(t, func(uint64) allocate.Allocator {
		return &allocate.OverlapGC{Proxy: allocate.BasisProxy{Bits: pauli.Bits{0b1011, 0}}}
	}, nil)
}

// TestOverlapGCChecks checks that bad knobs and proxies are refused with
// an error that names the problem.
func TestOverlapGCChecks(t *testing.T) {
	h := gcSplitHamiltonian(t)
	psi := make([]complex128, 8)
	psi[0] = 1
	three, err := allocate.NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		a    *allocate.OverlapGC
		want string
	}{
		{&allocate.OverlapGC{Proxy: three}, "overlap-gc: proxy state has 3 qubits, Hamiltonian has 4"},
		{&allocate.OverlapGC{Proxy: badProxy{}}, "outside [−1, 1]"},
		{&allocate.OverlapGC{Proxy: allocate.BasisProxy{}}, "proxy basis state has 0 words"},
		{&allocate.OverlapGC{Floor: 1.5}, "floor 1.5 is not in (0, 1]"},
		{&allocate.OverlapGC{Rounds: -1}, "negative round count"},
	} {
		if _, err := allocate.Run(h, 10, c.a, nil); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("Run = %v, want an error containing %q", err, c.want)
		}
	}
}

// TestOverlapGCProxyCovariance checks the proxy's covariances, which need
// the sign of the product of two commuting strings, on a case solved by
// hand (textbook Pauli algebra). H = 1·XX + 1·YY + 0.9·ZI + 0.9·IZ:
// sorted-gc groups {XX, YY} (entangled) and {ZI, IZ} (local), and the
// extension adds nothing (ZI and IZ anticommute with XX). In the Bell
// state (|00⟩ + |11⟩)/√2, ⟨XX⟩ = 1, ⟨YY⟩ = −1, ⟨ZZ⟩ = 1, and
// XX·YY = −ZZ, so Cov(XX, YY) = −1 − (1)(−1) = 0 and Var(XX) = Var(YY) =
// 0; Cov(ZI, IZ) = ⟨ZZ⟩ = 1, Var(ZI) = Var(IZ) = 1. With the floor η the
// model's variances are v_1 = η·(1 + 1) and v_2 = 0.81·((1 − η)·4 + η·2),
// and of 1000 shots, one to each group first, the first group gets
// 998·sqrt(v_1)/(sqrt(v_1) + sqrt(v_2)) + 1, within 1 for the rounding.
// With the sign of XX·YY wrong, v_1 would be about 4 and the first group
// would get about 520 shots instead of about 70.
func TestOverlapGCProxyCovariance(t *testing.T) {
	h := mustH(t, 0, "XX", 1.0, "YY", 1.0, "ZI", 0.9, "IZ", 0.9)
	bell := []complex128{complex(1/math.Sqrt2, 0), 0, 0, complex(1/math.Sqrt2, 0)}
	px, err := allocate.NewStateProxy(bell)
	if err != nil {
		t.Fatal(err)
	}
	const eta = 0.01
	p, err := allocate.Run(h, 1000, &allocate.OverlapGC{Proxy: px, Floor: eta}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(p.Settings) != 2 || p.Settings[0].IsLocal() {
		t.Fatalf("settings %v, want an entangled one for XX, YY and a local one", p.Settings)
	}
	a, b := math.Sqrt(2*eta), 0.9*math.Sqrt(4-2*eta)
	want := 1 + 998*a/(a+b)
	if math.Abs(float64(p.Shots[0])-want) > 1 {
		t.Errorf("shots %v, want about %.2f to the XX, YY group", p.Shots, want)
	}
}

// TestPlanFileEntangledSplit writes an overlap-gc plan in both layouts
// (version 3 and the compact version 4) and reads it back: the same
// settings, the same split, and every read-back entangled setting covers
// the same terms with the same signs as the original (its circuit is
// rebuilt from the generators), so the estimate of the read-back plan is
// that of the plan.
func TestPlanFileEntangledSplit(t *testing.T) {
	h := gcSplitHamiltonian(t)
	p, err := allocate.Run(h, 100, &allocate.OverlapGC{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if p.Split.Entries() == 0 {
		t.Fatal("the plan has no split; the test needs one")
	}
	for _, c := range []struct {
		version string
		write   func(io.Writer, *allocate.Plan, uint64) error
	}{
		{`"version": 3`, allocate.WritePlan},
		{`"version": 4`, allocate.WriteCompactPlan},
	} {
		var b bytes.Buffer
		if err := c.write(&b, p, 0); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), c.version) {
			t.Fatalf("want %s:\n%s", c.version, b.String())
		}
		f, err := allocate.ReadPlan(&b)
		if err != nil {
			t.Fatal(err)
		}
		if err := f.Check(h); err != nil {
			t.Fatal(err)
		}
		key := cmp.Comparer(func(a, b interface{ Key() string }) bool { return a.Key() == b.Key() })
		if d := cmp.Diff(p.Split, f.Plan.Split, key); d != "" {
			t.Errorf("%s: split read back differs (-wrote +read):\n%s", c.version, d)
		}
		if d := cmp.Diff(p.Settings, f.Plan.Settings, key); d != "" {
			t.Errorf("%s: settings read back differ (-wrote +read):\n%s", c.version, d)
		}
		for k, s := range f.Plan.Settings {
			for i := range h.Len() {
				_, s0, ok0 := p.Settings[k].Diagonal(h.Pauli(i))
				_, s1, ok1 := s.Diagonal(h.Pauli(i))
				if ok0 != ok1 || s0 != s1 {
					t.Errorf("%s: setting %s: term %s covered %v sign %d, read back %v sign %d", c.version, s, h.Pauli(i), ok0, s0, ok1, s1)
				}
			}
		}
	}
}

func BenchmarkOverlapGC(b *testing.B) {
	benchMoleculePlan(b, func() allocate.Allocator { return &allocate.OverlapGC{} }, benchSettings)
}
