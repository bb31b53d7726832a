package main

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"slices"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// budgetRow is one strategy's line of the budget table.
type budgetRow struct {
	Strategy  string  `json:"strategy"`
	Reference int     `json:"reference_shots"`
	Settings  int     `json:"settings"`
	Bias      float64 `json:"bias"`
	Reachable bool    `json:"reachable"`
	Copies    int     `json:"copies"`
	Shots     int     `json:"certified_shots"`
	Proxy     int     `json:"proxy_shots"`
	Anytime   int     `json:"anytime_shots"`
	// AnytimeVariance is the single-shot variance σ² behind Anytime: of
	// the shifted values with -baseline, in the proxy state (an upper
	// bound over all states with -proxy worst).
	AnytimeVariance float64 `json:"anytime_variance"`
	Seconds         float64 `json:"seconds"`
	Note            string  `json:"note,omitempty"`
	// Readout is the readout-aware budget (guarantee.PlanReadoutBudget),
	// present with -readout or -calibration.
	Readout *readoutBudgetRow `json:"readout,omitempty"`
}

// readoutBudgetRow is a strategy's readout-aware budget: calibration shots
// of each of the two preparations, copies of the reference plan, and the
// parts of the planned certificate.
type readoutBudgetRow struct {
	Reachable         bool    `json:"reachable"`
	CalibrationShots  int     `json:"calibration_shots"`
	Preparations      int     `json:"preparations"`
	Copies            int     `json:"copies"`
	MeasurementShots  int     `json:"measurement_shots"`
	TotalShots        int     `json:"total_shots"`
	CalibrationBias   float64 `json:"calibration_bias"`
	Radius            float64 `json:"radius"`
	Bias              float64 `json:"bias"`
	Bound             float64 `json:"certified_bound"`
	CalibrationDelta  float64 `json:"calibration_delta"`
	UnreachableReason string  `json:"unreachable,omitempty"`
}

func budgetFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	eps := fs.Float64("eps", 0, "target accuracy ε in the Hamiltonian's units, for example 0.0016 (required)")
	delta := fs.Float64("delta", 0.05, "failure probability δ: the bound holds with probability at least 1 − δ")
	strategy := fs.String("strategy", "all", "strategy to answer for, or all: "+strings.Join(allocate.Names(), ", "))
	seed := fs.Uint64("seed", 1, "seed of the random strategies")
	reference := fs.Int("reference", 0, "shots of the reference plan whose copies are counted (default: doubled from max(1000, 2·terms) until every term is measured)")
	proxy := fs.String("proxy", "worst", "variance proxy for the expected figures, and for the group shares of "+proxyStrategies+" (as plan -proxy): "+proxyUsage)
	baseline := fs.String("baseline", "none", "the anytime column for the route of rounds start -baseline: "+baselineUsage)
	sf := addSectorFlags(fs)
	readout := fs.String("readout", "", "also plan calibration and measurement shots for the readout-mitigated certificate, for these expected flip rates: P, p01=X,p10=Y or @FILE as in simulate")
	calibration := fs.String("calibration", "", "like -readout, with the flip rates observed in this calibration records file (see calibrate)")
	calDelta := fs.Float64("calibration-delta", 0, "with -readout or -calibration: part of -delta spent on the calibration intervals (default -delta/4)")
	pairsFlag := fs.String("pairs", "", "with -calibration: plan a calibration of these disjoint pairs read through 4×4 models (as calibrate -pairs), their matrices as observed in the file: A-B,C-D")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if !(*eps > 0) || math.IsInf(*eps, 0) {
			return badf("-eps %g: want a positive target accuracy (flag -eps is required)", *eps)
		}
		if err := checkDelta(*delta); err != nil {
			return err
		}
		if *reference < 0 {
			return badf("-reference %d: want 0 (automatic) or a number of shots", *reference)
		}
		names := allocate.Names()
		if *strategy != "all" {
			if _, err := allocate.ByName(*strategy, *seed); err != nil {
				return bad(err)
			}
			if *strategy == "fixed" {
				return badf("-strategy fixed has no settings of its own here; plan your settings with shotplan plan and certify them")
			}
			names = []string{*strategy}
		}
		if err := need("ham", *ham); err != nil {
			return err
		}
		h, g, err := readHamAny(*ham)
		if err != nil {
			return bad(err)
		}
		px, base, baseName, err := readProxyBaseline(*proxy, *baseline, *ham, h, g, sf)
		if err != nil {
			return err
		}
		if px.proxy != nil && px.state == nil {
			return badf("-proxy %s: %d qubits, the expected figures take a proxy of at most %d", *proxy, h.Qubits(), hamiltonian.MaxExactQubits)
		}
		pairs, err := parseMitigationPairs(*pairsFlag, *calibration, h.Qubits())
		if err != nil {
			return err
		}
		rates, pairModels, err := budgetRates(*readout, *calibration, pairs, h.Qubits(), *delta, *calDelta)
		if err != nil {
			return err
		}
		state, proxyName := px.state, px.name
		var rows []budgetRow
		for _, name := range names {
			if name == "fixed" {
				continue
			}
			row, err := budgetFor(*ham, h, name, *seed, *reference, *eps, *delta, state, px.proxy, base, rates, pairModels, *calDelta)
			if err != nil {
				return err
			}
			rows = append(rows, row)
		}
		if baseName == "" {
			baseName = "none"
		}
		if e.json {
			return e.writeJSON(struct {
				Epsilon  float64     `json:"target"`
				Delta    float64     `json:"delta"`
				Proxy    string      `json:"proxy"`
				Baseline string      `json:"baseline"`
				Rows     []budgetRow `json:"strategies"`
			}{*eps, *delta, proxyName, baseName, rows})
		}
		if rates != nil {
			e.printReadoutBudget(rows, *ham, *eps, *delta)
			return nil
		}
		fmt.Fprintf(e.stdout, "shots for |error| ≤ %g with probability ≥ %g%% on %s (proxy: %s)\n", *eps, 100*(1-*delta), *ham, proxyName)
		if base != nil {
			fmt.Fprintf(e.stdout, "anytime: values shifted by the baseline ⟨P_i⟩ of %s\n", baseName)
			if state == nil {
				fmt.Fprintf(e.stdout, "anytime: -proxy worst bounds the variance over all states, which a baseline never lowers; give -proxy exact, hf, BITS or FILE for the expected shots\n")
			}
		}
		width := len("strategy")
		for _, r := range rows {
			width = max(width, len(r.Strategy))
		}
		tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "%-*s\treference\tsettings\tcopies\tcertified\tproxy\tanytime\tseconds\t\n", width, "strategy")
		for _, r := range rows {
			if !r.Reachable {
				fmt.Fprintf(tw, "%-*s\t%d\t%d\t-\t-\t-\t-\t%.2f\t\n", width, r.Strategy, r.Reference, r.Settings, r.Seconds)
				continue
			}
			fmt.Fprintf(tw, "%-*s\t%d\t%d\t%d\t%d\t%d\t%d\t%.2f\t\n", width, r.Strategy, r.Reference, r.Settings, r.Copies,
				r.Shots, r.Proxy, r.Anytime, r.Seconds)
		}
		tw.Flush()
		for _, r := range rows {
			if r.Note != "" {
				fmt.Fprintf(e.stdout, "%s: %s\n", r.Strategy, r.Note)
			}
		}
		return nil
	}
}

// budgetRates returns the expected flip rates of -readout or of the
// calibration file of -calibration (the observed fractions), nil for
// neither.
func budgetRates(readout, calPath string, pairs [][2]int, qubits int, delta, calDelta float64) ([]estimate.Readout, []estimate.PairReadout, error) {
	switch {
	case readout != "" && calPath != "":
		return nil, nil, badf("-readout and -calibration both given: give the expected rates or a calibration to take them from")
	case readout == "" && calPath == "":
		if calDelta != 0 {
			return nil, nil, badf("-calibration-delta without -readout or -calibration")
		}
		return nil, nil, nil
	}
	if calDelta != 0 && !(calDelta > 0 && calDelta < delta) {
		return nil, nil, badf("-calibration-delta %g: want a value in (0, -delta = %g)", calDelta, delta)
	}
	if readout != "" {
		r, err := parseReadout(readout, qubits)
		return r, nil, err
	}
	cal, err := loadCalibration(calPath, pairs, qubits)
	if err != nil {
		return nil, nil, err
	}
	paired := make([]bool, qubits)
	for _, p := range pairs {
		paired[p[0]], paired[p[1]] = true, true
	}
	rates := make([]estimate.Readout, qubits)
	for q, k := range cal.Counts {
		if paired[q] {
			continue // read through its pair's matrix
		}
		if k.Zero == 0 {
			return nil, nil, badf("%s: qubit %d was never prepared in 0: its rate P01 is unknown", calPath, q)
		}
		if k.One == 0 {
			return nil, nil, badf("%s: qubit %d was never prepared in 1: its rate P10 is unknown", calPath, q)
		}
		rates[q] = estimate.Readout{P01: float64(k.Flips01) / float64(k.Zero), P10: float64(k.Flips10) / float64(k.One)}
		if rates[q].P01+rates[q].P10 >= 1 {
			return nil, nil, badf("%s: qubit %d: observed P01 + P10 = %.3g leaves nothing to mitigate (need < 1)", calPath, q, rates[q].P01+rates[q].P10)
		}
	}
	if pairs == nil {
		return rates, nil, nil
	}
	models, err := cal.ObservedPairs()
	if err != nil {
		return nil, nil, badf("%s: %w", calPath, err)
	}
	return rates, models, nil
}

// printReadoutBudget prints the readout-aware budget of every strategy.
func (e *env) printReadoutBudget(rows []budgetRow, ham string, eps, delta float64) {
	fmt.Fprintf(e.stdout, "shots for |error| ≤ %g of the readout-mitigated estimate with probability ≥ %g%% on %s, calibration included\n", eps, 100*(1-delta), ham)
	width := len("strategy")
	for _, r := range rows {
		width = max(width, len(r.Strategy))
	}
	tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "%-*s\treference\tcalibration\tcopies\tmeasurement\ttotal\tcalibration bias\tplain certified\t\n", width, "strategy")
	for _, r := range rows {
		plain := "-"
		if r.Reachable {
			plain = fmt.Sprint(r.Shots)
		}
		if r.Readout == nil || !r.Readout.Reachable {
			fmt.Fprintf(tw, "%-*s\t%d\t-\t-\t-\t-\t-\t%s\t\n", width, r.Strategy, r.Reference, plain)
			continue
		}
		b := r.Readout
		fmt.Fprintf(tw, "%-*s\t%d\t%d×%d\t%d\t%d\t%d\t%.3g\t%s\t\n", width, r.Strategy, r.Reference, b.Preparations, b.CalibrationShots, b.Copies,
			b.MeasurementShots, b.TotalShots, b.CalibrationBias, plain)
	}
	tw.Flush()
	for _, r := range rows {
		switch {
		case r.Note != "":
			fmt.Fprintf(e.stdout, "%s: %s\n", r.Strategy, r.Note)
		case r.Readout != nil && !r.Readout.Reachable:
			fmt.Fprintf(e.stdout, "%s: %s\n", r.Strategy, r.Readout.UnreachableReason)
		}
	}
}

// budgetFor plans the reference plan of one strategy and counts its copies;
// with rates, also the readout-aware budget of calibration and copies.
func budgetFor(ham string, h *hamiltonian.Hamiltonian, name string, seed uint64, reference int, eps, delta float64, state []complex128, px allocate.Proxy, base []float64, rates []estimate.Readout, pairs []estimate.PairReadout, calDelta float64) (budgetRow, error) {
	start := time.Now()
	row := budgetRow{Strategy: name}
	a, err := allocate.ByName(name, seed)
	if err != nil {
		return row, bad(err)
	}
	setProxy(a, px)
	if _, ok := a.(allocate.Observer); ok {
		row.Note = "adaptive: no plan fixed before the data"
		return row, nil
	}
	// Copies never measure a term the reference plan leaves out, so the
	// automatic reference doubles until every term is measured (or stops
	// at 2^18 shots, and the bias of the rest is reported).
	n, fixed := reference, reference > 0
	if !fixed {
		n = max(1000, 2*h.Len())
	}
	var p *allocate.Plan
	for {
		if p, err = allocate.Run(h, n, a, nil); err != nil {
			return row, runError(ham, err)
		}
		if fixed || !slices.Contains(p.Cover, 0) || n >= 1<<18 {
			break
		}
		n *= 2
	}
	b, err := guarantee.BudgetWith(h, p, eps, delta, &guarantee.ShotBudgetOptions{State: state, Baseline: base})
	if err != nil {
		return row, fmt.Errorf("%s: %w", name, err)
	}
	row.Reference, row.Settings, row.Bias, row.Reachable = b.Reference, b.Settings, b.Bias, b.Reachable
	row.Copies, row.Shots, row.Proxy, row.Anytime = b.Copies, b.Shots, b.ProxyShots, b.AnytimeShots
	row.AnytimeVariance = b.IIDVariance
	if rates != nil {
		row.Readout = &readoutBudgetRow{CalibrationDelta: calDelta}
		if row.Readout.CalibrationDelta == 0 {
			row.Readout.CalibrationDelta = delta / 4
		}
		rb, err := guarantee.PlanReadoutBudget(h, p.Settings, p.Shots, rates, eps, delta, &guarantee.ReadoutOptions{CalibrationDelta: calDelta, Pairs: pairs})
		if err != nil {
			// The inputs were checked: what is left is a target no
			// calibration size reaches with this plan.
			row.Readout.UnreachableReason = strings.TrimPrefix(err.Error(), "guarantee: ")
		} else {
			*row.Readout = readoutBudgetRow{
				Reachable: true, CalibrationShots: rb.CalibrationShots, Preparations: rb.Preparations, Copies: rb.Repeat,
				MeasurementShots: rb.MeasurementShots, TotalShots: rb.TotalShots,
				CalibrationBias: rb.CalibrationBias, Radius: rb.Radius, Bias: rb.Bias, Bound: rb.Certified,
				CalibrationDelta: row.Readout.CalibrationDelta,
			}
		}
	}
	if !b.Reachable {
		row.Note = fmt.Sprintf("terms its reference plan never measures add a bias of %.3g ≥ ε; try a larger -reference", b.Bias)
	} else if b.Bias > 0 {
		row.Note = fmt.Sprintf("terms its reference plan never measures add a bias of %.3g, counted in ε", b.Bias)
	}
	row.Seconds = time.Since(start).Seconds()
	return row, nil
}

// runError marks the driver's refusals of the Hamiltonian itself as input
// errors.
func runError(ham string, err error) error {
	if errors.Is(err, allocate.ErrEmpty) || errors.Is(err, allocate.ErrTooManyQubits) {
		return badf("%s: %w", ham, err)
	}
	return err
}

func budgetHelp() string {
	return `
Each strategy plans once at a reference budget; copies of that plan (every
shot count multiplied by the same whole number) are counted, without
re-planning. Columns:
  copies     the fewest copies whose certified bound (shotplan certify) is ≤ ε
  certified  copies × reference shots: a guarantee for every state
  proxy      shots at which the approximate error bar of shotplan estimate is
             expected to reach ε if the state were the proxy (not a guarantee)
  anytime    shots the anytime route (shotplan rounds start with the same
             -strategy, -reference, -seed and -baseline, and -proxy for the
             strategies that take it) is expected to need: 2σ²ln(2/δ)/ε²
             for the single-shot variance σ² of its draws from the
             reference plan's shares under the proxy; the price of holding
             at every round comes on top
With -proxy worst the expected figures use the largest variance over all
states (for anytime an upper bound on it) and are close to the certified
one. Any other -proxy also gives sorted, sorted-gc, color-gc and overlap
their group shares (as plan -proxy): the reference plan is still fixed
before any shot, so its certified count holds for every state.
-baseline hf|exact|BITS|FILE makes the anytime column that of the route with
every shot's value shifted by the terms' expectations in that classical
state (rounds start -baseline, MATH.md §4.11): same mean, σ² of the shifted
values. It changes no other column. Under -proxy worst it only raises the
bound, so pair it with a -proxy state (-proxy exact -baseline hf: the
expected shots if the device prepares the ground state).

JSON keys: target, delta, proxy, baseline ("none" or the baseline state),
and per strategy: reference_shots, settings, bias (of terms the reference
plan never measures), reachable (bias < ε), copies, certified_shots,
proxy_shots, anytime_shots, anytime_variance (σ² behind anytime_shots),
seconds, note.

With -readout RATES (the flip rates expected of the device) or -calibration
FILE (the rates observed in earlier calibration records) the budget is for
the readout-mitigated estimate certified with a fresh calibration (MATH.md
§2.1.3): calibration shots C of each of the two preparations (all 0, all 1)
and copies k of the reference plan, the pair with the fewest total shots
2C + k × reference whose planned certificate (calibration bias + radius +
bias, at the expected calibration counts) is ≤ ε. -calibration-delta of δ
goes to the calibration intervals. The plan is for the expected counts; a
real calibration's intervals vary. With -pairs A-B,C-D (and -calibration)
the calibration is that of calibrate -pairs: four preparations, the pairs
read through 4×4 models observed in the file (MATH.md §2.1.5), total
4C + k × reference. JSON key readout, per strategy: reachable,
calibration_shots (per preparation), preparations, copies, measurement_shots,
total_shots, calibration_bias, radius, bias, certified_bound,
calibration_delta, unreachable (why not, when not reachable).
`
}
