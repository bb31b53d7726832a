package guarantee

import (
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/pauli"
)

// TestStoredCoverageSameOnOneTwoThreeCores: a plan whose cover pairs are
// stored has them found on GOMAXPROCS goroutines (storeRows). The covered
// terms of every setting must be those of the plain letter-by-letter test
// of MATH.md §1 (letterCovers, on the text forms), the cover counts
// N_i = Σ_{Q covers i} m_Q, and the rows, the counts and the certificate
// must be identical, bit for bit, on 1, 2 and 3 goroutines. Correctness
// only: no timing.
func TestStoredCoverageSameOnOneTwoThreeCores(t *testing.T) {
	rng := rand.New(rand.NewPCG(12, 13))
	const n = 12
	h := randomH(t, rng, n, 1500, 4)
	settings, shots := randomPlan(rng, n, 8000, 3)
	type result struct {
		Rows  [][]int32
		Cover []int
		Cert  *Certificate
	}
	var first *result
	for _, procs := range []int{1, 2, 3} {
		old := runtime.GOMAXPROCS(procs)
		c, err := newCoverageStoring(h, settings, shots, coverindex.MaxStored)
		var cert *Certificate
		if err == nil {
			cert = certify(c, 0.05, nil)
		}
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		if c.rows == nil || c.letters != nil {
			t.Fatal("the pairs are not stored")
		}
		if g := int64(len(c.settings)) * int64(h.Len()); g < storeSplitMin {
			t.Fatalf("%d settings × terms: too few for the scan to be split", g)
		}
		r := &result{Cover: c.cover, Cert: cert}
		for _, row := range c.rows {
			r.Rows = append(r.Rows, slices.Clone(row))
		}
		if first == nil {
			first = r
			// The plain reference, once.
			want := make([]int, h.Len())
			terms := make([]string, h.Len())
			for i := range terms {
				terms[i] = h.Pauli(i).String()
			}
			for q, s := range c.settings {
				var covered []int32
				ss := s.String()
				for i, p := range terms {
					if letterCovers(p, ss) {
						covered = append(covered, int32(i))
						want[i] += c.mult[q]
					}
				}
				got := slices.Sorted(slices.Values(c.rows[q]))
				if !slices.Equal(got, covered) {
					t.Fatalf("setting %d (%s): covered terms %v, want %v", q, s, got, covered)
				}
			}
			if d := cmp.Diff(want, c.cover); d != "" {
				t.Fatalf("cover counts differ from the letter-by-letter count (-want +got):\n%s", d)
			}
			continue
		}
		if d := cmp.Diff(first, r, cmp.Comparer(func(a, b pauli.String) bool { return a.Equal(b) })); d != "" {
			t.Errorf("GOMAXPROCS %d: rows, counts or certificate differ from GOMAXPROCS 1 (-1 +%d):\n%s", procs, procs, d)
		}
	}
}
