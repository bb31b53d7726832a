package pauli

import (
	"errors"
	"strconv"

	"github.com/shotplan/shotplan/internal/inputcap"
)

// ErrSyntax is wrapped by parse errors for malformed text.
var ErrSyntax = errors.New("invalid syntax")

// ErrRange is wrapped by parse errors for a qubit index outside the declared
// count, or a width that does not match.
var ErrRange = errors.New("out of range")

// ParseError records a failed parse, in the shape of strconv.NumError: the
// input, the byte offset where the problem was found, a reason, and a
// sentinel ([ErrSyntax] or [ErrRange]) that errors.Is recognises.
type ParseError struct {
	Input  string // the text being parsed
	Offset int    // byte offset of the problem in Input
	Reason string // what is wrong, in a few words
	Err    error  // ErrSyntax or ErrRange
}

func (e *ParseError) Error() string {
	return "pauli: parsing " + inputcap.Quote(e.Input) + ": offset " + strconv.Itoa(e.Offset) + ": " + e.Reason
}

// Unwrap returns the sentinel error.
func (e *ParseError) Unwrap() error { return e.Err }
