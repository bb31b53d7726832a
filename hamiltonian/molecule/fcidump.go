package molecule

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/inputcap"
)

// ErrFormat is wrapped by every error about a malformed FCIDUMP file. It is
// hamiltonian.ErrFormat, the module's one sentinel for malformed input.
var ErrFormat = hamiltonian.ErrFormat

// ErrUnrestricted is wrapped by the error for an unrestricted (UHF) file,
// whose α and β integrals differ; this package handles restricted
// integrals only.
var ErrUnrestricted = errors.New("unrestricted (UHF) integrals are not supported")

// LineError reports one bad line of an FCIDUMP file; its Err is [ErrFormat]
// or [ErrUnrestricted]. It is hamiltonian.LineError, the module's one line
// error.
type LineError = hamiltonian.LineError

// maxLineErrors bounds how many bad lines one error lists.
const maxLineErrors = 20

// ReadFCIDUMP reads integrals in the FCIDUMP format (Knowles & Handy,
// Comput. Phys. Commun. 54, 75 (1989)) as described in the package
// documentation. It reports every bad line (up to 20), each a [*LineError],
// joined with errors.Join; errors.Is(err, ErrFormat) holds, or
// errors.Is(err, ErrUnrestricted) for a UHF file.
//
// Beyond the syntax it checks what the header implies: ISYM and every
// ORBSYM label in 1..8 (the irreps of D2h and its subgroups), MS2 of the
// parity of NELEC with both spin counts (NELEC ± MS2)/2 between 0 and
// NORB, at least one integral after the header, and, when ORBSYM is given,
// that no non-zero integral is forbidden by symmetry: h_ij needs equal
// irreps and (ij|kl) a totally symmetric product, which for D2h and its
// subgroups, with labels 1..8 numbered so, is (s_i−1) XOR (s_j−1) XOR
// (s_k−1) XOR (s_l−1) = 0 (common practice in quantum chemistry codes).
// Values up to 1e-10 in magnitude count as zero there.
func ReadFCIDUMP(r io.Reader) (*Integrals, error) { return readFCIDUMP(r, MaxOrbitals) }

// readFCIDUMP is [ReadFCIDUMP] accepting at most maxOrbitals orbitals (the
// fuzz test lowers it to keep each input's allocation small).
func readFCIDUMP(r io.Reader, maxOrbitals int) (*Integrals, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64*1024), 16<<20)
	fr := &fcidumpReader{sc: sc, maxOrbitals: maxOrbitals}
	hdr, err := fr.header()
	if err != nil {
		return nil, err
	}
	g, err := New(hdr.norb)
	if err != nil {
		return nil, err // New's range was checked by parseHeader
	}
	g.Electrons, g.SpinTwice, g.OrbSym, g.ISym = hdr.nelec, hdr.ms2, hdr.orbsym, hdr.isym
	if err := fr.body(g, hdr); err != nil {
		return nil, err
	}
	return g, nil
}

// fcidumpReader holds the state of [ReadFCIDUMP] across its parts.
type fcidumpReader struct {
	sc          *bufio.Scanner
	lineNo      int
	errs        []error
	maxOrbitals int // the largest NORB accepted
}

// bad records an error at a line, up to maxLineErrors.
func (fr *fcidumpReader) bad(line int, sentinel error, format string, args ...any) {
	if len(fr.errs) < maxLineErrors {
		fr.errs = append(fr.errs, lineError(line, sentinel, format, args...))
	}
}

// lineError builds the error about one line; every reader of the package
// makes its line errors here.
func lineError(line int, sentinel error, format string, args ...any) error {
	return &LineError{Reader: "molecule: FCIDUMP", Line: line, Reason: fmt.Sprintf(format, args...), Err: sentinel}
}

// header reads the header: "&FCI", then NAME=value items up to "&END" or
// "/".
func (fr *fcidumpReader) header() (header, error) {
	var toks []token
	started, ended := false, false
	for !ended && fr.sc.Scan() {
		fr.lineNo++
		text := fr.sc.Text()
		if !started {
			t := strings.TrimSpace(text)
			if t == "" {
				continue
			}
			if len(t) < 4 || !strings.EqualFold(t[:4], "&FCI") {
				fr.bad(fr.lineNo, ErrFormat, "file does not start with the &FCI header")
				return header{}, errors.Join(fr.errs...)
			}
			started = true
			text = t[4:]
		}
		if k := endOfHeader(text); k >= 0 {
			// Integrals on the terminator's own line would otherwise be
			// dropped without a word; the body starts on the next line.
			if rest := strings.TrimSpace(text[k+terminatorLen(text[k:]):]); rest != "" {
				fr.bad(fr.lineNo, ErrFormat, "text %s after the end of the header; integrals start on the next line", inputcap.Quote(rest))
			}
			text = text[:k]
			ended = true
		}
		toks = tokenize(toks, text, fr.lineNo)
	}
	if err := scanError(fr.sc.Err(), fr.lineNo+1); err != nil {
		return header{}, err
	}
	if !started {
		fr.bad(max(fr.lineNo, 1), ErrFormat, "empty file: missing the &FCI header")
		return header{}, errors.Join(fr.errs...)
	}
	if !ended {
		fr.bad(fr.lineNo, ErrFormat, "header has no &END (or /) before the end of the file")
		return header{}, errors.Join(fr.errs...)
	}
	hdr, herrs := parseHeader(toks, fr.lineNo, fr.maxOrbitals)
	for _, e := range herrs {
		if len(fr.errs) < maxLineErrors {
			fr.errs = append(fr.errs, e)
		}
	}
	if len(fr.errs) > 0 {
		return header{}, errors.Join(fr.errs...)
	}
	return hdr, nil
}

// body reads the "value i j k l" lines into g.
func (fr *fcidumpReader) body(g *Integrals, hdr header) error {
	n := hdr.norb
	// The line that set each packed value, 0 if none: a value listed again
	// (under a symmetric index order) must agree with the first.
	twoLine := make([]int32, len(g.two))
	oneLine := make([]int32, len(g.one))
	coreLine := int32(0)
	// assign stores v, or reports the integral named by kind and the
	// line's indices when an earlier listing disagrees.
	assign := func(dst *float64, setBy *int32, v float64, kind int, f []string) {
		if *setBy != 0 && !agree(*dst, v) {
			what := [...]string{"the constant", "h(" + f[1] + " " + f[2] + ")", "(" + f[1] + " " + f[2] + "|" + f[3] + " " + f[4] + ")"}[kind]
			fr.bad(fr.lineNo, ErrFormat, "%s = %v conflicts with %v on line %d (the same integral by symmetry)", what, v, *dst, *setBy)
			return
		}
		*dst, *setBy = v, int32(min(fr.lineNo, math.MaxInt32))
	}
	integrals := 0
	for fr.sc.Scan() {
		fr.lineNo++
		f := strings.FieldsFunc(fr.sc.Text(), func(r rune) bool { return r == ' ' || r == '\t' || r == ',' || r == '\r' })
		if len(f) == 0 {
			continue
		}
		v, idx, ok := fr.integralLine(f, n)
		if !ok {
			continue
		}
		integrals++
		i, j, k, l := idx[0], idx[1], idx[2], idx[3]
		switch {
		case i >= 0 && j >= 0 && k >= 0 && l >= 0:
			if forbidden(hdr.orbsym, v, i, j, k, l) {
				fr.bad(fr.lineNo, ErrFormat, "(%d %d|%d %d) = %v is forbidden by symmetry: ORBSYM irreps %s do not multiply to the totally symmetric one",
					i+1, j+1, k+1, l+1, v, irreps(hdr.orbsym, i, j, k, l))
				continue
			}
			x := pair(pair(i, j), pair(k, l))
			assign(&g.two[x], &twoLine[x], v, 2, f)
		case i >= 0 && j >= 0 && k < 0 && l < 0:
			if forbidden(hdr.orbsym, v, i, j) {
				fr.bad(fr.lineNo, ErrFormat, "h(%d %d) = %v is forbidden by symmetry: ORBSYM irreps %s differ", i+1, j+1, v, irreps(hdr.orbsym, i, j))
				continue
			}
			x := pair(i, j)
			assign(&g.one[x], &oneLine[x], v, 1, f)
		case i >= 0 && j < 0 && k < 0 && l < 0:
			// An orbital energy: accepted and ignored.
		case i < 0 && j < 0 && k < 0 && l < 0:
			assign(&g.core, &coreLine, v, 0, f)
		default:
			fr.bad(fr.lineNo, ErrFormat, "index pattern %s %s %s %s is none of i j k l, i j 0 0, i 0 0 0, 0 0 0 0", f[1], f[2], f[3], f[4])
		}
	}
	if err := scanError(fr.sc.Err(), fr.lineNo+1); err != nil {
		return err
	}
	if integrals == 0 && len(fr.errs) == 0 {
		fr.bad(fr.lineNo, ErrFormat, "no integrals after the header")
	}
	if len(fr.errs) > 0 {
		return errors.Join(fr.errs...)
	}
	return nil
}

// integralLine parses the fields of one body line: a value and four
// 1-based orbital indices (0 for none), returned 0-based (−1 for none).
func (fr *fcidumpReader) integralLine(f []string, n int) (v float64, idx [4]int, ok bool) {
	if len(f) != 5 {
		fr.bad(fr.lineNo, ErrFormat, "want a value and 4 orbital indices, have %d fields", len(f))
		return 0, idx, false
	}
	v, reason := parseValue(f[0])
	if reason != "" {
		fr.bad(fr.lineNo, ErrFormat, "%s", reason)
		return 0, idx, false
	}
	for k := range idx {
		i, err := strconv.Atoi(f[k+1])
		switch {
		case err != nil:
			fr.bad(fr.lineNo, ErrFormat, "orbital index %s is not an integer", inputcap.Quote(f[k+1]))
			return 0, idx, false
		case i < 0:
			fr.bad(fr.lineNo, ErrFormat, "orbital index %d is negative", i)
			return 0, idx, false
		case i > n:
			fr.bad(fr.lineNo, ErrFormat, "orbital index %d beyond NORB=%d", i, n)
			return 0, idx, false
		}
		idx[k] = i - 1
	}
	return v, idx, true
}

// forbidden reports whether a non-zero integral over the given orbitals is
// forbidden by the ORBSYM irreps: their product is totally symmetric when
// the XOR of (label − 1) is 0, for D2h and its subgroups.
func forbidden(orbsym []int, v float64, orbs ...int) bool {
	if orbsym == nil || math.Abs(v) <= 1e-10 {
		return false
	}
	x := 0
	for _, o := range orbs {
		x ^= orbsym[o] - 1
	}
	return x != 0
}

// irreps lists the ORBSYM labels of the given orbitals, for messages.
func irreps(orbsym []int, orbs ...int) string {
	var b strings.Builder
	for k, o := range orbs {
		if k > 0 {
			b.WriteByte(',')
		}
		b.WriteString(strconv.Itoa(orbsym[o]))
	}
	return b.String()
}

// agree reports whether two listings of one integral are the same number up
// to the rounding of the writer: |a − b| ≤ 1e-10·max(1, |a|).
func agree(a, b float64) bool { return math.Abs(a-b) <= 1e-10*max(1, math.Abs(a)) }

// scanError turns a scanner failure into an error naming the line: a line
// too long for the buffer is a format error, anything else is the reader's
// own error.
func scanError(err error, line int) error {
	switch {
	case err == nil:
		return nil
	case errors.Is(err, bufio.ErrTooLong):
		return &LineError{Reader: "molecule: FCIDUMP", Line: line, Reason: "line longer than 16 MiB", Err: ErrFormat}
	}
	return fmt.Errorf("molecule: FCIDUMP line %d: %w", line, err)
}

// ReadFCIDUMPFile reads an FCIDUMP file; errors name the file.
func ReadFCIDUMPFile(path string) (*Integrals, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	g, err := ReadFCIDUMP(f)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return g, nil
}

// fortranExponent turns a Fortran D exponent into E. A Replacer is safe for
// concurrent use, so one serves every read.
var fortranExponent = strings.NewReplacer("D", "E", "d", "e")

// parseValue parses a real number, accepting a Fortran D exponent, and
// explains a bad one.
func parseValue(s string) (float64, string) {
	v, err := strconv.ParseFloat(fortranExponent.Replace(s), 64)
	switch {
	case err == nil && (math.IsNaN(v) || math.IsInf(v, 0)):
		return 0, fmt.Sprintf("value %s is not finite", inputcap.Quote(s))
	case errors.Is(err, strconv.ErrRange):
		return 0, fmt.Sprintf("value %s out of range", inputcap.Quote(s))
	case err != nil:
		return 0, fmt.Sprintf("value %s is not a number", inputcap.Quote(s))
	}
	return v, ""
}

// token is one word of the header with its line.
type token struct {
	text string
	line int
}

// endOfHeader returns the index of the header terminator "&END" or "/" in
// the line, or −1.
func endOfHeader(s string) int {
	for i := 0; i < len(s); i++ {
		if s[i] == '/' {
			return i
		}
		if (s[i] == '&' || s[i] == '$') && i+4 <= len(s) && strings.EqualFold(s[i+1:i+4], "END") {
			return i
		}
	}
	return -1
}

// terminatorLen returns the length of the terminator at the start of s,
// as found by endOfHeader: 1 for "/", 4 for "&END" or "$END".
func terminatorLen(s string) int {
	if s[0] == '/' {
		return 1
	}
	return 4
}

// tokenize appends the words of a header line: names, "=" and values,
// separated by white space and commas.
func tokenize(toks []token, s string, line int) []token {
	start := -1
	flush := func(end int) {
		if start >= 0 {
			toks = append(toks, token{s[start:end], line})
			start = -1
		}
	}
	for i := 0; i < len(s); i++ {
		switch c := s[i]; c {
		case ' ', '\t', ',', '\r':
			flush(i)
		case '=':
			flush(i)
			toks = append(toks, token{"=", line})
		default:
			if start < 0 {
				start = i
			}
		}
	}
	flush(len(s))
	return toks
}

type header struct {
	norb, nelec, ms2, isym int
	orbsym                 []int
}

// parseHeader reads the NAME = value, value, ... items. endLine is the line
// of the terminator, where a missing item is reported; NORB may be at most
// maxOrbitals.
func parseHeader(toks []token, endLine, maxOrbitals int) (header, []error) {
	var errs []error
	bad := func(line int, sentinel error, format string, args ...any) {
		errs = append(errs, lineError(line, sentinel, format, args...))
	}
	items := map[string][]token{}
	lines := map[string]int{}
	for i := 0; i < len(toks); {
		if i+1 >= len(toks) || toks[i+1].text != "=" || toks[i].text == "=" {
			bad(toks[i].line, ErrFormat, "header: unexpected %s, want NAME=value", inputcap.Quote(toks[i].text))
			i++
			continue
		}
		name := strings.ToUpper(toks[i].text)
		if _, dup := items[name]; dup {
			bad(toks[i].line, ErrFormat, "header: %s given twice", name)
		}
		lines[name] = toks[i].line
		j := i + 2
		var vals []token
		for j < len(toks) && toks[j].text != "=" && (j+1 >= len(toks) || toks[j+1].text != "=") {
			vals = append(vals, toks[j])
			j++
		}
		items[name] = vals
		i = j
	}
	var h header
	h.isym = 1
	intItem := func(name string, required bool, dst *int) bool {
		vals, ok := items[name]
		if !ok {
			if required {
				bad(endLine, ErrFormat, "header has no %s", name)
			}
			return false
		}
		if len(vals) != 1 {
			bad(lines[name], ErrFormat, "header: %s wants one value, has %d", name, len(vals))
			return false
		}
		v, err := strconv.Atoi(vals[0].text)
		if err != nil {
			bad(vals[0].line, ErrFormat, "header: %s=%s is not an integer", name, vals[0].text)
			return false
		}
		*dst = v
		return true
	}
	if intItem("NORB", true, &h.norb) && (h.norb < 1 || h.norb > maxOrbitals) {
		bad(lines["NORB"], ErrFormat, "header: NORB=%d, want 1 to %d", h.norb, maxOrbitals)
		h.norb = 0
	}
	if intItem("NELEC", true, &h.nelec) && (h.nelec < 0 || (h.norb > 0 && h.nelec > 2*h.norb)) {
		bad(lines["NELEC"], ErrFormat, "header: NELEC=%d, want 0 to 2·NORB", h.nelec)
	}
	if intItem("MS2", false, &h.ms2) && h.norb > 0 {
		alpha, beta := (h.nelec+h.ms2)/2, (h.nelec-h.ms2)/2
		switch {
		case (h.nelec+h.ms2)%2 != 0:
			bad(lines["MS2"], ErrFormat, "header: MS2=%d with NELEC=%d: 2S_z and the electron count must have the same parity", h.ms2, h.nelec)
		case alpha < 0 || beta < 0 || alpha > h.norb || beta > h.norb:
			bad(lines["MS2"], ErrFormat, "header: MS2=%d with NELEC=%d needs %d α and %d β electrons, want each in 0..NORB=%d", h.ms2, h.nelec, alpha, beta, h.norb)
		}
	}
	if intItem("ISYM", false, &h.isym) && (h.isym < 1 || h.isym > 8) {
		bad(lines["ISYM"], ErrFormat, "header: ISYM=%d, want an irrep label 1 to 8 (D2h and its subgroups)", h.isym)
	}
	if vals, ok := items["ORBSYM"]; ok {
		h.orbsym = parseOrbSym(vals, h.norb, maxOrbitals, lines["ORBSYM"], bad)
	}
	checkUHF(items, lines, bad)
	return h, errs
}

// parseOrbSym reads the ORBSYM labels, in the Fortran repeat form "k*v" or
// one by one, each an irrep label 1..8; line is the ORBSYM item's line.
// At most maxOrbitals labels are kept.
func parseOrbSym(vals []token, norb, maxOrbitals, line int, bad func(int, error, string, ...any)) []int {
	var orbsym []int
	// labels counts every label; only the first maxOrbitals are kept,
	// so a hostile repeat count cannot claim unbounded memory.
	labels := 0
	for _, t := range vals {
		// Fortran repeat form "k*v".
		rep, val := 1, t.text
		if k := strings.IndexByte(t.text, '*'); k >= 0 {
			r, err := strconv.Atoi(t.text[:k])
			if err != nil || r < 1 || r > maxOrbitals {
				bad(t.line, ErrFormat, "header: ORBSYM repeat %s is not a count", inputcap.Quote(t.text))
				continue
			}
			rep, val = r, t.text[k+1:]
		}
		v, err := strconv.Atoi(val)
		if err != nil {
			bad(t.line, ErrFormat, "header: ORBSYM value %s is not an integer", inputcap.Quote(t.text))
			continue
		}
		if v < 1 || v > 8 {
			bad(t.line, ErrFormat, "header: ORBSYM label %d, want an irrep label 1 to 8 (D2h and its subgroups)", v)
			continue
		}
		labels += rep
		for range min(rep, maxOrbitals-len(orbsym)) {
			orbsym = append(orbsym, v)
		}
	}
	if norb > 0 && labels != norb {
		bad(line, ErrFormat, "header: ORBSYM has %d labels, NORB=%d", labels, norb)
	}
	return orbsym
}

// checkUHF refuses an unrestricted file (UHF or IUHF true).
func checkUHF(items map[string][]token, lines map[string]int, bad func(int, error, string, ...any)) {
	for _, name := range []string{"UHF", "IUHF"} {
		vals, ok := items[name]
		if !ok {
			continue
		}
		if len(vals) != 1 {
			bad(lines[name], ErrFormat, "header: %s wants one value, has %d", name, len(vals))
			continue
		}
		switch strings.ToUpper(strings.Trim(vals[0].text, ".")) {
		case "FALSE", "F", "0":
		case "TRUE", "T", "1":
			bad(lines[name], ErrUnrestricted, "header: %s=%s: %v", name, vals[0].text, ErrUnrestricted)
		default:
			bad(lines[name], ErrFormat, "header: %s=%s is not a logical value", name, vals[0].text)
		}
	}
}
