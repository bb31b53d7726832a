package main

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

func simulateFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	plan := fs.String("plan", "", "plan file (required)")
	seed := fs.Uint64("seed", 1, "seed of the simulated outcomes")
	readout := fs.String("readout", "", "readout error: P flips every read bit with probability P; p01=X,p10=Y sets the two directions (p01: 0 read as 1, p10: 1 read as 0; P01,P10 also works); @FILE reads per-qubit rates, CSV qubit,p01,p10 (default none)")
	calShots := fs.Int("calibration-shots", 0, "also simulate this many calibration shots of each preparation (all 0, all 1) through the same readout error")
	calOut := fs.String("calibration-o", "", "output calibration records file for -calibration-shots (CSV prepared,outcome)")
	out := fs.String("o", "", "output records file: CSV, or JSON if the name ends in .json (required; - for CSV on standard output)")
	memLimit := memoryLimitFlag(fs, "the simulation")
	stateFile := fs.String("state", "", "ground-state file: read if it exists (made for the same Hamiltonian and sector), else computed and written, so later runs skip the exact solver")
	prepare := fs.String("prepare", "ground", "state to measure: ground (the exact ground state of the sector), hf (the determinant filling the lowest orbitals with the sector's α and β electrons, spin orbitals interleaved α, β: the Hartree–Fock state of an FCIDUMP), or an amplitude file (\"shotplan amplitudes 1\", \"qubits N\", then INDEX RE IM lines)")
	depol := fs.String("depolarizing", "", "probability P that each qubit is depolarised just before it is measured (every outcome of a product-basis setting flips with probability P/2)")
	dephase := fs.String("dephasing", "", "probability P that each qubit loses its coherence just before it is measured (X and Y outcomes of a product-basis setting flip with probability P/2)")
	pairFlip := fs.String("pair-flip", "", "probability P that the read bits of each pair of neighbouring qubits q, q+1 flip together")
	pairsFlag := fs.String("pairs", "", "with -pair-flip: only these disjoint pairs of neighbouring qubits A-B (B = A ± 1) flip together, and -calibration-shots prepares the 4 states of every pair (as calibrate -pairs) and reads them through all the noise")
	sf := addSectorFlags(fs)
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
		if err := e.output(*out); err != nil {
			return err
		}
		if (*calShots != 0) != (*calOut != "") || *calShots < 0 {
			return badf("-calibration-shots and -calibration-o go together (a positive count and a file)")
		}
		if *calShots > maxCalibrationShots {
			return badf("-calibration-shots %d: at most %d (the file has a line per shot)", *calShots, maxCalibrationShots)
		}
		if *calOut != "" {
			if *calOut == stdoutName || *calOut == *out {
				return badf("-calibration-o %s: give a file of its own", *calOut)
			}
			if err := notInput(*calOut, *ham, *plan); err != nil {
				return err
			}
			if err := outputErr(atomicfile.Check(*calOut)); err != nil {
				return err
			}
		}
		if err := need("ham", *ham); err != nil {
			return err
		}
		h, g, err := readHamAny(*ham)
		if err != nil {
			return bad(err)
		}
		// A large seed plan's records alone take 16 bytes a shot (a lower
		// bound of simulateBytes): refuse before drawing its shots.
		f, err := loadPlanChecked(*plan, func(sp *allocate.SeedPlan) error {
			return checkMemory(fmt.Sprintf("simulating %d shots on %d qubits", sp.Shots, sp.Qubits), 16*float64(sp.Shots), memLimit)
		})
		if err != nil {
			return err
		}
		if err := f.Check(h); err != nil {
			return badf("%w (Hamiltonian %s)", err, *ham)
		}
		if *stateFile != "" {
			if err := notInput(*stateFile, *ham, *plan, *out); err != nil {
				return err
			}
		}
		if h.Qubits() > hamiltonian.MaxExactQubits {
			return badf("%s: %d qubits, the simulator takes at most %d", *ham, h.Qubits(), hamiltonian.MaxExactQubits)
		}
		ro, err := parseReadout(*readout, h.Qubits())
		if err != nil {
			return err
		}
		sec, err := sf.resolve(h.Qubits(), g)
		if err != nil {
			return err
		}
		opts := &estimate.SimulatorOptions{Readout: ro}
		if opts.Depolarizing, err = uniformRate("depolarizing", *depol, h.Qubits()); err != nil {
			return err
		}
		if opts.Dephasing, err = uniformRate("dephasing", *dephase, h.Qubits()); err != nil {
			return err
		}
		if *pairFlip != "" && h.Qubits() < 2 {
			return badf("-pair-flip needs at least 2 qubits")
		}
		if opts.PairFlip, err = uniformRate("pair-flip", *pairFlip, h.Qubits()-1); err != nil {
			return err
		}
		pairs, err := parsePairs(*pairsFlag, h.Qubits())
		if err != nil {
			return err
		}
		if pairs != nil {
			if opts.PairFlip, err = onlyPairs(opts.PairFlip, pairs); err != nil {
				return err
			}
		}
		if err := checkMemory(fmt.Sprintf("simulating %d shots on %d qubits (%s)", f.Plan.TotalShots(), h.Qubits(), sec), simulateBytes(h.Qubits(), f.Plan.TotalShots(), sec), memLimit); err != nil {
			return err
		}
		stop := e.busy(fmt.Sprintf("simulating %d shots on %d qubits", f.Plan.TotalShots(), h.Qubits()))
		defer stop()
		var state []complex128
		var ground *hamiltonian.Eigenpair
		what := ""
		switch *prepare {
		case "ground":
			g, err := groundOrCached(h, sec, *stateFile)
			if err != nil {
				return err
			}
			ground, state = &g, g.State
			what = fmt.Sprintf("the exact ground state (%s, energy %.10f)", sec, g.Energy)
		case "hf":
			if sec.sector == nil {
				return badf("-prepare hf needs a number of electrons: give -electrons (and -spin), or an FCIDUMP file")
			}
			if state, err = estimate.HartreeFockState(h.Qubits(), sec.electrons, sec.spinTwice); err != nil {
				return bad(err)
			}
			what = fmt.Sprintf("the Hartree–Fock determinant (%s, energy %.10f)", sec, h.Energy(state))
		default:
			if *stateFile != "" {
				return badf("-state keeps a computed ground state; it does not go with -prepare %s", *prepare)
			}
			if err := notInput(*out, *prepare); err != nil {
				return err
			}
			if state, err = estimate.ReadAmplitudesFile(*prepare); err != nil {
				return bad(err)
			}
			if len(state) != 1<<h.Qubits() {
				return badf("%s: the state has %d amplitudes; the Hamiltonian %s has %d qubits (2^%d amplitudes)", *prepare, len(state), *ham, h.Qubits(), h.Qubits())
			}
			what = fmt.Sprintf("the state of %s (energy %.10f)", *prepare, h.Energy(state))
		}
		sim, err := estimate.NewSimulator(state, *seed, opts)
		if errors.Is(err, estimate.ErrFormat) {
			return bad(err) // the library refused an input value
		}
		if err != nil {
			return err
		}
		rec := estimate.NewRecords(h.Qubits())
		err = sim.Run(f.Plan.Settings, f.Plan.Shots, rec)
		stop()
		if err != nil {
			return err
		}
		write := estimate.WriteCSV
		if isJSON(*out) {
			write = estimate.WriteJSON
		}
		if err := e.writeOutput(*out, func(w io.Writer) error { return write(w, rec) }); err != nil {
			return err
		}
		if *calOut != "" {
			rates := ro
			if rates == nil {
				rates = make([]estimate.Readout, h.Qubits())
			}
			if pairs != nil {
				err = writeNoisyCalibration(*calOut, h.Qubits(), pairs, opts, *calShots, *seed^0x63616c)
			} else {
				err = estimate.WriteCalibrationShotsFile(*calOut, rates, *calShots, *seed^0x63616c)
			}
			if err := outputErr(err); err != nil {
				return err
			}
		}
		res := struct {
			Output       string   `json:"output"`
			Shots        int      `json:"shots"`
			Seed         uint64   `json:"seed"`
			Prepared     string   `json:"prepared"`
			Energy       float64  `json:"energy"`
			GroundEnergy *float64 `json:"ground_energy,omitempty"`
			Readout      string   `json:"readout,omitempty"`
			Depolarizing string   `json:"depolarizing,omitempty"`
			Dephasing    string   `json:"dephasing,omitempty"`
			PairFlip     string   `json:"pair_flip,omitempty"`
			Pairs        string   `json:"pairs,omitempty"`
			Sector       string   `json:"sector"`
			Calibration  string   `json:"calibration_output,omitempty"`
			CalShots     int      `json:"calibration_shots,omitempty"`
		}{*out, rec.Len(), *seed, *prepare, h.Energy(state), nil, *readout, *depol, *dephase, *pairFlip, *pairsFlag, sec.String(), *calOut, *calShots}
		if ground != nil {
			res.GroundEnergy, res.Energy = &ground.Energy, ground.Energy
		}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "wrote %s: %d shots simulated on %s, seed %d", outName(*out), rec.Len(), what, *seed)
		if *readout != "" {
			fmt.Fprintf(e.stdout, ", readout error %s", *readout)
		}
		flips := *pairFlip
		if flips != "" && *pairsFlag != "" {
			flips += " on pairs " + *pairsFlag
		}
		for _, n := range [][2]string{{"depolarizing", *depol}, {"dephasing", *dephase}, {"pair flips", flips}} {
			if n[1] != "" {
				fmt.Fprintf(e.stdout, ", %s %s", n[0], n[1])
			}
		}
		fmt.Fprintln(e.stdout)
		if *calOut != "" {
			preps := 2
			if pairs != nil {
				preps = 4
			}
			fmt.Fprintf(e.stdout, "wrote %s: %d calibration shots of each of %d preparations\n", *calOut, *calShots, preps)
		}
		return nil
	}
}

// groundOrCached returns the ground state of h in the sector, read from the
// state file if it exists, else computed (and written to the file if one is
// named).
func groundOrCached(h *hamiltonian.Hamiltonian, sec chosenSector, stateFile string) (hamiltonian.Eigenpair, error) {
	if stateFile != "" {
		if _, err := os.Stat(stateFile); err == nil {
			g, err := readState(stateFile, h, sec)
			if err != nil {
				return g, bad(err)
			}
			return g, nil
		}
	}
	g, err := groundState(h, sec)
	if err != nil {
		return g, err
	}
	if stateFile != "" {
		if err := writeState(stateFile, h, sec, g); err != nil {
			return g, bad(err)
		}
	}
	return g, nil
}

// onlyPairs keeps the pair flips of the listed pairs (neighbours) and
// drops the others.
func onlyPairs(flip []float64, pairs [][2]int) ([]float64, error) {
	for _, p := range pairs {
		if d := p[1] - p[0]; d != 1 && d != -1 {
			return nil, badf("-pairs %d-%d: the simulator flips neighbouring qubits q, q+1 together; give neighbours", p[0], p[1])
		}
	}
	if flip == nil {
		return nil, nil
	}
	out := make([]float64, len(flip))
	for _, p := range pairs {
		q := min(p[0], p[1])
		out[q] = flip[q]
	}
	return out, nil
}

// calibrationChunk is how many calibration shots are simulated at once.
const calibrationChunk = 1 << 14

// writeNoisyCalibration writes calibration records (prepared,outcome) of
// shots shots of each preparation of estimate.PairCalibrationPreparations,
// each a basis state measured in Z on the simulator with every noise model
// of opts.
func writeNoisyCalibration(path string, n int, pairs [][2]int, opts *estimate.SimulatorOptions, shots int, seed uint64) error {
	preps, err := estimate.PairCalibrationPreparations(n, pairs)
	if err != nil {
		return err
	}
	z, err := pauli.ParseSetting(strings.Repeat("Z", n))
	if err != nil {
		return err
	}
	return atomicfile.Write(path, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString("prepared,outcome\n")
		var buf []byte
		for k, p := range preps {
			psi := make([]complex128, 1<<n)
			idx := 0
			for q := range n {
				idx |= int(p.Get(q)) << q
			}
			psi[idx] = 1
			sim, err := estimate.NewSimulator(psi, seed+uint64(k), opts)
			if err != nil {
				return err
			}
			text := p.Format(n)
			for left := shots; left > 0; left -= calibrationChunk {
				rec := estimate.NewRecords(n)
				if err := sim.Run([]pauli.Setting{z}, []int{min(left, calibrationChunk)}, rec); err != nil {
					return err
				}
				for s := range rec.GroupLen(0) {
					buf = append(append(append(buf[:0], text...), ','), rec.Outcome(0, s).AppendText(nil, n)...)
					buf = append(buf, '\n')
					bw.Write(buf)
				}
			}
		}
		return bw.Flush()
	})
}

// uniformRate parses the probability of flag name (empty: none) and
// returns it repeated count times.
func uniformRate(name, s string, count int) ([]float64, error) {
	if s == "" {
		return nil, nil
	}
	p, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || !(p >= 0 && p <= 1) {
		return nil, badf("-%s %q: want a probability in [0, 1]", name, s)
	}
	r := make([]float64, count)
	for i := range r {
		r[i] = p
	}
	return r, nil
}
