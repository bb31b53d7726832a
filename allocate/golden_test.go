package allocate_test

import (
	"bytes"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/internal/atomicfile"
)

var update = flag.Bool("update", false, "rewrite the golden plans in testdata/golden")

// TestGolden pins the first settings of every strategy, with seed 42, on a
// small invented Hamiltonian. A change of a strategy's plan shows up here;
// after checking that it is intended, regenerate with -update.
func TestGolden(t *testing.T) {
	h := mustH(t, -0.2,
		"ZZIII", 0.7, "IZZII", 0.7, "IIZZI", 0.7, "IIIZZ", 0.7,
		"XIIII", -0.45, "IXIII", -0.45, "IIXII", -0.45, "IIIXI", -0.45, "IIIIX", -0.45,
		"YYIII", 0.12, "IIYYI", 0.12, "XZXII", 0.05, "IZIYZ", -0.03)
	const budget = 16
	for _, a := range allStrategies(h.Qubits(), 42) {
		name := allocate.Name(a)
		t.Run(name, func(t *testing.T) {
			p, err := allocate.Run(h, budget, a, nil)
			if err != nil {
				t.Fatal(err)
			}
			var b bytes.Buffer
			fmt.Fprintf(&b, "# %s, seed 42 where it draws, budget %d: setting and shots\n", name, budget)
			for k, s := range p.Settings {
				fmt.Fprintf(&b, "%s %d\n", s, p.Shots[k])
			}
			fmt.Fprintf(&b, "# cover %v\n", p.Cover)
			path := filepath.Join("testdata", "golden", name+".txt")
			if *update {
				if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
					t.Fatal(err)
				}
				if err := atomicfile.Write(path, func(w io.Writer) error { _, err := w.Write(b.Bytes()); return err }); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run with -update to create it)", err)
			}
			if !bytes.Equal(b.Bytes(), want) {
				t.Errorf("plan of %s differs from %s:\ngot:\n%swant:\n%s", name, path, b.Bytes(), want)
			}
		})
	}
}
