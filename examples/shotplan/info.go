package main

import (
	"flag"
	"fmt"

	"github.com/shotplan/shotplan/hamiltonian"
)

func infoFlags(fs *flag.FlagSet, e *env) func() error {
	exact := fs.Bool("exact", false, fmt.Sprintf("also compute the exact ground energy (up to %d qubits)", hamiltonian.MaxExactQubits))
	memLimit := memoryLimitFlag(fs, "-exact")
	return func() error {
		if err := e.positional(1, "the Hamiltonian file"); err != nil {
			return err
		}
		path := e.args[0]
		h, err := hamiltonian.ReadFile(path)
		if err != nil {
			return bad(err)
		}
		out := struct {
			File     string   `json:"file"`
			Qubits   int      `json:"qubits"`
			Terms    int      `json:"terms"`
			Offset   float64  `json:"offset"`
			OneNorm  float64  `json:"one_norm"`
			Weight   int      `json:"max_weight"`
			Ground   *float64 `json:"ground_energy,omitempty"`
			Residual *float64 `json:"ground_residual,omitempty"`
		}{File: path, Qubits: h.Qubits(), Terms: h.Len(), Offset: h.Offset(), OneNorm: h.OneNorm()}
		for _, t := range h.Terms() {
			out.Weight = max(out.Weight, t.Pauli.Weight())
		}
		if *exact {
			if h.Qubits() > hamiltonian.MaxExactQubits {
				return badf("%s: -exact: %d qubits, the exact solver takes at most %d", path, h.Qubits(), hamiltonian.MaxExactQubits)
			}
			if err := checkMemory(fmt.Sprintf("%s: -exact on %d qubits", path, h.Qubits()), exactBytes(h.Qubits()), memLimit); err != nil {
				return err
			}
			stop := e.busy(fmt.Sprintf("exact ground state of %d qubits", h.Qubits()))
			g, err := hamiltonian.GroundState(h, nil)
			stop()
			if err != nil {
				return err
			}
			out.Ground, out.Residual = &g.Energy, &g.Residual
		}
		if e.json {
			return e.writeJSON(out)
		}
		fmt.Fprintf(e.stdout, "%s: %d qubits, %s (largest weight %d)\n", path, h.Qubits(), plural(h.Len(), "term"), out.Weight)
		fmt.Fprintf(e.stdout, "offset         %.10g\n", h.Offset())
		fmt.Fprintf(e.stdout, "one-norm       %.10g  (sum of |coefficient| without the offset)\n", h.OneNorm())
		if out.Ground != nil {
			fmt.Fprintf(e.stdout, "ground energy  %.10f  (exact diagonalisation, residual %.1e)\n", *out.Ground, *out.Residual)
		}
		return nil
	}
}
