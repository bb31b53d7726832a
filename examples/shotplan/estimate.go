package main

import (
	"flag"
	"fmt"
	"text/tabwriter"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/pauli"
)

func estimateFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	plan := fs.String("plan", "", "plan file the shots were measured by (required)")
	records := fs.String("records", "", "records file: CSV (settings spelled out or as manifest indices), or JSON for a .json name (required)")
	delta := fs.Float64("delta", 0.05, "failure probability δ of the bounds; the error bar is at confidence 1 − δ too")
	readout := fs.String("readout", "", "mitigate readout error with these rates, taken as exact: P, p01=X,p10=Y or @FILE as in simulate")
	calibration := fs.String("calibration", "", "calibration records file (prepared,outcome; see calibrate): mitigate readout error and bound the mitigated estimate with the calibration's uncertainty")
	calDelta := fs.Float64("calibration-delta", 0, "part of -delta spent on the calibration intervals (default -delta/4)")
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
		if err := need("records", *records); err != nil {
			return err
		}
		settings, shots := f.Plan.Distinct()
		var rec *estimate.Records
		if isJSON(*records) {
			rec, err = estimate.ReadJSONFile(*records)
		} else {
			rec, err = estimate.ReadCSVFile(*records, settings)
		}
		if err != nil {
			return bad(err)
		}
		if err := matchRecords(*records, rec, f.Plan, settings, shots); err != nil {
			return err
		}
		ro, err := parseReadout(*readout, h.Qubits())
		if err != nil {
			return err
		}
		if ro != nil || *calibration != "" {
			return e.estimateMitigated(h, rec, settings, shots, ro, *calibration, *delta, *calDelta)
		}
		res, err := estimate.Grouped(h, rec, &estimate.Options{Confidence: 1 - *delta})
		if err != nil {
			return err
		}
		cert, err := guarantee.CertifyPlan(h, f.Plan, *delta, &guarantee.Options{Top: -1})
		if err != nil {
			return err
		}
		data, err := guarantee.Empirical(h, rec, *delta, nil)
		if err != nil {
			return err
		}
		out := struct {
			Energy         float64    `json:"energy"`
			StdError       float64    `json:"std_error"`
			ApproxInterval [2]float64 `json:"approx_interval"`
			Epsilon        float64    `json:"epsilon"`
			DataEpsilon    float64    `json:"data_epsilon"`
			Bias           float64    `json:"bias"`
			Delta          float64    `json:"delta"`
			Shots          int        `json:"shots"`
			Settings       int        `json:"settings"`
			Mitigated      bool       `json:"readout_mitigated"`
		}{res.Energy, res.StdErr, res.ApproxInterval, cert.Total, data.Total, res.Bias, *delta, res.Shots, rec.Groups(), false}
		if e.json {
			return e.writeJSON(out)
		}
		conf := 100 * (1 - *delta)
		tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
		fmt.Fprintf(tw, "energy\t%.8f\tgrouped estimator, %d shots on %s\n", res.Energy, res.Shots, plural(rec.Groups(), "setting"))
		fmt.Fprintf(tw, "error bar\t±%.8f\tAPPROXIMATE %g%% interval (standard error %.3g, normal approximation)\n", res.ApproxInterval[1]-res.Energy, conf, res.StdErr)
		fmt.Fprintf(tw, "certified bound\t±%.8f\tfrom the plan alone, every state, probability ≥ %g%%\n", cert.Total, conf)
		fmt.Fprintf(tw, "data bound\t±%.8f\tfrom these shots (empirical Bernstein), probability ≥ %g%%\n", data.Total, conf)
		tw.Flush()
		if res.Bias > 0 {
			fmt.Fprintf(e.stdout, "(terms never measured add a bias of at most %.4g, included in both bounds)\n", res.Bias)
		}
		return nil
	}
}

// matchRecords checks that the records hold exactly the shots the plan asked
// for: the certificate is about that plan.
func matchRecords(path string, rec *estimate.Records, p *allocate.Plan, settings []pauli.Setting, shots []int) error {
	if rec.Qubits() != p.Qubits {
		return badf("%s: records of %d qubits, the plan has %d", path, rec.Qubits(), p.Qubits)
	}
	inPlan := make([]bool, rec.Groups())
	for k, s := range settings {
		g, ok := rec.Group(s)
		if !ok {
			return badf("%s: no shot of setting %s, the plan asks for %d", path, s, shots[k])
		}
		if n := rec.GroupLen(g); n != shots[k] {
			return badf("%s: %s of setting %s, the plan asks for %d", path, plural(n, "shot"), s, shots[k])
		}
		inPlan[g] = true
	}
	for g, ok := range inPlan {
		if !ok {
			return badf("%s: setting %s is not in the plan", path, rec.Setting(g))
		}
	}
	return nil
}

func estimateHelp() string {
	return `
The records must hold exactly the plan's shots (any order). The energy is the
grouped estimate; std_error and approx_interval come from the data by the
normal approximation and are NOT guarantees. epsilon is the plan's certified
bound and data_epsilon an empirical Bernstein bound from these shots, each at
confidence 1 − δ for shot noise only (readout error and drift not covered).

With -calibration FILE (calibration records, see calibrate) the energy is
readout-mitigated and both bounds are those of the mitigated estimate: they
cover shot noise and the uncertainty of the calibrated flip rates (MATH.md
§2.1.2), with -calibration-delta of δ spent on the calibration intervals.
With -readout RATES the rates are taken as exact and the bounds are those of
the mitigated estimate under that assumption.
`
}
