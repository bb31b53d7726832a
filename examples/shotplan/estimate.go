package main

import (
	"flag"
	"fmt"
	"strings"
	"text/tabwriter"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

func estimateFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	plan := fs.String("plan", "", "plan file the shots were measured by (required)")
	var records listFlag
	fs.Var(&records, "records", "records file: CSV (settings spelled out or as manifest indices), or JSON for a .json name; - reads standard input; repeat the flag or separate names by commas to combine files (required)")
	delta := fs.Float64("delta", 0.05, "failure probability δ of the bounds; the error bar is at confidence 1 − δ too")
	readout := fs.String("readout", "", "mitigate readout error with these rates, taken as exact: P, p01=X,p10=Y or @FILE as in simulate")
	calibration := fs.String("calibration", "", "calibration records file (prepared,outcome; see calibrate): mitigate readout error and bound the mitigated estimate with the calibration's uncertainty")
	calDelta := fs.Float64("calibration-delta", 0, "part of -delta spent on the calibration intervals (default -delta/4)")
	pairsFlag := fs.String("pairs", "", "with -calibration: read these disjoint pairs of qubits through 4×4 readout models calibrated from the file (as given to calibrate -pairs): A-B,C-D")
	observables := fs.String("observables", "", observablesFlagHelp)
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := checkDelta(*delta); err != nil {
			return err
		}
		h, f, err := loadHamPlan(*ham, *plan)
		if err != nil {
			return err
		}
		settings, shots := f.Plan.Distinct()
		ro, err := parseReadout(*readout, h.Qubits())
		if err != nil {
			return err
		}
		pairs, err := parseMitigationPairs(*pairsFlag, *calibration, h.Qubits())
		if err != nil {
			return err
		}
		split := f.Plan.Split
		if split != nil && (*observables != "" || ro != nil || *calibration != "") {
			return badf("the plan splits coefficients between settings (-strategy overlap or overlap-gc); -observables, -readout and -calibration do not take such plans yet")
		}
		// Plain estimates, of local or entangled settings, with or without
		// a coefficient split, are streamed; the others read the records
		// into memory.
		if *observables == "" && ro == nil && *calibration == "" {
			return e.estimateStream(records, h, f.Plan, settings, shots, *delta)
		}
		rec, err := readRecords(records, settings, h.Qubits())
		if err != nil {
			return err
		}
		name := recordsName(strings.Join(records, ", "))
		if err := matchRecords(name, rec, f.Plan, settings, shots); err != nil {
			return err
		}
		if *observables != "" {
			ropts, err := readoutOptions(ro, *calibration, pairs, h.Qubits(), *delta, *calDelta)
			if err != nil {
				return err
			}
			return e.estimateObservables(*observables, *ham, h, f.Plan, rec, *delta, ropts)
		}
		if ro != nil || *calibration != "" {
			return e.estimateMitigated(h, rec, settings, shots, ro, *calibration, pairs, *delta, *calDelta)
		}
		res, err := estimate.Grouped(h, rec, &estimate.Options{Confidence: 1 - *delta, Split: split})
		if err != nil {
			return err
		}
		cert, err := guarantee.CertifyPlan(h, f.Plan, *delta, &guarantee.Options{Top: -1})
		if err != nil {
			return err
		}
		data, form, err := dataBound(h, rec, *delta, split)
		if err != nil {
			return err
		}
		return e.printEstimate(res, cert, data, form, rec.Groups(), *delta, split != nil)
	}
}

// estimateStream is the plain estimate (no mitigation, no observables) of
// a plan of local or entangled settings, with the plan's coefficient split
// if it has one: the records are
// streamed into an estimate.Stream, CSV sources line by line in memory
// that does not grow with the number of shots; JSON sources are read
// whole first.
func (e *env) estimateStream(paths []string, h *hamiltonian.Hamiltonian, p *allocate.Plan, settings []pauli.Setting, shots []int, delta float64) error {
	st, err := estimate.NewStream(h, settings, shots, &estimate.Options{Confidence: 1 - delta, Split: p.Split})
	if err != nil {
		return err
	}
	if err := streamRecords(paths, settings, h.Qubits(), st); err != nil {
		return err
	}
	name := recordsName(strings.Join(paths, ", "))
	if err := st.Check(); err != nil {
		return badf("%s: %s", name, strings.TrimPrefix(err.Error(), "estimate: "))
	}
	res, err := st.Result()
	if err != nil {
		return err
	}
	cert, err := guarantee.CertifyPlan(h, p, delta, &guarantee.Options{Top: -1})
	if err != nil {
		return err
	}
	pooled, err := guarantee.EmpiricalStream(st, delta/2, nil)
	if err != nil {
		return err
	}
	resid, err := guarantee.EmpiricalStream(st, delta/2, &guarantee.EmpiricalOptions{Form: guarantee.Residual})
	if err != nil {
		return err
	}
	data, form := pooled, "pooled"
	if resid.Bound < pooled.Bound {
		data, form = resid, "residual"
	}
	return e.printEstimate(res, cert, data, form, st.Groups(), delta, len(p.Split) > 0)
}

// printEstimate writes the plain estimate's report.
func (e *env) printEstimate(res *estimate.Result, cert *guarantee.Certificate, data *guarantee.DataBound, form string, groups int, delta float64, split bool) error {
	out := struct {
		Energy         float64    `json:"energy"`
		StdError       float64    `json:"std_error"`
		ApproxInterval [2]float64 `json:"approx_interval"`
		Bound          float64    `json:"certified_bound"`
		DataBound      float64    `json:"data_bound"`
		DataForm       string     `json:"data_form"`
		Bias           float64    `json:"bias"`
		Delta          float64    `json:"delta"`
		Shots          int        `json:"shots"`
		Settings       int        `json:"settings"`
		Mitigated      bool       `json:"readout_mitigated"`
	}{res.Energy, res.StdErr, res.ApproxInterval, cert.Bound, data.Bound, form, res.Bias, delta, res.Shots, groups, false}
	if e.json {
		return e.writeJSON(out)
	}
	conf := 100 * (1 - delta)
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	what := "grouped estimator"
	if split {
		what = "grouped estimator with the plan's coefficient split"
	}
	fmt.Fprintf(tw, "energy\t%.8f\t%s, %d shots on %s\n", res.Energy, what, res.Shots, plural(groups, "setting"))
	fmt.Fprintf(tw, "error bar\t±%.8f\tAPPROXIMATE %g%% interval (standard error %.3g, normal approximation)\n", res.ApproxInterval[1]-res.Energy, conf, res.StdErr)
	fmt.Fprintf(tw, "certified bound\t±%.8f\tfrom the plan alone, every state, probability ≥ %g%%\n", cert.Bound, conf)
	fmt.Fprintf(tw, "data bound\t±%.8f\tfrom these shots (empirical Bernstein, %s), probability ≥ %g%%\n", data.Bound, form, conf)
	tw.Flush()
	if bar := res.ApproxInterval[1] - res.Energy; data.Bound > 3*bar {
		fmt.Fprintf(e.stdout, "(the data bound is %.1f× the error bar: a fixed plan pays for the range of every shot; for a bound near the\n"+
			" error bar let every shot draw its setting at random and certify round by round: shotplan rounds start -ham H -eps E)\n", data.Bound/bar)
	}
	if res.Bias > 0 {
		fmt.Fprintf(e.stdout, "(terms never measured add a bias of at most %.4g, included in both bounds)\n", res.Bias)
	}
	return nil
}

// dataBound returns the smaller of the pooled and the residual data bounds
// (guarantee.Empirical), each at δ/2, so that the one reported holds at
// 1 − δ (a union bound), and the name of the form it came from. Pooled
// suits settings with many shots each; residual, plans whose settings are
// mostly measured once (MATH.md §4.3, §4.7). A plan's coefficient split
// (MATH.md §2.5), if any, is the estimate's.
func dataBound(h *hamiltonian.Hamiltonian, rec *estimate.Records, delta float64, split hamiltonian.Split) (*guarantee.DataBound, string, error) {
	pooled, err := guarantee.Empirical(h, rec, delta/2, &guarantee.EmpiricalOptions{Split: split})
	if err != nil {
		return nil, "", err
	}
	resid, err := guarantee.Empirical(h, rec, delta/2, &guarantee.EmpiricalOptions{Form: guarantee.Residual, Split: split})
	if err != nil {
		return nil, "", err
	}
	if resid.Bound < pooled.Bound {
		return resid, "residual", nil
	}
	return pooled, "pooled", nil
}

// matchRecords checks that the records hold exactly the shots the plan asked
// for: the certificate is about that plan.
func matchRecords(path string, rec *estimate.Records, p *allocate.Plan, settings []pauli.Setting, shots []int) error {
	if rec.Qubits() != p.Qubits {
		return badf("%s: records of %d qubits, the plan has %d", path, rec.Qubits(), p.Qubits)
	}
	// Settings outside the plan first: such a row would otherwise show up
	// as a count mismatch of the plan setting it was meant for.
	inPlan := make([]bool, rec.Groups())
	for _, s := range settings {
		if g, ok := rec.Group(s); ok {
			inPlan[g] = true
		}
	}
	for g, ok := range inPlan {
		if !ok {
			return badf("%s: setting %s is not in the plan (%s)", path, quoteSetting(rec.Setting(g).String()), plural(rec.GroupLen(g), "shot"))
		}
	}
	for k, s := range settings {
		g, ok := rec.Group(s)
		if !ok {
			return badf("%s: no shot of setting %s, the plan asks for %d", path, s, shots[k])
		}
		if n := rec.GroupLen(g); n != shots[k] {
			return badf("%s: %s of setting %s, the plan asks for %d", path, plural(n, "shot"), s, shots[k])
		}
	}
	return nil
}

// quoteSetting shortens a setting's text for a message.
func quoteSetting(s string) string {
	if len(s) > 80 {
		return s[:77] + "..."
	}
	return s
}

func estimateHelp() string {
	return `
The records must hold exactly the plan's shots (any order). CSV records are
read in one pass in memory that does not grow with the number of shots
(MATH.md §4.10), also for plans with entangled settings (-strategy
sorted-gc, color-gc, greedy-gc) and plans that split coefficients
(-strategy overlap, overlap-gc); JSON records, and estimates with -readout,
-calibration or -observables, are read whole. The energy is the
grouped estimate; std_error and approx_interval come from the data by the
normal approximation and are NOT guarantees. certified_bound is the plan's
certified bound and data_bound an empirical Bernstein bound from these shots, each at
confidence 1 − δ for shot noise only (readout error and drift not covered).
data_bound is the smaller of the pooled and the residual bounds, each at
δ/2; data_form names it. When it is more than 3× the error bar the plan's
per-shot ranges dominate it, and a line says so: a randomised plan certified
with "shotplan rounds" (the anytime route) gets closer.

With -calibration FILE (calibration records, see calibrate) the energy is
readout-mitigated and both bounds are those of the mitigated estimate: they
cover shot noise and the uncertainty of the calibrated flip rates (MATH.md
§2.1.2), with -calibration-delta of δ spent on the calibration intervals.
With -pairs A-B,C-D as well (a calibration made with calibrate -pairs) the
listed disjoint pairs are read through their own 4×4 readout models, for
devices whose neighbouring read bits flip together (MATH.md §2.1.5).
With -readout RATES the rates are taken as exact and the bounds are those of
the mitigated estimate under that assumption.

With -observables N,Sz,S2 (an FCIDUMP as -ham) the particle number, S_z and
S² built from its orbitals are estimated from the same records as the energy,
one line each; δ is split equally over the energy and the listed observables
so that all certified bounds hold together at 1 − δ, and so do all data
bounds (MATH.md §4.8). With -calibration (or -readout) as well, every
observable is readout-mitigated and bounded with the calibration's
uncertainty: -calibration-delta of δ is spent once on the calibration
intervals, the rest split equally over the observables (MATH.md §2.1.2,
§4.8), and the data bound is the pooled one.
`
}
