package main

import (
	"flag"
	"fmt"

	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
)

func convertFlags(fs *flag.FlagSet, e *env) func() error {
	enc := fermion.JordanWigner
	fs.TextVar(&enc, "encoding", fermion.JordanWigner, "fermion-to-qubit encoding `jw|bk|parity`: Jordan–Wigner, Bravyi–Kitaev or parity (any case)")
	frozen := fs.Int("frozen", 0, "number of lowest spatial orbitals frozen doubly occupied")
	active := fs.Int("active", 0, "number of active spatial orbitals above the frozen ones (0: all the rest)")
	out := fs.String("o", "", "output Hamiltonian file (text format; JSON if the name ends in .json; - for standard output)")
	return func() error {
		if err := e.positional(1, "the FCIDUMP file"); err != nil {
			return err
		}
		if err := need("o", *out); err != nil {
			return err
		}
		path := e.args[0]
		if err := notInput(*out, path); err != nil {
			return err
		}
		if err := e.output(*out); err != nil {
			return err
		}
		g, err := molecule.ReadFCIDUMPFile(path)
		if err != nil {
			return bad(err)
		}
		if *frozen != 0 || *active != 0 {
			n := *active
			if n == 0 {
				n = g.Orbitals() - *frozen
			}
			if g, err = g.ActiveSpace(*frozen, n); err != nil {
				return badf("%s: -frozen %d -active %d: %w", path, *frozen, *active, err)
			}
		}
		h, err := g.QubitHamiltonian(enc)
		if err != nil {
			return err
		}
		if err := e.writeHamOutput(*out, h); err != nil {
			return err
		}
		res := struct {
			Input     string  `json:"input"`
			Output    string  `json:"output"`
			Encoding  string  `json:"encoding"`
			Orbitals  int     `json:"orbitals"`
			Electrons int     `json:"electrons"`
			Qubits    int     `json:"qubits"`
			Terms     int     `json:"terms"`
			Offset    float64 `json:"offset"`
			OneNorm   float64 `json:"one_norm"`
		}{path, *out, enc.String(), g.Orbitals(), g.Electrons, h.Qubits(), h.Len(), h.Offset(), h.OneNorm()}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "wrote %s: %d qubits, %s, offset %.10g, one-norm %.6g\n", outName(*out), h.Qubits(), plural(h.Len(), "term"), h.Offset(), h.OneNorm())
		fmt.Fprintf(e.stdout, "(%s encoding of %d active orbitals with %d electrons; spin orbitals interleaved α, β)\n", enc, g.Orbitals(), g.Electrons)
		return nil
	}
}
