package guarantee

import (
	"bufio"
	"bytes"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/shotplan/shotplan/internal/atomicfile"
)

var update = flag.Bool("update", false, "rewrite testdata/truncation_golden.jsonl from the code")

// truncationGolden is the file of recorded truncations of plans without a
// split, written by the search as it was before it served split plans too.
var truncationGolden = filepath.Join("testdata", "truncation_golden.jsonl")

// goldenTruncation is a Truncation with every float in hexadecimal, so
// that the comparison is to the bit.
type goldenTruncation struct {
	Drop                                                []int
	Dropped                                             int
	Bias, Variance, Radius, RelaxedRadius, Bound, Lower string
	Exact                                               bool
	Method                                              string
}

type goldenCase struct {
	Case               string
	Threshold, Optimal goldenTruncation
	CertBound          string
}

func hexFloat(x float64) string { return strconv.FormatFloat(x, 'x', -1, 64) }

func goldenOf(t Truncation) goldenTruncation {
	g := goldenTruncation{Dropped: t.Dropped, Bias: hexFloat(t.Bias), Variance: hexFloat(t.Variance),
		Radius: hexFloat(t.Radius), RelaxedRadius: hexFloat(t.RelaxedRadius), Bound: hexFloat(t.Bound),
		Lower: hexFloat(t.Lower), Exact: t.Exact, Method: t.Method, Drop: []int{}}
	for i, d := range t.Drop {
		if d {
			g.Drop = append(g.Drop, i)
		}
	}
	return g
}

// truncationCases certifies a fixed list of random plans without a split
// (the test helpers randomH and randomPlan, seeded) through every path of
// the optimal search: enumeration, branch and bound, branch and bound cut
// off (with and without its first steps), and the coverage's stored rows,
// rescans and letter sets.
func truncationCases(t *testing.T) []goldenCase {
	t.Helper()
	rng := rand.New(rand.NewPCG(41, 42))
	var out []goldenCase
	add := func(name string, c *coverage, delta float64, opts *Options) {
		cert := certify(c, delta, opts)
		out = append(out, goldenCase{Case: name, Threshold: goldenOf(cert.Threshold), Optimal: goldenOf(cert.Optimal),
			CertBound: hexFloat(cert.Bound)})
	}
	deltas := []float64{0.5, 0.1, 0.05, 0.01}
	for trial := range 24 {
		n := 3 + rng.IntN(4)
		h := randomH(t, rng, n, 6+rng.IntN(15), 2)
		settings, shots := randomPlan(rng, n, 3+rng.IntN(8), 3)
		delta := deltas[rng.IntN(len(deltas))]
		for k, opts := range []*Options{nil, {Enumerate: 1}, {Enumerate: 1, searchSteps: -1}, {Enumerate: 1, searchSteps: 40}} {
			c, err := newCoverage(h, settings, shots)
			if err != nil {
				t.Fatal(err)
			}
			add(fmt.Sprintf("small/%d/opts%d", trial, k), c, delta, opts)
		}
	}
	// Many candidates: local search, then branch and bound with and
	// without its work limit; the same plan through rescans and letter
	// sets (few stored pairs).
	for trial := range 4 {
		n := 8 + rng.IntN(4)
		h := randomH(t, rng, n, 150+rng.IntN(100), 3)
		settings, shots := randomPlan(rng, n, 60+rng.IntN(40), 2)
		for k, opts := range []*Options{nil, {searchSteps: 500}, {searchSteps: -1}} {
			for _, stored := range []int{1 << 27, 50, 0} {
				c, err := newCoverageStoring(h, settings, shots, stored)
				if err != nil {
					t.Fatal(err)
				}
				add(fmt.Sprintf("large/%d/opts%d/stored%d", trial, k, stored), c, 0.05, opts)
			}
		}
	}
	return out
}

// TestTruncationGolden checks that the truncations of plans without a
// split are those recorded in testdata (to the bit: floats in hexadecimal,
// the dropped sets and the method strings), so that generalising the
// search to a coefficient split (MATH.md §2.5) leaves them unchanged. Run
// with -update to record them again (only when a change of them is
// intended).
func TestTruncationGolden(t *testing.T) {
	got := truncationCases(t)
	if *update {
		if err := os.MkdirAll(filepath.Dir(truncationGolden), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := atomicfile.Write(truncationGolden, func(w io.Writer) error {
			enc := json.NewEncoder(w)
			for _, g := range got {
				if err := enc.Encode(g); err != nil {
					return err
				}
			}
			return nil
		}); err != nil {
			t.Fatal(err)
		}
		return
	}
	data, err := os.ReadFile(truncationGolden)
	if err != nil {
		t.Fatal(err)
	}
	var want []goldenCase
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(nil, 1<<20)
	for sc.Scan() {
		var g goldenCase
		if err := json.Unmarshal(sc.Bytes(), &g); err != nil {
			t.Fatal(err)
		}
		want = append(want, g)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(want) != len(got) {
		t.Fatalf("%d recorded cases, %d made", len(want), len(got))
	}
	for k := range got {
		g, _ := json.Marshal(got[k])
		w, _ := json.Marshal(want[k])
		if !bytes.Equal(g, w) {
			t.Errorf("case %s:\n got %s\nwant %s", got[k].Case, g, w)
		}
	}
}
