package main

import (
	"flag"
	"fmt"
	"strings"
	"text/tabwriter"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
)

func certifyFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	plan := fs.String("plan", "", "plan file (required)")
	delta := fs.Float64("delta", 0.05, "failure probability δ: the bound holds with probability at least 1 − δ")
	top := fs.Int("top", 5, "list the `N` terms with the largest share of the bound (0: none)")
	readout := fs.String("readout", "", "certify the readout-mitigated estimate with these rates, taken as exact: P, p01=X,p10=Y or @FILE as in simulate")
	calibration := fs.String("calibration", "", "calibration records file (see calibrate): certify the readout-mitigated estimate, covering the calibration's uncertainty")
	calDelta := fs.Float64("calibration-delta", 0, "part of -delta spent on the calibration intervals (default -delta/4)")
	pairsFlag := fs.String("pairs", "", "with -calibration: read these disjoint pairs of qubits through 4×4 readout models calibrated from the file (as given to calibrate -pairs): A-B,C-D")
	observables := fs.String("observables", "", "with an FCIDUMP -ham: also certify the electrons' observables N, Sz, S2 (comma-separated, any case), all bounds holding together (δ split equally)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := checkDelta(*delta); err != nil {
			return err
		}
		h, err := loadHam(*ham)
		if err != nil {
			return err
		}
		f, sp, err := loadPlanOrSeed(*plan)
		if err == nil && sp != nil {
			if err = sp.Check(h); err != nil {
				err = badf("%s: %w (Hamiltonian %s)", *plan, err, *ham)
			}
		}
		if err != nil {
			return err
		}
		if sp != nil {
			// A seed plan too large to expand: certify it from its
			// distribution, without drawing its shots.
			if *observables != "" || *readout != "" || *calibration != "" || *calDelta != 0 || *pairsFlag != "" {
				return badf("%s: a seed plan of %d shots, too many to expand, is certified from its distribution alone; -readout, -calibration, -pairs and -observables need a plan of fewer shots", *plan, sp.Shots)
			}
			return e.certifySeed(h, sp, *ham, *plan, *delta)
		}
		if *observables != "" || *readout != "" || *calibration != "" || *calDelta != 0 || *pairsFlag != "" {
			if f.Plan.Split != nil {
				return badf("%s: the plan splits coefficients between settings (-strategy overlap or overlap-gc); -observables, -readout, -calibration and -pairs do not take such plans yet", *plan)
			}
			ro, err := parseReadout(*readout, h.Qubits())
			if err != nil {
				return err
			}
			pairs, err := parseMitigationPairs(*pairsFlag, *calibration, h.Qubits())
			if err != nil {
				return err
			}
			ropts, err := readoutOptions(ro, *calibration, pairs, h.Qubits(), *delta, *calDelta)
			if err != nil {
				return err
			}
			obs := []guarantee.Observable{{Name: "E", H: h}}
			if *observables != "" {
				if obs, err = parseObservables(*observables, *ham, h); err != nil {
					return err
				}
			}
			return e.certifyAll(obs, f.Plan, *delta, ropts)
		}
		// Options.Top counts zero as its default of 10: ask for none
		// with a negative value.
		n := *top
		if n <= 0 {
			n = -1
		}
		// The certificate counts the covers; the plan file is checked
		// against its counts instead of counting them again. A plan of
		// another width or length fails the check before any count.
		p := f.Plan
		if p.Cover == nil {
			// An expanded seed plan carries no cover counts: Check
			// compares its fingerprint and counts them.
			if err := f.Check(h); err != nil {
				return badf("%w (Hamiltonian %s)", err, *ham)
			}
		}
		if p.Qubits != h.Qubits() || len(p.Cover) != h.Len() {
			return badf("%w (Hamiltonian %s)", f.Check(h), *ham)
		}
		// The certificate of the plan's estimator: with the plan's
		// coefficient split if it has one (MATH.md §2.5). Its cover counts
		// are compared with the file's below, not by CertifyPlan.
		c, err := guarantee.CertifyPlan(h, &allocate.Plan{Qubits: p.Qubits, Settings: p.Settings, Shots: p.Shots, Split: p.Split}, *delta, &guarantee.Options{Top: n})
		if err != nil {
			return bad(err)
		}
		if err := f.CheckCover(h, c.Cover); err != nil {
			return badf("%w (Hamiltonian %s)", err, *ham)
		}
		if e.json {
			type term struct {
				Term  int     `json:"term"`
				Pauli string  `json:"pauli"`
				Coeff float64 `json:"coeff"`
				Cover int     `json:"cover"`
				Share float64 `json:"share"`
			}
			type trunc struct {
				Dropped int     `json:"dropped"`
				Bound   float64 `json:"bound"`
			}
			out := struct {
				Shots      int     `json:"shots"`
				Settings   int     `json:"settings"`
				Delta      float64 `json:"delta"`
				Bound      float64 `json:"certified_bound"`
				Radius     float64 `json:"radius"`
				Bias       float64 `json:"bias"`
				Uncovered  int     `json:"uncovered"`
				ScaledNorm float64 `json:"scaled_one_norm"`
				OneNorm    float64 `json:"one_norm"`
				Relaxed    float64 `json:"relaxed_bound"`
				Variance   float64 `json:"variance"`
				Top        []term  `json:"top"`
				Threshold  trunc   `json:"truncation_threshold"`
				Optimal    trunc   `json:"truncation_optimal"`
			}{c.Shots, c.Settings, c.Delta, c.Bound, c.Radius, c.Bias, c.Uncovered, c.ScaledOneNorm, h.OneNorm(), c.RelaxedRadius + c.Bias, c.Variance,
				[]term{}, trunc{c.Threshold.Dropped, c.Threshold.Bound}, trunc{c.Optimal.Dropped, c.Optimal.Bound}}
			for _, t := range c.Top {
				out.Top = append(out.Top, term{t.Term, t.Pauli.String(), t.Coeff, t.Cover, t.Share})
			}
			return e.writeJSON(out)
		}
		fmt.Fprintf(e.stdout, "%s on %s: certified before any shot, for every state (shot noise only)\n", *plan, *ham)
		if p.Split != nil {
			fmt.Fprintf(e.stdout, "(the estimator with the plan's coefficient split, %d entries; MATH.md §2.5)\n", p.Split.Entries())
		}
		fmt.Fprintln(e.stdout, strings.TrimRight(c.String(), "\n"))
		return nil
	}
}

// certifyAll certifies several observables, or the readout-mitigated
// energy, from the plan alone (guarantee.CertifyAll).
func (e *env) certifyAll(obs []guarantee.Observable, p *allocate.Plan, delta float64, ro *guarantee.AllOptions) error {
	opts := ro
	if opts == nil {
		opts = &guarantee.AllOptions{Options: &guarantee.Options{Top: -1}}
	}
	s, err := guarantee.CertifyAll(obs, p, nil, delta, opts)
	if err != nil {
		if ro != nil && ro.Calibration != nil {
			return bad(err)
		}
		return err
	}
	type line struct {
		Name            string  `json:"name"`
		Bound           float64 `json:"certified_bound"`
		Radius          float64 `json:"radius"`
		Bias            float64 `json:"bias"`
		CalibrationBias float64 `json:"calibration_bias"`
		Delta           float64 `json:"delta"`
	}
	lines := make([]line, len(s.Bounds))
	for k, b := range s.Bounds {
		if b.Readout != nil {
			lines[k] = line{b.Name, b.Readout.Certified, b.Readout.Radius, b.Readout.Bias, b.Readout.CalibrationBias, b.Delta}
		} else {
			lines[k] = line{b.Name, b.Certificate.Bound, b.Certificate.Radius, b.Certificate.Bias, 0, b.Delta}
		}
	}
	calibrated := ro != nil && ro.Calibration != nil
	if e.json {
		return e.writeJSON(struct {
			Shots            int     `json:"shots"`
			Delta            float64 `json:"delta"`
			CalibrationDelta float64 `json:"calibration_delta"`
			Mitigated        bool    `json:"readout_mitigated"`
			Calibrated       bool    `json:"readout_calibrated"`
			Lines            []line  `json:"observables"`
		}{p.TotalShots(), delta, s.CalibrationDelta, ro != nil, calibrated, lines})
	}
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "observable\tcertified bound\tradius\tcalibration bias\tbias\tδ_k\n")
	for _, l := range lines {
		fmt.Fprintf(tw, "%s\t±%.8f\t%.6g\t%.4g\t%.4g\t%.3g\n", l.Name, l.Bound, l.Radius, l.CalibrationBias, l.Bias, l.Delta)
	}
	tw.Flush()
	fmt.Fprintf(e.stdout, "certified before any shot, for every state: all bounds hold together with probability ≥ %g%%\n", 100*(1-delta))
	switch {
	case calibrated:
		fmt.Fprintf(e.stdout, "(readout-mitigated; δ = %g split as %.3g for the calibration intervals and the rest over %s)\n",
			delta, s.CalibrationDelta, plural(len(obs), "observable"))
	case ro != nil:
		fmt.Fprintf(e.stdout, "(readout-mitigated with the -readout rates taken as exact; δ = %g split over %s)\n", delta, plural(len(obs), "observable"))
	default:
		fmt.Fprintf(e.stdout, "(shot noise only; δ = %g split over %s)\n", delta, plural(len(obs), "observable"))
	}
	return nil
}

func certifyHelp() string {
	return `
The bound holds with probability at least 1 − δ for every state, counting shot
noise only (ideal, independent shots of one state); the plan must be fixed
before the data.

JSON keys: certified_bound = radius + bias; radius is the shot-wise
Hoeffding radius; bias bounds the terms no shot measures; scaled_one_norm is
Σ|h_i|/sqrt(N_i), the plan's figure of merit (ShadowGrouping), and
relaxed_bound = scaled_one_norm·sqrt(2 ln(2/δ)) + bias the looser bound it
gives; one_norm is Σ|h_i| (as in info); top lists the terms with the largest
share of the certified bound; truncation_* give the bound after dropping terms
(threshold: the terms with N_i < 2 ln(2/δ); optimal: the dropped set of the
smallest bound, searched exactly unless there are very many candidates).
For a plan that splits coefficients (-strategy overlap, overlap-gc) the
bounds are those of the estimator with that split (MATH.md §2.5: 1/N_i
becomes Σ_g α_ig²/m_g in the threshold, and the search drops each term's
weights from the groups that cover it); -observables, -readout and
-calibration do not take such plans yet.

With -observables N,Sz,S2 (an FCIDUMP as -ham) the energy and the listed
observables are certified together: δ is split equally (MATH.md §4.8), one
line each. With -calibration FILE (calibration records, see calibrate) the
bounds are those of the readout-mitigated estimate, covering shot noise and
the calibration's uncertainty: -calibration-delta of δ is spent once on the
calibration intervals, the rest split over the observables (MATH.md §2.1.2);
-readout RATES takes the rates as exact instead; -pairs A-B,C-D reads the
listed pairs through 4×4 models from the calibration (MATH.md §2.1.5). JSON keys, per line of
observables: name, certified_bound = radius + calibration_bias + bias,
delta (δ_k); calibration_delta is the calibration's share.
`
}
