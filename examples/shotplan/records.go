package main

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
	"strings"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

// stdin is what "-records -" reads; tests replace it.
var stdin io.Reader = os.Stdin

// listFlag is a flag that may be given several times, each value added to
// the list. A value may also hold several names separated by commas.
type listFlag []string

func (l *listFlag) String() string { return strings.Join(*l, ",") }

func (l *listFlag) Set(v string) error {
	for _, s := range strings.Split(v, ",") {
		if s = strings.TrimSpace(s); s == "" {
			return fmt.Errorf("empty file name in %q", v)
		}
		*l = append(*l, s)
	}
	return nil
}

// Repeatable marks the flags that may be given more than once.
func (l *listFlag) Repeatable() {}

// readRecords reads and combines the records files of -records: each is CSV
// (settings spelled out or as indices into settings) or JSON for a .json
// name; "-" reads standard input, JSON if it starts with '{'. Shots of the
// same setting from several files are appended in the order of the files.
func readRecords(paths []string, settings []pauli.Setting, qubits int) (*estimate.Records, error) {
	if len(paths) == 0 {
		return nil, badf("flag -records is required")
	}
	if n := len(slices.DeleteFunc(slices.Clone(paths), func(p string) bool { return p != "-" })); n > 1 {
		return nil, badf("-records -: standard input given more than once")
	}
	out := estimate.NewRecords(qubits)
	for _, path := range paths {
		var rec *estimate.Records
		var err error
		switch {
		case path == "-":
			rec, err = readStdinRecords(settings)
		case isJSON(path):
			rec, err = estimate.ReadJSONFile(path)
		default:
			rec, err = estimate.ReadCSVFile(path, settings)
		}
		if err != nil {
			return nil, bad(err)
		}
		if rec.Qubits() != qubits {
			return nil, badf("%s: records of %d qubits, the plan has %d", recordsName(path), rec.Qubits(), qubits)
		}
		if len(paths) == 1 {
			return rec, nil
		}
		for g := range rec.Groups() {
			s := rec.Setting(g)
			for j := range rec.GroupLen(g) {
				if err := out.Add(s, rec.Outcome(g, j)); err != nil {
					return nil, badf("%s: %w", recordsName(path), err)
				}
			}
		}
	}
	return out, nil
}

// streamRecords feeds the shots of the -records sources, in order, to st:
// CSV sources are scanned line by line (parsed on a second goroutine when
// GOMAXPROCS allows, [estimate.Stream.AddCSV]), JSON sources read whole first (as
// readRecords would) and fed group by group, the order readRecords
// combines them in.
func streamRecords(paths []string, settings []pauli.Setting, qubits int, st *estimate.Stream) error {
	if len(paths) == 0 {
		return badf("flag -records is required")
	}
	if n := len(slices.DeleteFunc(slices.Clone(paths), func(p string) bool { return p != "-" })); n > 1 {
		return badf("-records -: standard input given more than once")
	}
	feed := func(path string, rec *estimate.Records) error {
		if rec.Qubits() != qubits {
			return badf("%s: records of %d qubits, the plan has %d", recordsName(path), rec.Qubits(), qubits)
		}
		for g := range rec.Groups() {
			s := rec.Setting(g)
			for j := range rec.GroupLen(g) {
				if err := st.Add(s, rec.Outcome(g, j)); err != nil {
					return badf("%s: %s", recordsName(path), strings.TrimPrefix(err.Error(), "estimate: "))
				}
			}
		}
		return nil
	}
	scan := func(path string, r io.Reader) error {
		n, err := st.AddCSV(r, settings, nil)
		if err != nil {
			return badf("%s: %w", recordsName(path), err)
		}
		if n != qubits {
			return badf("%s: records of %d qubits, the plan has %d", recordsName(path), n, qubits)
		}
		return nil
	}
	for _, path := range paths {
		var err error
		switch {
		case path == "-":
			br := bufio.NewReader(stdin)
			first, peekErr := firstByte(br)
			if peekErr != nil && !errors.Is(peekErr, io.EOF) {
				return bad(fmt.Errorf("standard input: %w", peekErr))
			}
			if first == '{' {
				var rec *estimate.Records
				if rec, err = estimate.ReadJSON(br); err != nil {
					return bad(fmt.Errorf("standard input: %w", err))
				}
				err = feed(path, rec)
			} else {
				err = scan(path, br)
			}
		case isJSON(path):
			var rec *estimate.Records
			if rec, err = estimate.ReadJSONFile(path); err != nil {
				return bad(err)
			}
			err = feed(path, rec)
		default:
			var f *os.File
			if f, err = os.Open(path); err != nil {
				return bad(err)
			}
			err = scan(path, f)
			f.Close()
		}
		if err != nil {
			return err
		}
	}
	return nil
}

// recordsName names a records source in messages.
func recordsName(path string) string {
	if path == "-" {
		return "standard input"
	}
	return path
}

func readStdinRecords(settings []pauli.Setting) (*estimate.Records, error) {
	br := bufio.NewReader(stdin)
	var rec *estimate.Records
	var err error
	first, peekErr := firstByte(br)
	if peekErr != nil && !errors.Is(peekErr, io.EOF) {
		return nil, fmt.Errorf("standard input: %w", peekErr)
	}
	if first == '{' {
		rec, err = estimate.ReadJSON(br)
	} else {
		rec, err = estimate.ReadCSV(br, settings)
	}
	if err != nil {
		return nil, fmt.Errorf("standard input: %w", err)
	}
	return rec, nil
}

// firstByte returns the first byte that is not white space, without
// consuming it.
func firstByte(br *bufio.Reader) (byte, error) {
	for n := 1; ; n++ {
		b, err := br.Peek(n)
		if len(b) < n {
			return 0, err
		}
		if c := b[n-1]; !bytes.ContainsRune([]byte(" \t\r\n"), rune(c)) {
			return c, nil
		}
		if n >= 4096 {
			return 0, nil
		}
	}
}
