package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
)

// observablesFlagHelp is the help text of -observables.
const observablesFlagHelp = "with an FCIDUMP -ham: also the electrons' observables N, Sz, S2 (comma-separated, any case), from the same shots, all bounds holding together (δ split equally)"

// parseObservables reads the -observables list of a command whose
// Hamiltonian file is path and returns the energy followed by the listed
// observables, built from the FCIDUMP's orbitals (Jordan–Wigner, spin
// orbitals interleaved α, β, as the energy).
func parseObservables(list, path string, h *hamiltonian.Hamiltonian) ([]guarantee.Observable, error) {
	if !isFCIDUMP(path) {
		return nil, badf("-observables needs an FCIDUMP file as -ham (the observables are built from its orbitals); %s is not one", path)
	}
	g, err := molecule.ReadFCIDUMPFile(path)
	if err != nil {
		return nil, bad(err)
	}
	obs := []guarantee.Observable{{Name: "E", H: h}}
	seen := map[molecule.Observable]bool{}
	for _, name := range strings.Split(list, ",") {
		name = strings.TrimSpace(name)
		o, err := molecule.ParseObservable(name)
		if err != nil {
			return nil, badf("-observables: %w", err)
		}
		if seen[o] {
			return nil, badf("-observables: %s listed twice", o)
		}
		seen[o] = true
		q, err := g.QubitObservable(o, fermion.JordanWigner)
		if err != nil {
			return nil, bad(err)
		}
		if q.Qubits() != h.Qubits() {
			return nil, badf("-observables: %s has %d qubits, the Hamiltonian %d", o, q.Qubits(), h.Qubits())
		}
		obs = append(obs, guarantee.Observable{Name: o.String(), H: q})
	}
	return obs, nil
}

// readoutOptions returns the readout part of the observables' options from
// -readout (rates taken as exact) or -calibration FILE: nil for neither.
func readoutOptions(ro []estimate.Readout, calPath string, pairs [][2]int, qubits int, delta, calDelta float64) (*guarantee.AllOptions, error) {
	if ro != nil && calPath != "" {
		return nil, badf("-readout and -calibration both given: the calibration measures the rates")
	}
	if calPath == "" {
		if calDelta != 0 {
			return nil, badf("-calibration-delta without -calibration")
		}
		if ro == nil {
			return nil, nil
		}
		return &guarantee.AllOptions{Rates: ro}, nil
	}
	cal, err := loadCalibration(calPath, pairs, qubits)
	if err != nil {
		return nil, err
	}
	if calDelta != 0 && !(calDelta > 0 && calDelta < delta) {
		return nil, badf("-calibration-delta %g: want a value in (0, -delta = %g)", calDelta, delta)
	}
	// Refuse a calibration with nothing to invert here, naming the file.
	dc := calDelta
	if dc == 0 {
		dc = delta / 4
	}
	if _, err := cal.Mitigation(dc); err != nil {
		return nil, badf("%s: %w", calPath, err)
	}
	return &guarantee.AllOptions{Calibration: cal, CalibrationDelta: calDelta}, nil
}

// observableReport is one line of the estimate -observables output.
type observableReport struct {
	Name      string  `json:"name"`
	Estimate  float64 `json:"estimate"`
	StdError  float64 `json:"std_error"`
	Bound     float64 `json:"certified_bound"`
	DataBound float64 `json:"data_bound"`
	DataForm  string  `json:"data_form"`
	Bias      float64 `json:"bias"`
	// CalibrationBias is the readout mitigation's bias bound (included in
	// both bounds); zero without mitigation.
	CalibrationBias float64 `json:"calibration_bias"`
	Delta           float64 `json:"delta"`
}

// estimateObservables estimates the energy and the listed observables from
// the same records. The certificates are at δ_k = δ/K each; the data bound
// of each observable is the smaller of the pooled and residual bounds, each
// at δ_k/2, so all certificates hold together at 1 − δ, and so do all data
// bounds (union bounds, MATH.md §4.8). With readout options (ro not nil)
// every observable is mitigated; the calibration's share of δ is spent
// once, the rest split over the observables, and the data bound is the
// pooled one of the mitigated samples (MATH.md §2.1.2).
func (e *env) estimateObservables(list, path string, h *hamiltonian.Hamiltonian, p *allocate.Plan, rec *estimate.Records, delta float64, ro *guarantee.AllOptions) error {
	obs, err := parseObservables(list, path, h)
	if err != nil {
		return err
	}
	out := make([]observableReport, len(obs))
	var calDelta float64
	if ro != nil {
		s, err := guarantee.CertifyAll(obs, p, rec, delta, ro)
		if err != nil {
			if ro.Calibration != nil {
				return bad(err)
			}
			return err
		}
		calDelta = s.CalibrationDelta
		for k, b := range s.Bounds {
			out[k] = observableReport{b.Name, b.Estimate.Energy, b.Estimate.StdErr, b.Readout.Certified, b.Data.Bound, "pooled",
				b.Readout.Bias, b.Readout.CalibrationBias, b.Delta}
		}
	} else {
		cert, err := guarantee.CertifyAll(obs, p, rec, delta, &guarantee.AllOptions{Options: &guarantee.Options{Top: -1}})
		if err != nil {
			return err
		}
		pooled, err := guarantee.CertifyAll(obs, nil, rec, delta/2, nil)
		if err != nil {
			return err
		}
		resid, err := guarantee.CertifyAll(obs, nil, rec, delta/2, &guarantee.AllOptions{Form: guarantee.Residual})
		if err != nil {
			return err
		}
		for k, b := range cert.Bounds {
			data, form := pooled.Bounds[k].Data, "pooled"
			if r := resid.Bounds[k].Data; r.Bound < data.Bound {
				data, form = r, "residual"
			}
			out[k] = observableReport{b.Name, b.Estimate.Energy, b.Estimate.StdErr, b.Certificate.Bound, data.Bound, form, b.Estimate.Bias, 0, b.Delta}
		}
	}
	mitigated, calibrated := ro != nil, ro != nil && ro.Calibration != nil
	if e.json {
		return e.writeJSON(struct {
			Observables      []observableReport `json:"observables"`
			Delta            float64            `json:"delta"`
			CalibrationDelta float64            `json:"calibration_delta"`
			Shots            int                `json:"shots"`
			Settings         int                `json:"settings"`
			Mitigated        bool               `json:"readout_mitigated"`
			Calibrated       bool               `json:"readout_calibrated"`
		}{out, delta, calDelta, rec.Len(), rec.Groups(), mitigated, calibrated})
	}
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "observable\testimate\tcertified bound\tdata bound\tδ_k\n")
	for _, r := range out {
		fmt.Fprintf(tw, "%s\t%.8f\t±%.8f\t±%.8f (%s)\t%.3g\n", r.Name, r.Estimate, r.Bound, r.DataBound, r.DataForm, r.Delta)
	}
	tw.Flush()
	fmt.Fprintf(e.stdout, "%d shots on %s; all certified bounds hold together with probability ≥ %g%%, and so do all data bounds\n",
		rec.Len(), plural(rec.Groups(), "setting"), 100*(1-delta))
	switch {
	case calibrated:
		fmt.Fprintf(e.stdout, "(readout-mitigated; δ = %g split as %.3g for the calibration intervals and the rest equally over %d observables;\n"+
			" the bounds cover shot noise and the calibration's uncertainty)\n", delta, calDelta, len(obs))
	case mitigated:
		fmt.Fprintf(e.stdout, "(readout-mitigated with the -readout rates taken as exact; δ = %g split equally over %d observables)\n", delta, len(obs))
	default:
		fmt.Fprintf(e.stdout, "(δ = %g split equally over %d observables; shot noise only)\n", delta, len(obs))
	}
	return nil
}

// parseTargets reads the -targets list: one positive number per observable,
// the energy's first.
func parseTargets(list string, obs []guarantee.Observable) ([]float64, error) {
	if list == "" {
		return nil, badf("-observables in plan needs -targets: one accuracy per observable, the energy's first (%d numbers)", len(obs))
	}
	fields := strings.Split(list, ",")
	if len(fields) != len(obs) {
		return nil, badf("-targets: %d numbers for %d observables (the energy and %d listed)", len(fields), len(obs), len(obs)-1)
	}
	out := make([]float64, len(fields))
	for k, f := range fields {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			return nil, badf("-targets: %q for %s: want a positive number", f, obs[k].Name)
		}
		out[k] = v
	}
	return out, nil
}

// planResolution is the relative precision of the budget plan -observables
// finds: 1%, which saves most of the reruns of an exact bisection.
const planResolution = 0.01

// planObservables plans for the energy and the listed observables with their
// own targets (guarantee.PlanAll), up to maxShots shots. The plan's cover
// counts are those of the energy, so estimate reads it with the same -ham.
func planObservables(obs []guarantee.Observable, targets []float64, a allocate.Allocator, delta float64, maxShots int) (*guarantee.MultiPlan, error) {
	if _, ok := a.(allocate.TermDrawer); ok {
		return nil, badf("-observables: strategy %s draws terms of one Hamiltonian; choose a strategy that picks settings", allocate.Name(a))
	}
	m, err := guarantee.PlanAll(obs, targets, a, delta, maxShots, &guarantee.AllOptions{Resolution: planResolution})
	if err != nil {
		return nil, bad(err)
	}
	if m.Plan.Cover, err = allocate.CoverCounts(obs[0].H, m.Plan.Settings, m.Plan.Shots); err != nil {
		return nil, err
	}
	return m, nil
}

// printMultiPlan reports the budget found and each observable's certificate.
func (e *env) printMultiPlan(m *guarantee.MultiPlan, obs []guarantee.Observable, targets []float64, out string) {
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "observable\ttarget\tcertified bound\tδ_k\n")
	for k, b := range m.Certified.Bounds {
		fmt.Fprintf(tw, "%s\t%.6g\t%.6g\t%.3g\n", obs[k].Name, targets[k], b.Certificate.Bound, b.Delta)
	}
	tw.Flush()
	if m.Met {
		fmt.Fprintf(e.stdout, "wrote %s: %d shots meet every target together with probability ≥ %g%%\n", outName(out), m.Shots, 100*(1-m.Certified.Delta))
	} else {
		fmt.Fprintf(e.stdout, "wrote %s: %d shots (-shots) do not meet every target; raise -shots\n", outName(out), m.Shots)
	}
}

// planForObservables is plan -observables: the plan of the smallest budget
// found (up to maxShots) that certifies every target, written to out.
func (e *env) planForObservables(h *hamiltonian.Hamiltonian, path, list, targetList string, a allocate.Allocator, delta float64, maxShots int, out string, seed uint64) error {
	if err := checkDelta(delta); err != nil {
		return err
	}
	obs, err := parseObservables(list, path, h)
	if err != nil {
		return err
	}
	targets, err := parseTargets(targetList, obs)
	if err != nil {
		return err
	}
	m, err := planObservables(obs, targets, a, delta, maxShots)
	if err != nil {
		return err
	}
	write := allocate.WriteCompactPlan
	if isJSON(out) {
		write = allocate.WritePlan
	}
	if err := e.writeOutput(out, func(w io.Writer) error { return write(w, m.Plan, seed) }); err != nil {
		return err
	}
	if e.json {
		type line struct {
			Name   string  `json:"name"`
			Target float64 `json:"target"`
			Bound  float64 `json:"certified_bound"`
			Delta  float64 `json:"delta"`
		}
		res := struct {
			Output    string  `json:"output"`
			Met       bool    `json:"met"`
			Shots     int     `json:"shots"`
			Delta     float64 `json:"delta"`
			Evaluated int     `json:"budgets_tried"`
			Lines     []line  `json:"observables"`
		}{Output: out, Met: m.Met, Shots: m.Shots, Delta: delta, Evaluated: m.Evaluated}
		for k, b := range m.Certified.Bounds {
			res.Lines = append(res.Lines, line{obs[k].Name, targets[k], b.Certificate.Bound, b.Delta})
		}
		return e.writeJSON(res)
	}
	e.printMultiPlan(m, obs, targets, out)
	return nil
}
