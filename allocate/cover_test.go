package allocate_test

import (
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestCoverCountsMatchesDefinition checks CoverCounts on 3000 settings
// (with repeats, enough to be shared among goroutines) against the
// definition N_i = Σ_k shots_k·[setting k covers term i], evaluated with
// Setting.Covers term by term, under 1, 2 and 3 goroutines.
func TestCoverCountsMatchesDefinition(t *testing.T) {
	const qubits = 12
	h, err := hamiltonian.RandomLocal(qubits, 400, 3, 7)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	settings := make([]pauli.Setting, 3000)
	shots := make([]int, len(settings))
	buf := make([]byte, qubits)
	for k := range settings {
		if k > 0 && rng.IntN(4) == 0 {
			settings[k] = settings[rng.IntN(k)]
		} else {
			for q := range buf {
				buf[q] = "XYZ"[rng.IntN(3)]
			}
			settings[k] = pauli.MustParseSetting(string(buf))
		}
		shots[k] = rng.IntN(4)
	}
	want := make([]int, h.Len())
	for k, s := range settings {
		for i := range want {
			if s.Covers(h.Pauli(i)) {
				want[i] += shots[k]
			}
		}
	}
	for _, procs := range []int{1, 2, 3} {
		old := runtime.GOMAXPROCS(procs)
		got, err := allocate.CoverCounts(h, settings, shots)
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, want) {
			t.Errorf("GOMAXPROCS=%d: CoverCounts differs from the definition", procs)
		}
	}
}

// TestCoverCountsLetters checks the count through the transposed settings
// (more than 4096 distinct ones, shot counts up to 1000 so that the
// multiplicities take ten bits) against the definition, letter by letter,
// on 1, 2 and 3 goroutines.
func TestCoverCountsLetters(t *testing.T) {
	const qubits = 12
	h, err := hamiltonian.RandomLocal(qubits, 300, 3, 8)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	settings := make([]pauli.Setting, 6000)
	shots := make([]int, len(settings))
	buf := make([]byte, qubits)
	for k := range settings {
		for q := range buf {
			buf[q] = "XYZ"[rng.IntN(3)]
		}
		settings[k] = pauli.MustParseSetting(string(buf))
		shots[k] = 1 + rng.IntN(1000)
	}
	want := make([]int, h.Len())
	for k, s := range settings {
		for i := range want {
			if s.Covers(h.Pauli(i)) {
				want[i] += shots[k]
			}
		}
	}
	for _, procs := range []int{1, 2, 3} {
		old := runtime.GOMAXPROCS(procs)
		got, err := allocate.CoverCounts(h, settings, shots)
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(got, want) {
			t.Errorf("GOMAXPROCS=%d: CoverCounts differs from the definition", procs)
		}
	}
}
