package hamiltonian

import (
	"errors"
	"fmt"
)

// ErrFormat is wrapped by every error about malformed input that the module
// reads: a Hamiltonian in text or JSON form, an FCIDUMP file (package
// molecule), a records CSV or manifest (package estimate). Those packages'
// ErrFormat is this same value, so errors.Is(err, ErrFormat) holds with any
// of them.
var ErrFormat = errors.New("malformed input")

// LineError reports one bad line of a text file read by the module. It is
// the one line error of the module: molecule.LineError and
// estimate.LineError are this type, so errors.As finds it with any of the
// three names.
type LineError struct {
	Reader string // the package that read the line, which starts the message
	Line   int    // 1-based line number
	Text   string // the line as read, when kept
	Reason string // what is wrong
	Err    error  // what Unwrap returns; nil means ErrFormat
}

func (e *LineError) Error() string {
	if e.Reader == "" {
		return fmt.Sprintf("line %d: %s", e.Line, e.Reason)
	}
	return fmt.Sprintf("%s: line %d: %s", e.Reader, e.Line, e.Reason)
}

// Unwrap returns Err, or [ErrFormat] if Err is nil.
func (e *LineError) Unwrap() error {
	if e.Err != nil {
		return e.Err
	}
	return ErrFormat
}
