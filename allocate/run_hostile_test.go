package allocate

import (
	"errors"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// zOnly measures ZZ every shot, and can be made to misreport.
type zOnly struct {
	drawn     []int
	panicInit bool
	panicNext bool
}

func (z *zOnly) String() string { return "zonly" }

func (z *zOnly) Init(h *hamiltonian.Hamiltonian, budget int) error {
	if z.panicInit {
		_ = z.drawn[5] // an index past the end, as a careless strategy makes
	}
	return nil
}

func (z *zOnly) Next(dst []pauli.Letter) (int, error) {
	if z.panicNext {
		panic("out of ideas")
	}
	for q := range dst {
		dst[q] = pauli.Z
	}
	return 1, nil
}

type zCounter struct{ *zOnly }

// Cover claims every term is covered once per shot.
func (z zCounter) Cover(dst []int) {
	for i := range dst {
		dst[i] = 4
	}
}

type zDrawer struct{ *zOnly }

func (z zDrawer) Drawn() []int { return z.drawn }

// TestRunVerifiesStrategy checks that Run does not take a strategy's word
// for its cover counts or drawn terms, and turns its panics into errors
// naming it. On "1 ZZ + 1 XX" a ZZ setting covers ZZ (term 0) only.
func TestRunVerifiesStrategy(t *testing.T) {
	h, err := hamiltonian.Read(strings.NewReader("1 ZZ\n1 XX\n"))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		a    Allocator
		want string
	}{
		{"lying counter", zCounter{&zOnly{}}, "zonly: reports term 1 (XX) covered 4 times, its settings cover it 0 times"},
		{"drawn out of range", zDrawer{&zOnly{drawn: []int{0, 0, 7, 0}}}, "zonly: shot 2 drew term 7, outside [0, 2)"},
		{"drawn not covered", zDrawer{&zOnly{drawn: []int{0, 1, 0, 0}}}, "zonly: shot 1 drew term 1 (XX), which its setting ZZ does not cover"},
		{"drawn too few", zDrawer{&zOnly{drawn: []int{0}}}, "zonly: drew 1 terms for 4 shots"},
		{"panic in Init", &zOnly{panicInit: true}, "zonly panicked in Init: runtime error: index out of range [5] with length 0"},
		{"panic in Next", &zOnly{panicNext: true}, "zonly panicked in Next: out of ideas"},
	} {
		p, err := Run(h, 4, tc.a, nil)
		if p != nil || !errors.Is(err, ErrStrategy) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: Run = %v, want ErrStrategy with %q", tc.name, err, tc.want)
		}
	}
	// A truthful drawer passes.
	if _, err := Run(h, 4, zDrawer{&zOnly{drawn: []int{0, 0, 0, 0}}}, nil); err != nil {
		t.Errorf("a truthful strategy: %v", err)
	}
}
