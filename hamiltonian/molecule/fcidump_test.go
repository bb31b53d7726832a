package molecule

import (
	"errors"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
)

// h2Body is the integral part of testdata/h2_sto3g_0.74A.fcidump.
const h2Body = `  6.74755926747731327175E-01   1   1   1   1
  6.63711401290030589273E-01   1   1   2   2
  1.81210462034757435745E-01   2   1   2   1
  6.63711401290030589273E-01   2   2   1   1
  6.97651504426064050790E-01   2   2   2   2
  -1.25330978643456569799E+00    1    1    0    0
  -4.75068848992405035059E-01    2    2    0    0
   7.15104338743243195253E-01    0    0    0    0
`

// TestHeaderForms reads the same integrals under the header layouts the
// format allows (Knowles & Handy 1989; the shared data README): one item per
// line with trailing commas, all items on one line, no trailing commas,
// lower case, "/" as terminator, ORBSYM over two lines, Fortran D exponents
// and orbital-energy lines.
func TestHeaderForms(t *testing.T) {
	want := readMolecule(t, "h2_sto3g_0.74A")
	tests := []struct {
		name, text string
	}{
		{"one line", "&FCI NORB=2,NELEC=2,MS2=0,ORBSYM=1,1,ISYM=1,\n&END\n" + h2Body},
		{"one line with end", " &FCI NORB=2, NELEC=2, MS2=0, UHF=.FALSE., ORBSYM=1,1, ISYM=1 &END\n" + h2Body},
		{"no trailing commas", "&FCI\nNORB=2\nNELEC=2\nMS2=0\nORBSYM=1 1\nISYM=1\n&END\n" + h2Body},
		{"spaces and lower case", "&fci norb = 2, nelec = 2,\n ms2 = 0, orbsym = 1,\n 1, isym = 1\n &end\n" + h2Body},
		{"slash terminator", "&FCI NORB=2,NELEC=2,MS2=0,ORBSYM=2*1,ISYM=1\n/\n" + h2Body},
		{"D exponents and orbital energies", "&FCI NORB=2,NELEC=2,MS2=0,ORBSYM=1,1,ISYM=1\n&END\n" +
			strings.ReplaceAll(h2Body, "E", "D") + " -0.5785 1 0 0 0\n 0.6711 2 0 0 0\n"},
		{"blank lines and CRLF", "\n&FCI NORB=2,NELEC=2,MS2=0,ORBSYM=1,1,ISYM=1\r\n&END\r\n\r\n" + strings.ReplaceAll(h2Body, "\n", "\r\n")},
	}
	for _, tc := range tests {
		g, err := ReadFCIDUMP(strings.NewReader(tc.text))
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if !g.Equal(want) {
			t.Errorf("%s: integrals differ from testdata/h2_sto3g_0.74A.fcidump", tc.name)
		}
	}
}

// TestEightfoldSymmetry checks that one listed two-electron value fills its 8
// symmetric slots, and that a value listed again under a symmetric order
// is not added (Knowles & Handy 1989; shared data README). Repeats that
// disagree beyond rounding are an error (TestBadFiles).
func TestEightfoldSymmetry(t *testing.T) {
	text := "&FCI NORB=3,NELEC=2 &END\n 0.25 3 1 2 1\n 0.25 1 2 1 3\n 0.5 2 1 0 0\n"
	g, err := ReadFCIDUMP(strings.NewReader(text))
	if err != nil {
		t.Fatal(err)
	}
	slots := [][4]int{{2, 0, 1, 0}, {0, 2, 1, 0}, {2, 0, 0, 1}, {0, 2, 0, 1}, {1, 0, 2, 0}, {0, 1, 2, 0}, {1, 0, 0, 2}, {0, 1, 0, 2}}
	for _, s := range slots {
		if got := g.Two(s[0], s[1], s[2], s[3]); got != 0.25 {
			t.Errorf("Two%v = %v, want 0.25", s, got)
		}
	}
	if got := g.Two(2, 1, 1, 0); got != 0 {
		t.Errorf("Two(2,1,1,0) = %v, want 0 (not listed)", got)
	}
	if g.One(1, 0) != 0.5 || g.One(0, 1) != 0.5 {
		t.Errorf("One(1,0), One(0,1) = %v, %v, want 0.5, 0.5", g.One(1, 0), g.One(0, 1))
	}
	if g.OrbSym != nil || g.ISym != 1 || g.SpinTwice != 0 {
		t.Errorf("defaults: OrbSym %v ISym %d MS2 %d, want nil 1 0", g.OrbSym, g.ISym, g.SpinTwice)
	}
}

// TestBadFiles checks that each malformed file gives an error naming the
// line and the reason, wrapping ErrFormat (or ErrUnrestricted).
func TestBadFiles(t *testing.T) {
	head := "&FCI NORB=2,NELEC=2,MS2=0,\n ORBSYM=1,1,ISYM=1\n&END\n"
	tests := []struct {
		name, text string
		line       string // "line N" expected in the message
		reason     string // substring of the reason
		sentinel   error
	}{
		{"empty", "", "line 1", "missing the &FCI header", ErrFormat},
		{"no header", h2Body, "line 1", "does not start with the &FCI header", ErrFormat},
		{"no end", "&FCI NORB=2,NELEC=2\n", "line 1", "no &END", ErrFormat},
		{"missing NORB", "&FCI\n NELEC=2,\n&END\n" + h2Body, "line 3", "header has no NORB", ErrFormat},
		{"missing NELEC", "&FCI NORB=2,\n&END\n" + h2Body, "line 2", "header has no NELEC", ErrFormat},
		{"NORB not integer", "&FCI NORB=two,NELEC=2 &END\n", "line 1", `NORB=two is not an integer`, ErrFormat},
		{"NORB too large", "&FCI NORB=100000,NELEC=2 &END\n", "line 1", "NORB=100000", ErrFormat},
		{"ORBSYM count", "&FCI NORB=2,NELEC=2,ORBSYM=1 &END\n", "line 1", "ORBSYM has 1 labels", ErrFormat},
		{"UHF", "&FCI NORB=2,NELEC=2,\nUHF=.TRUE.,\n&END\n", "line 2", "not supported", ErrUnrestricted},
		{"stray header word", "&FCI junk NORB=2 NELEC=2 &END\n", "line 1", `unexpected "junk"`, ErrFormat},
		{"two values", "&FCI NORB=2 NELEC=2 3 &END\n", "line 1", "NELEC wants one value, has 2", ErrFormat},
		{"index beyond NORB", head + " 0.5 1 3 0 0\n", "line 4", "orbital index 3 beyond NORB=2", ErrFormat},
		{"negative index", head + " 0.5 1 -1 0 0\n", "line 4", "orbital index -1 is negative", ErrFormat},
		{"non-numeric value", head + h2Body + " abc 1 1 0 0\n", "line 12", `value "abc" is not a number`, ErrFormat},
		{"infinite value", head + " 1e999 1 1 0 0\n", "line 4", "out of range", ErrFormat},
		{"NaN value", head + " NaN 1 1 0 0\n", "line 4", "not finite", ErrFormat},
		{"index not integer", head + " 0.5 1 x 0 0\n", "line 4", `index "x" is not an integer`, ErrFormat},
		{"too few fields", head + " 0.5 1 1 0\n", "line 4", "have 4 fields", ErrFormat},
		{"conflicting repeat", head + " 0.25 2 1 1 1\n 0.5 1 1 1 2\n", "line 5", "(1 1|1 2) = 0.5 conflicts with 0.25 on line 4", ErrFormat},
		{"conflicting one-electron", head + " 0.25 2 1 0 0\n 0.5 1 2 0 0\n", "line 5", "h(1 2) = 0.5 conflicts", ErrFormat},
		{"conflicting constant", head + " 1 0 0 0 0\n 2 0 0 0 0\n", "line 5", "the constant = 2 conflicts", ErrFormat},
		{"bad index pattern", head + " 0.5 0 1 0 0\n", "line 4", "index pattern", ErrFormat},
		// Common practice: the FCIDUMP body starts on the line after the
		// header's terminator; a value there would otherwise be lost.
		{"integral after &END", "&FCI NORB=1,NELEC=2 &END 0.5 1 1 1 1\n", "line 1", `text "0.5 1 1 1 1" after the end of the header`, ErrFormat},
		{"integral after slash", "&FCI NORB=1,NELEC=2 / 0.5 1 1 1 1\n", "line 1", "after the end of the header", ErrFormat},
	}
	for _, tc := range tests {
		_, err := ReadFCIDUMP(strings.NewReader(tc.text))
		if err == nil {
			t.Errorf("%s: ReadFCIDUMP succeeded, want an error", tc.name)
			continue
		}
		msg := err.Error()
		if !strings.Contains(msg, tc.line+":") || !strings.Contains(msg, tc.reason) {
			t.Errorf("%s: error %q, want %q and %q", tc.name, msg, tc.line, tc.reason)
		}
		if !errors.Is(err, tc.sentinel) {
			t.Errorf("%s: errors.Is(%v, %v) = false", tc.name, err, tc.sentinel)
		}
		var le *LineError
		if !errors.As(err, &le) {
			t.Errorf("%s: error %v is not a *LineError", tc.name, err)
		}
	}
}

// TestORBSYMRepeatBounded checks that a header whose ORBSYM repeat counts
// add up to millions of labels is rejected without building them all: the
// reader may keep at most MaxOrbitals labels (here it would otherwise hold
// 128·200000 ints, about 200 MB).
func TestORBSYMRepeatBounded(t *testing.T) {
	text := "&FCI NORB=2,NELEC=2,ORBSYM=" + strings.Repeat("128*1,", 200000) + " &END\n"
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	_, err := ReadFCIDUMP(strings.NewReader(text))
	runtime.ReadMemStats(&after)
	if err == nil || !strings.Contains(err.Error(), "ORBSYM has 25600000 labels, NORB=2") {
		t.Errorf("ReadFCIDUMP(huge ORBSYM) error = %v, want %q", err, "ORBSYM has 25600000 labels, NORB=2")
	}
	// The header text and its tokens take about 30 MB; 100 MB leaves room
	// for them and fails when the labels are all built.
	got := after.TotalAlloc - before.TotalAlloc
	t.Logf("allocated %d MB", got>>20)
	if got > 100<<20 {
		t.Errorf("ReadFCIDUMP(huge ORBSYM) allocated %d MB, want under 100 MB", got>>20)
	}
}

func TestReadFCIDUMPFileNamesFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "broken.fcidump")
	if err := os.WriteFile(path, []byte("&FCI NORB=2 &END\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := ReadFCIDUMPFile(path)
	if err == nil || !strings.Contains(err.Error(), "broken.fcidump") {
		t.Errorf("ReadFCIDUMPFile error = %v, want one naming the file", err)
	}
}

// FuzzReadFCIDUMP feeds mutated files to the reader: it must never panic,
// and what it accepts must have finite, symmetric integrals and a valid
// header.
func FuzzReadFCIDUMP(f *testing.F) {
	for _, name := range []string{"h2_sto3g_0.74A", "lih_sto3g_1.5949A"} {
		data, err := os.ReadFile(filepath.Join("testdata", name+".fcidump"))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(string(data))
	}
	f.Add("&FCI NORB=2,NELEC=2,ORBSYM=2*1 /\n 0.5 1 2 2 1\n 1 1 1 0 0\n")
	f.Add("&FCI NORB=3 NELEC=2 UHF=.TRUE. &END\n")
	f.Add("&fci norb=1, nelec=0\n&end\n 1d0 1 1 1 1\n")
	f.Add("&FCI NORB=2,NELEC=2,MS2=0,ORBSYM=1,6,ISYM=1\n&END\n 0.5 1 1 1 2\n 0.2 1 2 0 0\n")
	f.Add("&FCI NORB=2,NELEC=2,MS2=5,ISYM=99\n&END\n")
	const maxOrbitals = 12 // keep each input's allocation small
	f.Fuzz(func(t *testing.T, text string) {
		g, err := readFCIDUMP(strings.NewReader(text), maxOrbitals)
		if err != nil {
			if !errors.Is(err, ErrFormat) && !errors.Is(err, ErrUnrestricted) {
				t.Fatalf("error %v wraps neither ErrFormat nor ErrUnrestricted", err)
			}
			return
		}
		n := g.Orbitals()
		if n < 1 || n > maxOrbitals || g.Electrons < 0 || g.Electrons > 2*n {
			t.Fatalf("accepted NORB=%d NELEC=%d", n, g.Electrons)
		}
		if g.OrbSym != nil && len(g.OrbSym) != n {
			t.Fatalf("accepted %d ORBSYM labels for NORB=%d", len(g.OrbSym), n)
		}
		for p := range n {
			for q := range n {
				if g.One(p, q) != g.One(q, p) {
					t.Fatalf("h[%d][%d] != h[%d][%d]", p, q, q, p)
				}
				for r := range n {
					for s := range n {
						v := g.Two(p, q, r, s)
						if v != g.Two(r, s, p, q) || v != g.Two(q, p, s, r) || v-v != 0 {
							t.Fatalf("(%d%d|%d%d) = %v breaks the symmetry or is not finite", p, q, r, s, v)
						}
					}
				}
			}
		}
	})
}

// TestWriteRoundTrip writes each test molecule, and a frozen-core active
// space, and reads it back: the integrals must be equal exactly.
func TestWriteRoundTrip(t *testing.T) {
	for _, name := range molecules {
		g := readMolecule(t, name)
		a, err := g.ActiveSpace(min(1, g.Electrons/2-1), g.Orbitals()-min(1, g.Electrons/2-1))
		if err != nil {
			t.Fatal(err)
		}
		for _, in := range []*Integrals{g, a} {
			path := filepath.Join(t.TempDir(), "out.fcidump")
			if err := WriteFCIDUMPFile(path, in); err != nil {
				t.Fatal(err)
			}
			back, err := ReadFCIDUMPFile(path)
			if err != nil {
				t.Fatalf("%s: reading back: %v", name, err)
			}
			if !back.Equal(in) {
				t.Errorf("%s (%d orbitals): read back differs from what was written", name, in.Orbitals())
			}
		}
	}
}

// TestLongLine checks that a line too long for the reader's buffer is a
// format error naming the line.
func TestLongLine(t *testing.T) {
	text := "&FCI NORB=1,NELEC=2 &END\n 0.5 1 1 1 1\n" + strings.Repeat(" ", 17<<20) + "\n"
	_, err := ReadFCIDUMP(strings.NewReader(text))
	if !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), "line 3:") {
		t.Errorf("ReadFCIDUMP(17 MiB line) error = %v, want a format error on line 3", err)
	}
}

// TestISymDefault pins the documented defaults of Integrals.ISym: an
// FCIDUMP without ISYM reads as 1 (common practice: the totally symmetric
// irrep is label 1), New leaves 0.
func TestISymDefault(t *testing.T) {
	g, err := ReadFCIDUMP(strings.NewReader("&FCI NORB=1,NELEC=2 &END\n 0.5 1 1 1 1\n"))
	if err != nil {
		t.Fatal(err)
	}
	if g.ISym != 1 {
		t.Errorf("ReadFCIDUMP(no ISYM).ISym = %d, want 1", g.ISym)
	}
	n, err := New(1)
	if err != nil {
		t.Fatal(err)
	}
	if n.ISym != 0 {
		t.Errorf("New(1).ISym = %d, want 0", n.ISym)
	}
}

// TestWriteNewIntegrals writes integrals made by New (ISym left 0, no
// ORBSYM), which the writer once gave an "ISYM=0" line the reader refuses:
// they must read back equal, with ISym 1, the reader's default (common
// practice: the totally symmetric irrep is label 1). Header fields the
// reader would refuse are an error of the writer, which then writes
// nothing.
func TestWriteNewIntegrals(t *testing.T) {
	g, err := New(3)
	if err != nil {
		t.Fatal(err)
	}
	g.Electrons = 2
	g.SetCore(0.25)
	g.SetOne(1, 0, -0.5)
	g.SetTwo(2, 1, 1, 0, 0.125)
	var buf strings.Builder
	if err := WriteFCIDUMP(&buf, g); err != nil {
		t.Fatal(err)
	}
	back, err := ReadFCIDUMP(strings.NewReader(buf.String()))
	if err != nil {
		t.Fatalf("reading back: %v\n%s", err, buf.String())
	}
	if back.ISym != 1 {
		t.Errorf("ISym read back %d, want 1", back.ISym)
	}
	back.ISym = 0
	if !back.Equal(g) {
		t.Errorf("read back differs from what was written:\n%s", buf.String())
	}
	for _, c := range []struct {
		name string
		set  func(*Integrals)
	}{
		{"ISym 9", func(g *Integrals) { g.ISym = 9 }},
		{"OrbSym label 0", func(g *Integrals) { g.OrbSym = []int{1, 0, 1} }},
		{"OrbSym too short", func(g *Integrals) { g.OrbSym = []int{1, 1} }},
		{"7 electrons in 3 orbitals", func(g *Integrals) { g.Electrons = 7 }},
		{"2S_z of the wrong parity", func(g *Integrals) { g.SpinTwice = 1 }},
		{"4 α electrons", func(g *Integrals) { g.Electrons, g.SpinTwice = 4, 4 }},
	} {
		bad := *g
		c.set(&bad)
		var out strings.Builder
		if err := WriteFCIDUMP(&out, &bad); err == nil {
			t.Errorf("%s: no error", c.name)
		} else if out.Len() != 0 {
			t.Errorf("%s: wrote %d bytes with the error %v", c.name, out.Len(), err)
		}
	}
}
