package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
)

// loadHam reads the Hamiltonian file given by -ham.
func loadHam(path string) (*hamiltonian.Hamiltonian, error) {
	if err := need("ham", path); err != nil {
		return nil, err
	}
	h, _, err := readHamAny(path)
	return h, bad(err)
}

// loadPlan reads the plan file given by -plan. A seed plan too large to
// expand in memory is streamed into its distinct settings with their
// totals (drawn terms left out), which is all the commands use.
func loadPlan(path string) (*allocate.PlanFile, error) {
	return loadPlanChecked(path, nil)
}

// loadPlanChecked is loadPlan with a check of a large seed plan's header
// (its shots and width) before its shots are drawn, which takes time in
// proportion to the shots.
func loadPlanChecked(path string, check func(*allocate.SeedPlan) error) (*allocate.PlanFile, error) {
	f, sp, err := loadPlanOrSeed(path)
	if err != nil || sp == nil {
		return f, err
	}
	if check != nil {
		if err := check(sp); err != nil {
			return nil, err
		}
	}
	settings, shots, err := sp.Distinct()
	if err != nil {
		return nil, badf("%s: a seed plan of %d shots on %d qubits (about %s with every shot in memory): %w",
			path, sp.Shots, sp.Qubits, formatBytes(float64(sp.PlanBytes())), err)
	}
	p := &allocate.Plan{Qubits: sp.Qubits, Settings: settings, Shots: shots, Stats: allocate.Stats{Strategy: sp.Strategy}}
	return &allocate.PlanFile{Plan: p, Seed: sp.Seed, Draw: sp}, nil
}

// loadPlanOrSeed reads the plan file given by -plan, or returns the seed
// plan it holds when that is too large to expand in memory.
func loadPlanOrSeed(path string) (*allocate.PlanFile, *allocate.SeedPlan, error) {
	if err := need("plan", path); err != nil {
		return nil, nil, err
	}
	f, err := allocate.ReadPlanFile(path)
	if errors.Is(err, allocate.ErrPlanTooLarge) {
		sp, err := allocate.ReadSeedPlanFile(path)
		return nil, sp, bad(err)
	}
	return f, nil, bad(err)
}

// loadHamPlan reads the files given by -ham and -plan and checks that the
// plan was made for the Hamiltonian.
func loadHamPlan(hamPath, planPath string) (*hamiltonian.Hamiltonian, *allocate.PlanFile, error) {
	h, err := loadHam(hamPath)
	if err != nil {
		return nil, nil, err
	}
	f, err := loadPlan(planPath)
	if err != nil {
		return nil, nil, err
	}
	if err := f.Check(h); err != nil {
		return nil, nil, badf("%w (Hamiltonian %s)", err, hamPath)
	}
	return h, f, nil
}

// checkDelta checks the -delta flag: a failure probability in (0, 1).
func checkDelta(delta float64) error {
	if !(delta > 0 && delta < 1) {
		return badf("-delta %g: want a value in (0, 1)", delta)
	}
	return nil
}

// isJSON reports whether a file name asks for the JSON form.
func isJSON(path string) bool { return strings.EqualFold(filepath.Ext(path), ".json") }

// writeHam writes h in the text format, or in the JSON form for a .json
// name, atomically.
func writeHam(path string, h *hamiltonian.Hamiltonian) error {
	if !isJSON(path) {
		return hamiltonian.WriteFile(path, h)
	}
	b, err := json.MarshalIndent(h, "", "  ")
	if err != nil {
		return err
	}
	return atomicfile.Write(path, func(w io.Writer) error {
		_, err := w.Write(append(b, '\n'))
		return err
	})
}

// parseReadout parses -readout: empty for none, "P" for a symmetric flip
// probability on every qubit, "P01,P10" (P01: a 0 read as 1; P10: a 1 read as 0), the keyed "p01=X,p10=Y", or
// "@FILE" for per-qubit rates (see parseRates).
func parseReadout(s string, qubits int) ([]estimate.Readout, error) {
	if s == "" {
		return nil, nil
	}
	if strings.Contains(s, "=") || strings.HasPrefix(s, "@") {
		return parseRates(s, qubits)
	}
	parts := strings.Split(s, ",")
	if len(parts) > 2 {
		return nil, badf("-readout %q: want P (every bit flips with probability P) or P01,P10 (0 read as 1 with probability P01, 1 read as 0 with P10)", s)
	}
	var p [2]float64
	for k, f := range parts {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || !(v >= 0 && v < 0.5) { // NaN too
			return nil, badf("-readout %q: %q is not a probability in [0, 0.5)", s, f)
		}
		p[k] = v
	}
	if len(parts) == 1 {
		p[1] = p[0]
	}
	r := make([]estimate.Readout, qubits)
	for q := range r {
		r[q] = estimate.Readout{P01: p[0], P10: p[1]}
	}
	return r, nil
}

// plural returns "1 term" or "2 terms".
func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// notInput refuses an output path that names one of the command's input
// files: writing it would destroy the input.
func notInput(out string, inputs ...string) error {
	o, err := os.Stat(out)
	if err != nil || out == stdoutName {
		return nil // a new file: cannot be an input
	}
	for _, in := range inputs {
		if in == "" {
			continue
		}
		if i, err := os.Stat(in); err == nil && os.SameFile(o, i) {
			return badf("-o %s is the input file %s; choose another output name", out, in)
		}
	}
	return nil
}
