package molecule

import (
	"errors"
	"strings"
	"testing"
)

// TestFCIDUMPHeaderImplications checks the errors for files whose header or
// integrals contradict each other. The symmetry rule is common practice for
// D2h and its subgroups: with labels 1..8, irreps multiply by XOR of
// (label − 1), and an integral must be totally symmetric (label 1).
func TestFCIDUMPHeaderImplications(t *testing.T) {
	const sym = "&FCI NORB=2,NELEC=2,MS2=0,ORBSYM=1,2,ISYM=1\n&END\n"
	for _, tc := range []struct {
		name, in string
		line     int
		reason   string
	}{
		{"two-electron forbidden by symmetry", sym + "0.5 1 1 1 2\n", 3, "(1 1|1 2) = 0.5 is forbidden by symmetry"},
		{"one-electron forbidden by symmetry", sym + "0.5 1 1 1 1\n-0.2 1 2 0 0\n", 4, "h(1 2) = -0.2 is forbidden by symmetry"},
		{"MS2 too large", "&FCI NORB=2,NELEC=2,\nMS2=4,\nISYM=1\n&END\n" + h2Body, 2, "needs 3 α and -1 β electrons"},
		{"MS2 parity", "&FCI NORB=2,NELEC=2,\nMS2=5\n&END\n" + h2Body, 2, "same parity"},
		{"ISYM out of range", "&FCI NORB=2,NELEC=2,MS2=0,\nISYM=99\n&END\n" + h2Body, 2, "ISYM=99, want an irrep label 1 to 8"},
		{"ORBSYM out of range", "&FCI NORB=2,NELEC=2,MS2=0,\nORBSYM=1,9\n&END\n" + h2Body, 2, "ORBSYM label 9"},
		{"no integrals", "&FCI NORB=2,NELEC=2,MS2=0\n&END\n\n", 3, "no integrals"},
	} {
		_, err := ReadFCIDUMP(strings.NewReader(tc.in))
		var le *LineError
		if !errors.As(err, &le) || le.Line != tc.line || !strings.Contains(err.Error(), tc.reason) || !errors.Is(err, ErrFormat) {
			t.Errorf("%s: %v, want line %d: …%s…", tc.name, err, tc.line, tc.reason)
		}
	}
	// Allowed by symmetry: (1 1|2 2), (1 2|1 2) and h(1 1) with irreps 1 and
	// 2, and a tiny forbidden value counted as zero.
	ok := sym + "0.6 1 1 2 2\n0.2 1 2 1 2\n-1.2 1 1 0 0\n1e-14 1 2 0 0\n0.7 0 0 0 0\n"
	if _, err := ReadFCIDUMP(strings.NewReader(ok)); err != nil {
		t.Errorf("integrals allowed by symmetry: %v", err)
	}
	// A long bad token is quoted shortened.
	long := strings.Repeat("Q", 100000)
	for _, in := range []string{"&FCI " + long + "\n&END\n", "&FCI NORB=1,NELEC=0\n&END\n" + long + " 1 1 1 1\n"} {
		if _, err := ReadFCIDUMP(strings.NewReader(in)); err == nil || len(err.Error()) > 300 {
			t.Errorf("a 100 000-byte token is quoted in a %d-byte error", len(err.Error()))
		}
	}
}
