package main

import (
	"flag"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// budgetBaselineResult is the JSON of budget with -baseline.
type budgetBaselineResult struct {
	Proxy    string      `json:"proxy"`
	Baseline string      `json:"baseline"`
	Rows     []budgetRow `json:"strategies"`
}

// TestBudgetBaselineMatchesRounds checks that budget's anytime column with
// -baseline is the anytime budget of the run rounds start makes from the
// same inputs: the state file of rounds start (its settings, shares and
// baseline, read back as every later step reads it) gives an IID, and
// guarantee.AnytimeBudget of that IID in the proxy state of budget must
// give the same σ² and shots. Strategies that take the proxy for their
// shares (sorted, overlap) are among them, so rounds start must plan with
// the same -proxy.
func TestBudgetBaselineMatchesRounds(t *testing.T) {
	dir := t.TempDir()
	const eps, delta = 0.005, 0.05
	h, g, err := readHamAny(h2Dump)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ strategy, proxy, baseline string }{
		{"greedy", "exact", "hf"},
		{"sorted", "exact", "hf"},
		{"overlap", "exact", "exact"},
		{"derand", "hf", "1010"},
		{"sorted-gc", "exact", "none"},
	} {
		name := strings.Join([]string{c.strategy, c.proxy, c.baseline}, "/")
		var res budgetBaselineResult
		okJSON(t, &res, "budget", "-ham", h2Dump, "-eps", fmt.Sprint(eps), "-strategy", c.strategy, "-proxy", c.proxy, "-baseline", c.baseline)
		if len(res.Rows) != 1 || !res.Rows[0].Reachable {
			t.Fatalf("%s: rows %+v", name, res.Rows)
		}
		row := res.Rows[0]
		if (res.Baseline == "none") != (c.baseline == "none") {
			t.Errorf("%s: baseline %q", name, res.Baseline)
		}
		state := filepath.Join(dir, strings.ReplaceAll(name, "/", "-")+".json")
		ok(t, "rounds", "start", "-ham", h2Dump, "-eps", fmt.Sprint(eps), "-strategy", c.strategy, "-proxy", proxyFor(c.strategy, c.proxy), "-baseline", c.baseline, "-o", state)
		raw, err := os.ReadFile(state)
		if err != nil {
			t.Fatal(err)
		}
		r, err := parseRoundsState(state, raw, false)
		if err != nil {
			t.Fatal(err)
		}
		if r.st.Strategy != c.strategy {
			t.Errorf("%s: rounds ran %s", name, r.st.Strategy)
		}
		var total int
		for _, w := range r.st.Weights {
			total += w
		}
		if total != row.Reference || len(r.st.Settings) != row.Settings {
			t.Errorf("%s: rounds' reference plan %d shots, %d settings; budget's %d, %d", name, total, len(r.st.Settings), row.Reference, row.Settings)
		}
		px, err := resolveProxy(c.proxy, h2Dump, h, g, addSectorFlags(flag.NewFlagSet("test", flag.ContinueOnError)))
		if err != nil {
			t.Fatal(err)
		}
		shots, v, err := guarantee.AnytimeBudget(r.d, eps, delta, px.state)
		if err != nil {
			t.Fatal(err)
		}
		if shots != row.Anytime || math.Abs(v-row.AnytimeVariance) > 1e-12*v {
			t.Errorf("%s: budget %d shots (σ² %.15g), AnytimeBudget of the rounds run %d (σ² %.15g)", name, row.Anytime, row.AnytimeVariance, shots, v)
		}
	}
}

// proxyFor is the -proxy of rounds start for the strategy: the strategies
// that take no proxy plan the same without one (rounds start refuses it
// for them, as plan does).
func proxyFor(strategy, proxy string) string {
	a, err := allocate.ByName(strategy, 1)
	if err != nil || !setProxy(a, nil) {
		return "worst"
	}
	return proxy
}

// TestBudgetBaselineBruteForce checks the anytime column with -baseline on
// a two-qubit Hamiltonian against Var X_c computed by brute force with
// dense matrices, outside the Walsh–Hadamard route of the library (MATH.md
// §4.11): for every setting Q of the reference plan (rebuilt as the
// command builds it; π_Q = m_Q/N, f_i = Σ_Q π_Q [P_i ◁ Q]) the terms it
// reads commute and each outcome s_i is P_i's eigenvalue (for an entangled
// setting too, its sign included), so with the 4×4 matrix
// O_Q = Σ_{i◁Q, f_i>0} (h_i/f_i)(P_i − c_i·1),
//
//	E[X_c] = h_0 + C + Σ_Q π_Q ⟨ψ|O_Q|ψ⟩,
//	E[(X_c − h_0 − C)²] = Σ_Q π_Q ‖O_Q ψ‖²,
//
// C = Σ_{f_i>0} h_i c_i. The mean must be the energy ⟨ψ|H|ψ⟩
// (unbiasedness), σ² the variance, and anytime_shots ⌈2 σ² ln(2/δ)/ε²⌉.
// The Pauli matrices are the textbook ones, qubit q the bit q of the
// index. The baseline is the basis state 10 (qubit 0 set): c_i = ±1 for
// the Z-strings, 0 for the others.
func TestBudgetBaselineBruteForce(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h.txt")
	if err := os.WriteFile(ham, []byte("qubits 2\n0.1 II\n0.5 ZI\n-0.3 IZ\n0.2 XX\n0.15 YY\n0.05 ZZ\n0.25 XI\n-0.1 IY\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	amps := filepath.Join(dir, "psi.txt")
	psi := []complex128{complex(0.6, 0.1), complex(-0.3, 0.2), complex(0.5, -0.25), complex(0.2, 0.4)}
	norm := 0.0
	var text strings.Builder
	text.WriteString("shotplan amplitudes 1\nqubits 2\n")
	for k, a := range psi {
		fmt.Fprintf(&text, "%d %.17g %.17g\n", k, real(a), imag(a))
		norm += real(a)*real(a) + imag(a)*imag(a)
	}
	for k := range psi {
		psi[k] /= complex(math.Sqrt(norm), 0)
	}
	if err := os.WriteFile(amps, []byte(text.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	const eps, delta = 0.01, 0.05
	var res budgetBaselineResult
	okJSON(t, &res, "budget", "-ham", ham, "-eps", fmt.Sprint(eps), "-proxy", amps, "-baseline", "10")
	if !strings.Contains(res.Baseline, "basis state 10") {
		t.Errorf("baseline %q", res.Baseline)
	}
	stateProxy, err := allocate.NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	var terms []hamiltonian.Term
	var mats [][4][4]complex128
	var c []float64
	for _, tm := range h.Terms() {
		terms = append(terms, tm)
		m := pauliMatrix(tm.Pauli.String())
		mats = append(mats, m)
		// ⟨10|P|10⟩: the diagonal entry at index 0b01 (qubit 0 set).
		c = append(c, real(m[1][1]))
	}
	rows := 0
	for _, row := range res.Rows {
		if !row.Reachable {
			continue // adaptive: no plan fixed before the data
		}
		rows++
		a, err := allocate.ByName(row.Strategy, 1)
		if err != nil {
			t.Fatal(err)
		}
		setProxy(a, stateProxy)
		p, err := allocate.Run(h, row.Reference, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		settings, shots := p.Distinct()
		n := 0
		for _, m := range shots {
			n += m
		}
		f := make([]float64, len(terms))
		for k, s := range settings {
			for i, tm := range terms {
				if s.Covers(tm.Pauli) {
					f[i] += float64(shots[k]) / float64(n)
				}
			}
		}
		center := 0.0
		for i, tm := range terms {
			if f[i] > 0 {
				center += tm.Coeff * c[i]
			}
		}
		m1, m2 := 0.0, 0.0
		for k, s := range settings {
			pi := float64(shots[k]) / float64(n)
			var o [4][4]complex128
			for i, tm := range terms {
				if f[i] == 0 || !s.Covers(tm.Pauli) {
					continue
				}
				w := complex(tm.Coeff/f[i], 0)
				for r := range 4 {
					for col := range 4 {
						o[r][col] += w * mats[i][r][col]
					}
					o[r][r] -= w * complex(c[i], 0)
				}
			}
			var op [4]complex128 // O_Q ψ
			for r := range 4 {
				for col := range 4 {
					op[r] += o[r][col] * psi[col]
				}
			}
			for r := range 4 {
				m1 += pi * real(cmplx.Conj(psi[r])*op[r])
				m2 += pi * real(cmplx.Conj(op[r])*op[r])
			}
		}
		if e := h.Energy(psi); math.Abs(h.Offset()+center+m1-e) > 1e-12 {
			t.Errorf("%s: mean of X_c %.15g, energy %.15g", row.Strategy, h.Offset()+center+m1, e)
		}
		want := m2 - m1*m1
		if math.Abs(row.AnytimeVariance-want) > 1e-12*(1+want) {
			t.Errorf("%s: σ² %.15g, brute force %.15g", row.Strategy, row.AnytimeVariance, want)
		}
		if n := int(math.Ceil(2 * row.AnytimeVariance * math.Log(2/delta) / (eps * eps))); row.Anytime != n {
			t.Errorf("%s: %d anytime shots, want %d", row.Strategy, row.Anytime, n)
		}
	}
	if rows < 5 {
		t.Errorf("only %d strategies answered", rows)
	}
}

// pauliMatrix returns the 4×4 matrix of a two-qubit Pauli string, letter q
// acting on bit q of the index: ⟨r|P|k⟩ = Π_q σ_{l_q}[r_q][k_q] with the
// textbook Pauli matrices.
func pauliMatrix(p string) [4][4]complex128 {
	sigma := map[rune][2][2]complex128{
		'I': {{1, 0}, {0, 1}},
		'X': {{0, 1}, {1, 0}},
		'Y': {{0, -1i}, {1i, 0}},
		'Z': {{1, 0}, {0, -1}},
	}
	var m [4][4]complex128
	for r := range 4 {
		for k := range 4 {
			v := complex(1, 0)
			for q, l := range p {
				v *= sigma[l][r>>q&1][k>>q&1]
			}
			m[r][k] = v
		}
	}
	return m
}
