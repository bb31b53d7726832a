package main

import (
	"flag"
	"fmt"

	"github.com/shotplan/shotplan/hamiltonian"
)

func infoFlags(fs *flag.FlagSet, e *env) func() error {
	exact := fs.Bool("exact", false, fmt.Sprintf("also compute the exact ground energy (up to %d qubits)", hamiltonian.MaxExactQubits))
	sf := addSectorFlags(fs)
	memLimit := memoryLimitFlag(fs, "-exact")
	return func() error {
		if err := e.positional(1, "the Hamiltonian file"); err != nil {
			return err
		}
		path := e.args[0]
		h, g, err := readHamAny(path)
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
			Elec     *int     `json:"electrons,omitempty"`
			Spin     *int     `json:"spin_twice,omitempty"`
		}{File: path, Qubits: h.Qubits(), Terms: h.Len(), Offset: h.Offset(), OneNorm: h.OneNorm()}
		for _, t := range h.Terms() {
			out.Weight = max(out.Weight, t.Pauli.Weight())
		}
		var sec chosenSector
		if *exact {
			if h.Qubits() > hamiltonian.MaxExactQubits {
				return badf("%s: -exact: %d qubits, the exact solver takes at most %d", path, h.Qubits(), hamiltonian.MaxExactQubits)
			}
			if sec, err = sf.resolve(h.Qubits(), g); err != nil {
				return err
			}
			if err := checkMemory(fmt.Sprintf("%s: -exact on %d qubits (%s)", path, h.Qubits(), sec), groundBytes(h.Qubits(), sec), memLimit); err != nil {
				return err
			}
			stop := e.busy(fmt.Sprintf("exact ground state of %d qubits (%s)", h.Qubits(), sec))
			gs, err := groundState(h, sec)
			stop()
			if err != nil {
				return err
			}
			out.Ground, out.Residual = &gs.Energy, &gs.Residual
			if sec.sector != nil {
				out.Elec, out.Spin = &sec.electrons, &sec.spinTwice
			}
		} else if *sf.electrons != "" || *sf.spin != "" {
			return badf("-electrons and -spin choose the sector of -exact; add -exact")
		}
		if e.json {
			return e.writeJSON(out)
		}
		fmt.Fprintf(e.stdout, "%s: %d qubits, %s (largest weight %d)\n", path, h.Qubits(), plural(h.Len(), "term"), out.Weight)
		fmt.Fprintf(e.stdout, "offset         %.10g\n", h.Offset())
		fmt.Fprintf(e.stdout, "one-norm       %.10g  (sum of |coefficient| without the offset)\n", h.OneNorm())
		if out.Ground != nil {
			fmt.Fprintf(e.stdout, "ground energy  %.10f  (exact diagonalisation, %s, residual %.1e)\n", *out.Ground, sec, *out.Residual)
		}
		return nil
	}
}
