package guarantee

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
	"gonum.org/v1/gonum/stat/distuv"
)

// mustH builds a Hamiltonian from "coeff pauli" pairs.
func mustH(t testing.TB, n int, offset float64, terms ...any) *hamiltonian.Hamiltonian {
	t.Helper()
	var ts []hamiltonian.Term
	for k := 0; k < len(terms); k += 2 {
		ts = append(ts, hamiltonian.Term{Coeff: terms[k].(float64), Pauli: pauli.MustParse(terms[k+1].(string))})
	}
	h, err := hamiltonian.New(n, offset, ts)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// randomH returns m random terms of weight 1..maxW on n qubits with
// coefficients in ±[0.01, 1) (duplicates merge).
func randomH(t testing.TB, rng *rand.Rand, n, m, maxW int) *hamiltonian.Hamiltonian {
	t.Helper()
	ts := make([]hamiltonian.Term, 0, m)
	for range m {
		b := []byte(strings.Repeat("I", n))
		w := 1 + rng.IntN(maxW)
		for range w {
			b[rng.IntN(n)] = "XYZ"[rng.IntN(3)]
		}
		c := 0.01 + rng.Float64()
		if rng.IntN(2) == 0 {
			c = -c
		}
		ts = append(ts, hamiltonian.Term{Coeff: c, Pauli: pauli.MustParse(string(b))})
	}
	h, err := hamiltonian.New(n, 0, ts)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// randomPlan returns k random settings, each with 0..maxShots shots, some
// settings repeated.
func randomPlan(rng *rand.Rand, n, k, maxShots int) ([]pauli.Setting, []int) {
	var settings []pauli.Setting
	var shots []int
	for range k {
		if len(settings) > 0 && rng.IntN(4) == 0 {
			settings = append(settings, settings[rng.IntN(len(settings))])
		} else {
			b := make([]byte, n)
			for q := range b {
				b[q] = "XYZ"[rng.IntN(3)]
			}
			settings = append(settings, pauli.MustParseSetting(string(b)))
		}
		shots = append(shots, rng.IntN(maxShots+1))
	}
	return settings, shots
}

// letterCovers is P ◁ Q of MATH.md §1 on the dense text forms, letter by
// letter: on every qubit P is I or Q's letter. It does not touch the bit
// words the library tests covers with.
func letterCovers(p, q string) bool {
	if len(p) != len(q) {
		panic("letterCovers: widths differ")
	}
	for k := range len(p) {
		if p[k] != 'I' && p[k] != q[k] {
			return false
		}
	}
	return true
}

// referenceV computes V of MATH.md §3.1 shot by shot, testing covers letter
// by letter on the text forms (letterCovers) of local settings: the slow
// reference for the certificate's word-wise sums.
func referenceV(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int) (v, oneNorm, bias float64) {
	terms := make([]string, h.Len())
	for i := range terms {
		terms[i] = h.Pauli(i).String()
	}
	covers := func(s pauli.Setting, i int) bool {
		if !s.IsLocal() {
			panic("referenceV: local settings only")
		}
		return letterCovers(terms[i], s.String())
	}
	cover := make([]int, h.Len())
	for k, s := range settings {
		for i := range h.Len() {
			if covers(s, i) {
				cover[i] += shots[k]
			}
		}
	}
	for k, s := range settings {
		for range shots[k] {
			sum := 0.0
			for i := range h.Len() {
				if covers(s, i) {
					sum += math.Abs(h.Coeff(i)) / float64(cover[i])
				}
			}
			v += sum * sum
		}
	}
	for i, n := range cover {
		if n == 0 {
			bias += math.Abs(h.Coeff(i))
		} else {
			oneNorm += math.Abs(h.Coeff(i)) / math.Sqrt(float64(n))
		}
	}
	return v, oneNorm, bias
}

func near(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Max(1, math.Abs(want))
}

// binomialLimit returns the smallest k with P(X > k) ≤ alpha for X
// binomial(n, p), from gonum's binomial CDF.
func binomialLimit(n int, p, alpha float64) int {
	b := distuv.Binomial{N: float64(n), P: p}
	for k := range n {
		if 1-b.CDF(float64(k)) <= alpha {
			return k
		}
	}
	return n
}

// BinomialLimit exports binomialLimit to the external tests.
var BinomialLimit = binomialLimit
