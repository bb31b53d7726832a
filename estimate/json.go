package estimate

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// jsonRecords is the JSON form of [Records]:
//
//	{"qubits": 4, "settings": ["ZZZZ", "XXYY"],
//	 "shots": [{"setting": 0, "outcome": "0110"}, {"setting": 1, "outcome": "1010"}]}
type jsonRecords struct {
	Qubits   int        `json:"qubits"`
	Settings []string   `json:"settings"`
	Shots    []jsonShot `json:"shots"`
}

type jsonShot struct {
	Setting int    `json:"setting"`
	Outcome string `json:"outcome"`
}

// MarshalJSON encodes r in the JSON form described in the package
// documentation.
func (r *Records) MarshalJSON() ([]byte, error) {
	j := jsonRecords{Qubits: r.n, Settings: make([]string, r.Groups()), Shots: make([]jsonShot, 0, r.shots)}
	for g := range j.Settings {
		j.Settings[g] = r.set[g].String()
	}
	for _, s := range r.Shots() {
		j.Shots = append(j.Shots, jsonShot{Setting: s.Group, Outcome: s.Outcome.Format(r.n)})
	}
	return json.Marshal(j)
}

// UnmarshalJSON decodes the JSON form into r, replacing its contents. It
// reports the first bad setting or shot by its index, a syntax or type
// error by its line, and an unknown or missing "shots" key (so that a
// misspelt key is not read as records without shots); it leaves r
// unchanged on error. errors.Is(err, ErrFormat) holds.
func (r *Records) UnmarshalJSON(b []byte) error {
	var j struct {
		jsonRecords
		Shots *[]jsonShot `json:"shots"`
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	err := dec.Decode(&j)
	if err == nil {
		if _, end := dec.Token(); end != io.EOF {
			err = fmt.Errorf("text after the closing brace")
		}
	}
	if err != nil {
		var (
			se  *json.SyntaxError
			te  *json.UnmarshalTypeError
			off int64 = -1
		)
		switch {
		case errors.As(err, &se):
			off = se.Offset
		case errors.As(err, &te):
			off = te.Offset
		}
		if off >= 0 && off <= int64(len(b)) {
			line := 1 + bytes.Count(b[:off], []byte{'\n'})
			return fmt.Errorf("estimate: %w: line %d: %w", ErrFormat, line, err)
		}
		return fmt.Errorf("estimate: %w: %w", ErrFormat, err)
	}
	if j.Shots == nil {
		return fmt.Errorf("estimate: %w: no \"shots\" key", ErrFormat)
	}
	j.jsonRecords.Shots = *j.Shots
	if j.Qubits < 1 {
		return fmt.Errorf("estimate: %w: qubit count %d, want at least 1", ErrFormat, j.Qubits)
	}
	settings := make([]pauli.Setting, len(j.Settings))
	for k, t := range j.Settings {
		s, err := pauli.ParseSetting(t)
		if err != nil {
			return fmt.Errorf("estimate: %w: setting %d (%q): %v", ErrFormat, k, t, err)
		}
		if s.Qubits() != j.Qubits {
			return fmt.Errorf("estimate: %w: setting %d (%q) has %d qubits, want %d", ErrFormat, k, t, s.Qubits(), j.Qubits)
		}
		settings[k] = s
	}
	rec := NewRecords(j.Qubits)
	var bits pauli.Bits
	if len(settings) > 0 { // the settings' text bounds the width
		bits = pauli.NewBits(j.Qubits)
	}
	for k, s := range j.jsonRecords.Shots {
		if s.Setting < 0 || s.Setting >= len(settings) {
			return fmt.Errorf("estimate: %w: shot %d: setting index %d out of range: %d settings", ErrFormat, k, s.Setting, len(settings))
		}
		if len(s.Outcome) != j.Qubits {
			return fmt.Errorf("estimate: %w: shot %d: outcome %q has %d bits, want %d", ErrFormat, k, s.Outcome, len(s.Outcome), j.Qubits)
		}
		if q, ok := parseBitsInto(bits, s.Outcome); !ok {
			return fmt.Errorf("estimate: %w: shot %d: outcome %q: character %q at qubit %d is not 0 or 1", ErrFormat, k, s.Outcome, s.Outcome[q], q)
		}
		rec.appendShot(rec.group(settings[s.Setting]), bits)
	}
	*r = *rec
	return nil
}

// WriteJSON writes rec to w in the JSON form.
func WriteJSON(w io.Writer, rec *Records) error {
	b, err := rec.MarshalJSON()
	if err != nil {
		return err
	}
	bw := bufio.NewWriter(w)
	bw.Write(b)
	bw.WriteByte('\n')
	return bw.Flush()
}

// WriteJSONFile writes rec to path in the JSON form, atomically.
func WriteJSONFile(path string, rec *Records) error {
	return atomicfile.Write(path, func(w io.Writer) error { return WriteJSON(w, rec) })
}

// MaxJSONRecordsBytes is the largest JSON records input [ReadJSON] reads:
// 1 GiB. Larger record sets belong in the CSV form, which is read line by
// line.
const MaxJSONRecordsBytes = 1 << 30

// ReadJSON reads records in the JSON form. On error it returns nil. Input
// that does not start with '{' (after white space) is refused at once, and
// input beyond [MaxJSONRecordsBytes] is refused without being read whole.
func ReadJSON(r io.Reader) (*Records, error) {
	br := bufio.NewReader(io.LimitReader(r, MaxJSONRecordsBytes+1))
	for {
		c, err := br.ReadByte()
		if err != nil {
			return nil, fmt.Errorf("estimate: %w: JSON records: no '{' before the end of the input", ErrFormat)
		}
		if c == ' ' || c == '\t' || c == '\r' || c == '\n' {
			continue
		}
		if c != '{' {
			return nil, fmt.Errorf("estimate: %w: JSON records: starts with byte %#x, want '{'", ErrFormat, c)
		}
		br.UnreadByte()
		break
	}
	b, err := io.ReadAll(br)
	if err != nil {
		return nil, err
	}
	if len(b) > MaxJSONRecordsBytes {
		return nil, fmt.Errorf("estimate: %w: JSON records larger than %d bytes; use the CSV form", ErrFormat, MaxJSONRecordsBytes)
	}
	var rec Records
	if err := rec.UnmarshalJSON(b); err != nil {
		return nil, err
	}
	return &rec, nil
}

// ReadJSONFile reads records from a JSON file. Errors name the file.
func ReadJSONFile(path string) (*Records, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	rec, err := ReadJSON(f)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return rec, nil
}
