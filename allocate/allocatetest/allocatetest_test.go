package allocatetest_test

import (
	"os"
	"os/exec"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/allocate/allocatetest"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// zeds measures Z everywhere; its flaws are switched on one at a time.
type zeds struct {
	calls     int  // rounds so far
	forgetful bool // Init does not reset calls, so a second run differs
	h         *hamiltonian.Hamiltonian
	drawn     []int
}

func (z *zeds) Init(h *hamiltonian.Hamiltonian, budget int) error {
	z.h, z.drawn = h, nil
	if !z.forgetful {
		z.calls = 0
	}
	return nil
}

func (z *zeds) Next(dst []pauli.Letter) (int, error) {
	z.calls++
	for q := range dst {
		dst[q] = pauli.Z
	}
	if z.forgetful && z.calls > 3 {
		dst[0] = pauli.X
	}
	z.drawn = append(z.drawn, 0)
	return 1, nil
}

// lying reports a cover of 1 for every term, whatever it measured.
type lying struct{ zeds }

func (l *lying) Cover(dst []int) {
	for i := range dst {
		dst[i] = 1
	}
}

// drawing reports a drawn term index that no Hamiltonian has.
type drawing struct{ zeds }

func (d *drawing) Drawn() []int {
	out := make([]int, len(d.drawn))
	for i := range out {
		out[i] = d.h.Len()
	}
	return out
}

// TestBrokenHelper runs the suite on a flawed strategy chosen by the
// environment; it is run only as a subprocess of TestSuiteCatchesFlaws.
func TestBrokenHelper(t *testing.T) {
	var mk func(uint64) allocate.Allocator
	switch os.Getenv("ALLOCATETEST_FLAW") {
	case "forgetful":
		mk = func(uint64) allocate.Allocator { return &zeds{forgetful: true} }
	case "lying-cover":
		mk = func(uint64) allocate.Allocator { return &lying{} }
	case "wrong-drawn":
		mk = func(uint64) allocate.Allocator { return &drawing{} }
	case "sound":
		mk = func(uint64) allocate.Allocator { return &zeds{} }
	default:
		t.Skip("run by TestSuiteCatchesFlaws")
	}
	allocatetest.Test(t, mk, &allocatetest.Options{Budgets: []int{5}, Seeds: []uint64{1}})
}

// TestSuiteCatchesFlaws checks that the suite fails flawed strategies, with
// a message naming the flaw, and passes a sound one.
func TestSuiteCatchesFlaws(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the test binary as a subprocess")
	}
	for _, tc := range []struct {
		flaw, want string
	}{
		{"forgetful", "running the same value twice gave different plans"},
		{"lying-cover", "lying: reports term 0"},
		{"wrong-drawn", "drawing: shot 0 drew term"},
		{"sound", ""},
	} {
		t.Run(tc.flaw, func(t *testing.T) {
			cmd := exec.Command(os.Args[0], "-test.run=^TestBrokenHelper$")
			cmd.Env = append(os.Environ(), "ALLOCATETEST_FLAW="+tc.flaw)
			out, err := cmd.CombinedOutput()
			if tc.want == "" {
				if err != nil {
					t.Errorf("suite failed a sound strategy: %v\n%s", err, out)
				}
				return
			}
			if err == nil {
				t.Errorf("suite passed a strategy with flaw %q", tc.flaw)
			}
			if !strings.Contains(string(out), tc.want) {
				t.Errorf("suite output for flaw %q lacks %q:\n%s", tc.flaw, tc.want, out)
			}
		})
	}
}

// TestCheckCatchesFlaws checks that Check, the suite without a testing.T,
// returns the same verdicts as Test: an error naming the flaw for a flawed
// strategy, nil for a sound one, and a panicking strategy reported as a
// failure instead of crashing the caller.
func TestCheckCatchesFlaws(t *testing.T) {
	opts := &allocatetest.Options{Budgets: []int{5}, Seeds: []uint64{1}}
	for _, tc := range []struct {
		flaw string
		mk   func(uint64) allocate.Allocator
		want string
	}{
		{"forgetful", func(uint64) allocate.Allocator { return &zeds{forgetful: true} }, "running the same value twice gave different plans"},
		{"lying-cover", func(uint64) allocate.Allocator { return &lying{} }, "lying: reports term 0"},
		{"wrong-drawn", func(uint64) allocate.Allocator { return &drawing{} }, "drawing: shot 0 drew term"},
		{"panicking", func(uint64) allocate.Allocator { return &panicking{} }, "panicking panicked in Next: boom"},
		{"sound", func(uint64) allocate.Allocator { return &zeds{} }, ""},
	} {
		err := allocatetest.Check(tc.mk, opts)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("Check(%s) = %v, want nil", tc.flaw, err)
		case tc.want != "" && err == nil:
			t.Errorf("Check(%s) = nil, want an error containing %q", tc.flaw, tc.want)
		case tc.want != "" && !strings.Contains(err.Error(), tc.want):
			t.Errorf("Check(%s) = %v, want an error containing %q", tc.flaw, err, tc.want)
		}
	}
}

// panicking is a strategy whose Next panics.
type panicking struct{ zeds }

func (p *panicking) Next(dst []pauli.Letter) (int, error) { panic("boom") }
