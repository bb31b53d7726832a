package estimate

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/internal/inputcap"
)

// An amplitude file holds a user state for [NewSimulator] as text, one item
// a line:
//
//	shotplan amplitudes 1
//	qubits N
//	INDEX RE IM
//	...
//
// INDEX is the basis state (bit q of INDEX is qubit q, 0 ≤ INDEX < 2^N),
// RE and IM the real and imaginary parts of its amplitude; basis states not
// listed have amplitude 0. Lines may come in any order but an index only
// once; blank lines and lines starting with '#' are skipped. The state need
// not be normalised (the simulator normalises it) but must not be zero.
const amplitudesMagic = "shotplan amplitudes 1"

// maxAmplitudeLine caps the length of one line of an amplitude file.
const maxAmplitudeLine = 256

// ReadAmplitudes reads an amplitude file (see the format above
// [WriteAmplitudes]) and returns the full state vector of 2^N amplitudes.
// It reads at most 2^N amplitude lines of at most 256 bytes each, N at
// most [hamiltonian.MaxExactQubits]. A bad line returns an error wrapping
// [ErrFormat] that names the line.
func ReadAmplitudes(r io.Reader) ([]complex128, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), maxAmplitudeLine)
	line := 0
	next := func() (string, bool) {
		for sc.Scan() {
			line++
			s := strings.TrimSpace(sc.Text())
			if s == "" || s[0] == '#' {
				continue
			}
			return s, true
		}
		return "", false
	}
	bad := func(format string, args ...any) error {
		return fmt.Errorf("estimate: %w: amplitudes: line %d: %s", ErrFormat, line, fmt.Sprintf(format, args...))
	}
	scanErr := func() error {
		if err := sc.Err(); err != nil {
			if err == bufio.ErrTooLong {
				return fmt.Errorf("estimate: %w: amplitudes: line %d: longer than %d bytes", ErrFormat, line+1, maxAmplitudeLine)
			}
			return fmt.Errorf("estimate: amplitudes: %w", err)
		}
		return nil
	}
	s, ok := next()
	if !ok {
		if err := scanErr(); err != nil {
			return nil, err
		}
		return nil, fmt.Errorf("estimate: %w: amplitudes: empty input, want a first line %q", ErrFormat, amplitudesMagic)
	}
	if s != amplitudesMagic {
		return nil, bad("want %q, got %s", amplitudesMagic, inputcap.Quote(s))
	}
	if s, ok = next(); !ok {
		if err := scanErr(); err != nil {
			return nil, err
		}
		return nil, fmt.Errorf("estimate: %w: amplitudes: no \"qubits N\" line", ErrFormat)
	}
	v, ok := strings.CutPrefix(s, "qubits ")
	n, err := strconv.Atoi(strings.TrimSpace(v))
	if !ok || err != nil || n < 1 || n > hamiltonian.MaxExactQubits {
		return nil, bad("want \"qubits N\" with 1 ≤ N ≤ %d, got %s", hamiltonian.MaxExactQubits, inputcap.Quote(s))
	}
	dim := uint64(1) << n
	psi := make([]complex128, dim)
	seen := make([]bool, dim)
	count := uint64(0)
	for {
		s, ok := next()
		if !ok {
			break
		}
		f := strings.Fields(s)
		if len(f) != 3 {
			return nil, bad("want INDEX RE IM, got %d fields", len(f))
		}
		a, err := strconv.ParseUint(f[0], 10, 64)
		if err != nil || a >= dim {
			return nil, bad("index %s: want a whole number from 0 to %d", inputcap.Quote(f[0]), dim-1)
		}
		if seen[a] {
			return nil, bad("index %d listed again", a)
		}
		re, err1 := strconv.ParseFloat(f[1], 64)
		im, err2 := strconv.ParseFloat(f[2], 64)
		if err1 != nil || err2 != nil || math.IsNaN(re) || math.IsNaN(im) || math.IsInf(re, 0) || math.IsInf(im, 0) {
			return nil, bad("amplitude (%s, %s): want two finite numbers", inputcap.Quote(f[1]), inputcap.Quote(f[2]))
		}
		seen[a] = true
		psi[a] = complex(re, im)
		count++
	}
	if err := scanErr(); err != nil {
		return nil, err
	}
	norm := 0.0
	for _, v := range psi {
		norm += real(v)*real(v) + imag(v)*imag(v)
	}
	if count == 0 || norm == 0 || math.IsInf(norm, 0) {
		return nil, fmt.Errorf("estimate: %w: amplitudes: the state is zero or too large to normalise (%d amplitudes listed, norm² %v)", ErrFormat, count, norm)
	}
	return psi, nil
}

// ReadAmplitudesFile reads an amplitude file from path; see [ReadAmplitudes].
func ReadAmplitudesFile(path string) ([]complex128, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	psi, err := ReadAmplitudes(f)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return psi, nil
}

// WriteAmplitudes writes the non-zero amplitudes of state (length 2^N,
// 1 ≤ N ≤ [hamiltonian.MaxExactQubits]) in the text format
//
//	shotplan amplitudes 1
//	qubits N
//	INDEX RE IM
//
// one line per non-zero amplitude in increasing index order, each number
// in the shortest decimal that reads back to the same float64, so
// [ReadAmplitudes] returns the state exactly.
func WriteAmplitudes(w io.Writer, state []complex128) error {
	if len(state) < 2 || len(state)&(len(state)-1) != 0 || len(state) > 1<<hamiltonian.MaxExactQubits {
		return fmt.Errorf("estimate: %w: WriteAmplitudes: %d amplitudes, want 2^N with 1 ≤ N ≤ %d", ErrFormat, len(state), hamiltonian.MaxExactQubits)
	}
	n := 0
	for 1<<n < len(state) {
		n++
	}
	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "%s\nqubits %d\n", amplitudesMagic, n)
	var buf []byte
	for a, v := range state {
		if v == 0 {
			continue
		}
		if math.IsNaN(real(v)) || math.IsNaN(imag(v)) || math.IsInf(real(v), 0) || math.IsInf(imag(v), 0) {
			return fmt.Errorf("estimate: %w: WriteAmplitudes: amplitude %d is %v", ErrFormat, a, v)
		}
		buf = strconv.AppendInt(buf[:0], int64(a), 10)
		buf = append(buf, ' ')
		buf = strconv.AppendFloat(buf, real(v), 'g', -1, 64)
		buf = append(buf, ' ')
		buf = strconv.AppendFloat(buf, imag(v), 'g', -1, 64)
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// WriteAmplitudesFile writes [WriteAmplitudes] to path atomically.
func WriteAmplitudesFile(path string, state []complex128) error {
	return atomicfile.Write(path, func(w io.Writer) error { return WriteAmplitudes(w, state) })
}
