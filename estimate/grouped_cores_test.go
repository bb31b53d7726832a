package estimate

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestGroupedSameOnAnyCores checks that Grouped gives the same result, to
// the last bit, on 1, 2 and 3 goroutines, on records large enough to be
// shared among them (several blocks of 4096 groups): 9 000 one-shot
// settings and 300 settings of 20 shots on a random 4-local Hamiltonian of
// 10 000 terms. The passes share blocks of groups; every sum is still taken
// in the order of one core (integer counts, and per-shot sums over the
// terms in table order).
func TestGroupedSameOnAnyCores(t *testing.T) {
	if testing.Short() {
		t.Skip("builds 15 000 shots on 10 000 terms")
	}
	const n = 16
	h, err := hamiltonian.RandomLocal(n, 10_000, 4, 7)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(8, 9))
	rec := NewRecords(n)
	bits := pauli.NewBits(n)
	add := func(s pauli.Setting, k int) {
		for range k {
			bits[0] = rng.Uint64() & (1<<n - 1)
			if err := rec.Add(s, bits); err != nil {
				t.Fatal(err)
			}
		}
	}
	for range 9000 {
		add(randomSetting(rng, n), 1)
	}
	for range 300 {
		add(randomSetting(rng, n), 20)
	}
	if rec.Groups() <= 2*4096 {
		t.Fatalf("only %d groups: fewer than three blocks", rec.Groups())
	}
	var want *Result
	for _, procs := range []int{1, 2, 3} {
		old := runtime.GOMAXPROCS(procs)
		got, err := Grouped(h, rec, nil)
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		if want == nil {
			want = got
			continue
		}
		same := func(what string, a, b float64) {
			t.Helper()
			if math.Float64bits(a) != math.Float64bits(b) && !(math.IsNaN(a) && math.IsNaN(b)) {
				t.Errorf("%d goroutines: %s %v, one goroutine %v", procs, what, a, b)
			}
		}
		same("energy", got.Energy, want.Energy)
		same("standard error", got.StdErr, want.StdErr)
		for i := range want.Means {
			if got.Cover[i] != want.Cover[i] {
				t.Fatalf("%d goroutines: term %d covered %d times, one goroutine %d", procs, i, got.Cover[i], want.Cover[i])
			}
			same("mean", got.Means[i], want.Means[i])
		}
	}
}
