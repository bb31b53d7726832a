package main

import (
	"bufio"
	"errors"
	"io"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
)

// stdoutName is the -o value that writes the output to standard output.
const stdoutName = "-"

// output checks the -o target of a command whose output is one stream,
// before any work: a device, pipe, socket or directory is refused (writing
// would replace it). For -o - the output goes to standard output, so the
// summary moves to standard error, and -json (which prints the summary on
// standard output too) is refused.
func (e *env) output(path string) error {
	if path == stdoutName {
		if e.json {
			return badf("-o - and -json both write to standard output; give -o a file name")
		}
		e.data, e.stdout = e.stdout, e.stderr
		return nil
	}
	return outputErr(atomicfile.Check(path))
}

// writeOutput writes the command's output to -o: standard output for -o -,
// otherwise the file, atomically.
func (e *env) writeOutput(path string, write func(w io.Writer) error) error {
	if path != stdoutName {
		return outputErr(atomicfile.Write(path, write))
	}
	bw := bufio.NewWriter(e.data)
	if err := write(bw); err != nil {
		return err
	}
	return bw.Flush()
}

// outputErr marks a write error as an input error, adding how to write to
// standard output to the refusal of a target that is not a regular file.
func outputErr(err error) error {
	var nr *atomicfile.NotRegularError
	if errors.As(err, &nr) {
		return badf("-o %s: a %s, not a regular file; refusing to replace it (-o %s writes to standard output)", nr.Path, nr.Kind, stdoutName)
	}
	return bad(err)
}

// outName is how a summary names the output.
func outName(path string) string {
	if path == stdoutName {
		return "standard output"
	}
	return path
}

// writeHamOutput writes h to -o: the text format on standard output for
// -o -, otherwise as writeHam does.
func (e *env) writeHamOutput(path string, h *hamiltonian.Hamiltonian) error {
	if path == stdoutName {
		return e.writeOutput(path, func(w io.Writer) error { return hamiltonian.Write(w, h) })
	}
	return outputErr(writeHam(path, h))
}
