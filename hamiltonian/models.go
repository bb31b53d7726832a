package hamiltonian

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/shotplan/shotplan/pauli"
)

// Sign conventions of the model builders. Every coupling and field enters
// exactly as written below; a bond's Weight multiplies the coupling of that
// bond. Site q is qubit q. Terms come in bond order (for each bond the
// XX, YY, ZZ terms it carries, in that order), then the field terms by site
// (for Ising, all X fields before all Z fields).
//
//	TransverseFieldIsing:  H = −J Σ_b w_b Z_i Z_j − h Σ_q X_q
//	Ising:                 H = −J Σ_b w_b Z_i Z_j − Σ_q hx_q X_q − Σ_q hz_q Z_q
//	XXZ:                   H = Σ_b w_b [Jxy (X_i X_j + Y_i Y_j) + Jz Z_i Z_j] − h Σ_q Z_q
//	XXZFields:             H = Σ_b w_b [Jxy (X_i X_j + Y_i Y_j) + Jz Z_i Z_j] − Σ_q h_q Z_q
//	Heisenberg:            H = J Σ_b w_b (X_i X_j + Y_i Y_j + Z_i Z_j)
//
// With Pauli matrices rather than spin-½ operators, J·(XX+YY+ZZ) = 4J·S_i·S_j;
// Heisenberg with J > 0 is the antiferromagnet.

// TransverseFieldIsing returns H = −J Σ_b w_b Z_i Z_j − h Σ_q X_q on l. With
// J > 0 the coupling is ferromagnetic. It returns an error if l is invalid
// (see [Graph.Validate]) or a constant is not finite.
func TransverseFieldIsing(l Graph, j, field float64) (*Hamiltonian, error) {
	return Ising(l, j, constant(l.Sites, field), nil)
}

// Ising returns H = −J Σ_b w_b Z_i Z_j − Σ_q hx[q] X_q − Σ_q hz[q] Z_q on l:
// the Ising model with per-site transverse (hx) and longitudinal (hz) fields.
// A nil field slice means zero field; otherwise its length must be l.Sites.
// Zero-field terms are left out.
func Ising(l Graph, j float64, hx, hz []float64) (*Hamiltonian, error) {
	if err := checkModel(l, "hx", hx, "hz", hz, j); err != nil {
		return nil, err
	}
	n := l.Sites
	terms := make([]Term, 0, len(l.Bonds)+len(hx)+len(hz))
	for _, b := range l.Bonds {
		terms = append(terms, Term{Pauli: pair(n, b, pauli.Z), Coeff: -j * b.Weight})
	}
	terms = appendField(terms, n, pauli.X, hx)
	terms = appendField(terms, n, pauli.Z, hz)
	return New(n, 0, terms)
}

// XXZ returns H = Σ_b w_b [Jxy (X_i X_j + Y_i Y_j) + Jz Z_i Z_j] − h Σ_q Z_q on
// l. It returns an error if l is invalid or a constant is not finite.
func XXZ(l Graph, jxy, jz, field float64) (*Hamiltonian, error) {
	return XXZFields(l, jxy, jz, constant(l.Sites, field))
}

// XXZFields is [XXZ] with a field h[q] along Z on each site:
// H = Σ_b w_b [Jxy (X_i X_j + Y_i Y_j) + Jz Z_i Z_j] − Σ_q h[q] Z_q. A nil h
// means no field; otherwise its length must be l.Sites.
func XXZFields(l Graph, jxy, jz float64, h []float64) (*Hamiltonian, error) {
	if err := checkModel(l, "h", h, "", nil, jxy, jz); err != nil {
		return nil, err
	}
	n := l.Sites
	terms := make([]Term, 0, 3*len(l.Bonds)+len(h))
	for _, b := range l.Bonds {
		terms = append(terms,
			Term{Pauli: pair(n, b, pauli.X), Coeff: jxy * b.Weight},
			Term{Pauli: pair(n, b, pauli.Y), Coeff: jxy * b.Weight},
			Term{Pauli: pair(n, b, pauli.Z), Coeff: jz * b.Weight},
		)
	}
	terms = appendField(terms, n, pauli.Z, h)
	return New(n, 0, terms)
}

// Heisenberg returns H = J Σ_b w_b (X_i X_j + Y_i Y_j + Z_i Z_j) on l, which
// is 4J Σ_b w_b S_i·S_j in spin-½ operators.
func Heisenberg(l Graph, j float64) (*Hamiltonian, error) {
	return XXZFields(l, j, j, nil)
}

// RandomLocal returns a random Hamiltonian on n qubits with exactly terms
// distinct non-identity strings, each acting on between 1 and k qubits: the
// weight is uniform on 1..k, the qubits a uniform subset of that size, the
// letters uniform on X, Y, Z, and the coefficient uniform on [−1, 1). The
// offset is zero. The same seed gives the same Hamiltonian. It is meant for
// benchmarks. It returns an error if n, terms or k is negative, k is 0 or
// exceeds n, or fewer than terms such strings exist.
func RandomLocal(n, terms, k int, seed uint64) (*Hamiltonian, error) {
	if n < 0 || terms < 0 || k < 1 || k > n {
		return nil, fmt.Errorf("hamiltonian: RandomLocal(n=%d, terms=%d, k=%d): need n ≥ k ≥ 1 and terms ≥ 0", n, terms, k)
	}
	if float64(terms) > countLocal(n, k) {
		return nil, fmt.Errorf("hamiltonian: only %.0f strings on %d qubits have weight at most %d, asked for %d", countLocal(n, k), n, k, terms)
	}
	rng := rand.New(rand.NewPCG(seed, 0x5eed10ca1))
	seen := make(map[string]bool, terms)
	out := make([]Term, 0, terms)
	letters := make([]pauli.Letter, n)
	qubits := make([]int, n)
	for len(out) < terms {
		w := 1 + rng.IntN(k)
		clear(letters)
		for q := range qubits {
			qubits[q] = q
		}
		// Partial Fisher–Yates shuffle: the first w entries are a uniform subset.
		for i := range w {
			s := i + rng.IntN(n-i)
			qubits[i], qubits[s] = qubits[s], qubits[i]
			letters[qubits[i]] = pauli.Letter(1 + rng.IntN(3))
		}
		p := pauli.FromLetters(letters)
		c := 2*rng.Float64() - 1
		if seen[p.Key()] || c == 0 {
			continue
		}
		seen[p.Key()] = true
		out = append(out, Term{Pauli: p, Coeff: c})
	}
	return New(n, 0, out)
}

// countLocal returns Σ_{w=1..k} C(n,w)·3^w as a float64.
func countLocal(n, k int) float64 {
	total, c := 0.0, 1.0
	for w := 1; w <= k; w++ {
		c = c * float64(n-w+1) / float64(w)
		total += c * math.Pow(3, float64(w))
	}
	return total
}

// pair returns the n-qubit string with letter l on both sites of b.
func pair(n int, b Bond, l pauli.Letter) pauli.String {
	return pauli.Identity(n).With(b.I, l).With(b.J, l)
}

// constant returns n copies of v, or nil if v is zero or n is negative (a
// graph the model builders then reject).
func constant(n int, v float64) []float64 {
	if v == 0 || n < 0 {
		return nil
	}
	c := make([]float64, n)
	for i := range c {
		c[i] = v
	}
	return c
}

// appendField appends −h[q]·l_q for every site q with h[q] ≠ 0.
func appendField(terms []Term, n int, l pauli.Letter, h []float64) []Term {
	for q, v := range h {
		if v != 0 {
			terms = append(terms, Term{Pauli: pauli.Identity(n).With(q, l), Coeff: -v})
		}
	}
	return terms
}

// checkModel validates the graph, the lengths of two optional per-site
// fields and the finiteness of every constant.
func checkModel(l Graph, name1 string, f1 []float64, name2 string, f2 []float64, consts ...float64) error {
	if err := l.Validate(); err != nil {
		return err
	}
	for _, c := range consts {
		if !finite(c) {
			return fmt.Errorf("hamiltonian: coupling %v is not finite", c)
		}
	}
	for _, f := range []struct {
		name string
		v    []float64
	}{{name1, f1}, {name2, f2}} {
		if f.v == nil {
			continue
		}
		if len(f.v) != l.Sites {
			return fmt.Errorf("hamiltonian: field %s has %d values for %d sites", f.name, len(f.v), l.Sites)
		}
		for q, v := range f.v {
			if !finite(v) {
				return fmt.Errorf("hamiltonian: field %s[%d] = %v is not finite", f.name, q, v)
			}
		}
	}
	return nil
}
