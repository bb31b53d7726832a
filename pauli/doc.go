// Package pauli provides n-qubit Pauli strings stored as symplectic bit words,
// measurement settings (local ones, and entangled ones that measure a
// commuting family through a Clifford circuit), and a column store of many
// strings for the hot loops of allocation and estimation.
//
// # Conventions
//
// Qubit q is character q of a dense string, read left to right: "XIZY" is X on
// qubit 0, I on qubit 1, Z on qubit 2 and Y on qubit 3. The sparse form
// "X_0 Z_2 Y_3" names qubits explicitly and needs the qubit count beside it.
//
// A measured bit 0 means eigenvalue +1 and a bit 1 means −1. [Bits] holds an
// outcome, bit q in word q/64 at position q%64.
//
// # Representation
//
// A [String] is a pair of bit vectors (x, z), 64 qubits a word: I = (0,0),
// X = (1,0), Z = (0,1), Y = (1,1). Padding bits beyond the qubit count are
// always zero, so whole-word operations never see stray letters. Weight,
// commutation, coverage and parity are a few math/bits operations per 64
// qubits.
//
// # Values and aliasing
//
// [String] and [Setting] are immutable values: no method modifies its
// receiver, and copying one is cheap and safe. Methods that return words
// ([String.Words]) return the internal slices; callers must not modify them.
// A [Table] is a mutable column store used through a pointer.
//
// # Allocation
//
// The batch queries of [Table] are the hot loops of allocation and
// estimation and never allocate: [Table.Covered] appends to the caller's
// slice (allocating only when it lacks capacity), [Table.coverMask] and
// [Table.Samples] write into the caller's buffers. Tests pin this with
// testing.AllocsPerRun. Methods that return a new [String] ([Mul],
// [String.With], [String.Clone], [Table.At]) allocate its words.
//
// # Settings
//
// A [Setting] is local (one of X, Y, Z per qubit, [NewSetting]) or entangled
// ([NewFamilySetting]: a generally commuting family, measured by its
// diagonalising circuit and a Z readout). Coverage, samples, equality, keys
// and the text form work for both kinds; the text form of an entangled
// setting is its generators joined by '|', such as "XX|ZZ". The methods that
// return letters ([Setting.At], [Setting.Pauli], [Setting.Words]) panic on an
// entangled setting; code that handles both checks [Setting.IsLocal] or uses
// [Setting.Diagonal] and [Setting.Circuit], which work for both.
//
// # Panics
//
// Combining strings of different widths (for example [Mul] of a 3-qubit and
// a 4-qubit string) is a programmer error and panics with a message that says
// so. Bad text input never panics: the parsers return a [*ParseError] that
// wraps [ErrSyntax] or [ErrRange].
package pauli
