package main

import (
	"flag"
	"fmt"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
)

func simulateFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	plan := fs.String("plan", "", "plan file (required)")
	seed := fs.Uint64("seed", 1, "seed of the simulated outcomes")
	readout := fs.String("readout", "", "readout error `P|P01,P10`: P flips every read bit with probability P; P01,P10 reads a 0 as 1 with probability P01 and a 1 as 0 with probability P10 (default none)")
	out := fs.String("o", "", "output records file: CSV, or JSON if the name ends in .json (required)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := need("o", *out); err != nil {
			return err
		}
		if err := notInput(*out, *ham, *plan); err != nil {
			return err
		}
		h, f, err := loadHamPlan(*ham, *plan)
		if err != nil {
			return err
		}
		if h.Qubits() > hamiltonian.MaxExactQubits {
			return badf("%s: %d qubits, the simulator takes at most %d", *ham, h.Qubits(), hamiltonian.MaxExactQubits)
		}
		ro, err := parseReadout(*readout, h.Qubits())
		if err != nil {
			return err
		}
		sim, ground, err := estimate.GroundStateSimulator(h, *seed, &estimate.SimulatorOptions{Readout: ro})
		if err != nil {
			return err
		}
		rec := estimate.NewRecords(h.Qubits())
		if err := sim.Run(f.Plan.Settings, f.Plan.Shots, rec); err != nil {
			return err
		}
		if isJSON(*out) {
			err = estimate.WriteJSONFile(*out, rec)
		} else {
			err = estimate.WriteCSVFile(*out, rec)
		}
		if err != nil {
			return bad(err)
		}
		res := struct {
			Output       string  `json:"output"`
			Shots        int     `json:"shots"`
			Seed         uint64  `json:"seed"`
			GroundEnergy float64 `json:"ground_energy"`
			Readout      string  `json:"readout,omitempty"`
		}{*out, rec.Len(), *seed, ground.Energy, *readout}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "wrote %s: %d shots simulated on the exact ground state (energy %.10f), seed %d", *out, rec.Len(), ground.Energy, *seed)
		if *readout != "" {
			fmt.Fprintf(e.stdout, ", readout error %s", *readout)
		}
		fmt.Fprintln(e.stdout)
		return nil
	}
}
