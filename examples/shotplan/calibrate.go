package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// maxRatesFile caps the size of a -readout @FILE rates file,
// maxCalibrationQubits the width calibrate accepts, and maxCalibrationShots
// simulate -calibration-shots (per preparation).
const (
	maxRatesFile         = 1 << 20
	maxCalibrationQubits = 1 << 12
	maxCalibrationShots  = 100_000_000
)

// calibrateFlags is the calibrate command: it writes the calibration plan,
// the basis states to prepare and how many shots of each.
func calibrateFlags(fs *flag.FlagSet, e *env) func() error {
	qubits := fs.Int("qubits", 0, "number of qubits (required)")
	shots := fs.Int("shots", 0, "shots of each preparation (required)")
	out := fs.String("o", "", "output calibration plan, CSV prepared,shots (required; - for standard output)")
	pairsFlag := fs.String("pairs", "", pairsFlagHelp)
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if *qubits <= 0 || *qubits > maxCalibrationQubits {
			return badf("-qubits %d: want a qubit count in 1..%d", *qubits, maxCalibrationQubits)
		}
		if *shots <= 0 {
			return badf("-shots %d: want a positive number of shots", *shots)
		}
		if err := need("o", *out); err != nil {
			return err
		}
		if err := e.output(*out); err != nil {
			return err
		}
		preps := estimate.CalibrationPreparations(*qubits)
		pairs, err := parsePairs(*pairsFlag, *qubits)
		if err != nil {
			return err
		}
		if pairs != nil {
			if preps, err = estimate.PairCalibrationPreparations(*qubits, pairs); err != nil {
				return bad(err)
			}
		}
		err = e.writeOutput(*out, func(w io.Writer) error {
			bw := bufio.NewWriter(w)
			bw.WriteString("prepared,shots\n")
			for _, p := range preps {
				fmt.Fprintf(bw, "%s,%d\n", p.Format(*qubits), *shots)
			}
			return bw.Flush()
		})
		if err != nil {
			return err
		}
		if e.json {
			return e.writeJSON(struct {
				Output       string `json:"output"`
				Qubits       int    `json:"qubits"`
				Preparations int    `json:"preparations"`
				Shots        int    `json:"shots"`
			}{*out, *qubits, len(preps), len(preps) * *shots})
		}
		what := "all 0, all 1"
		if pairs != nil {
			what = fmt.Sprintf("each of %s in each of its 4 states", plural(len(pairs), "pair"))
		}
		fmt.Fprintf(e.stdout, "wrote %s: %d preparations (%s) × %s = %s on %d qubits\n",
			outName(*out), len(preps), what, plural(*shots, "shot"), plural(len(preps)**shots, "shot"), *qubits)
		return nil
	}
}

func calibrateHelp() string {
	return `
Under independent per-qubit readout error, preparing every qubit in 0 and
every qubit in 1 measures each qubit's two flip rates at once (MATH.md
§2.1.1). Prepare each listed basis state (an x gate on every qubit whose
prepared bit is 1), measure every qubit, and write one line per shot to a
calibration records file:

  prepared,outcome
  0000,0100
  1111,1101

(qubit 0 first). Give that file to estimate -calibration; simulate
-calibration-shots writes one from simulated readout error.

With -pairs 0-1,2-3 the listed pairs of qubits, whose read bits may flip
together, are calibrated as pairs: four preparations put every pair in each
of its four basis states at once (all 0; every pair's first qubit 1; every
pair's second qubit 1; all 1), and estimate -calibration FILE -pairs 0-1,2-3
reads each pair through its own 4×4 readout model with its confidence region
(MATH.md §2.1.5). Pairs must be disjoint.
`
}

// pairsFlagHelp is the help text of -pairs.
const pairsFlagHelp = "calibrate these disjoint pairs of qubits as pairs whose read bits may flip together: A-B,C-D (for example 0-1,2-3; MATH.md §2.1.5)"

// maxPairsFlag caps the length of a -pairs list.
const maxPairsFlag = 1 << 16

// parseMitigationPairs reads the -pairs flag of a command that mitigates
// readout: the pairs' 4×4 models come only from calibration records, so
// pairs without -calibration are refused.
func parseMitigationPairs(flag, calibration string, n int) ([][2]int, error) {
	pairs, err := parsePairs(flag, n)
	if err != nil {
		return nil, err
	}
	if pairs != nil && calibration == "" {
		return nil, badf("-pairs without -calibration: the pairs' 4×4 readout models come from calibration records")
	}
	return pairs, nil
}

// parsePairs reads the -pairs list "A-B,C-D" of disjoint pairs of qubits
// below n; "" means none.
func parsePairs(s string, n int) ([][2]int, error) {
	if s == "" {
		return nil, nil
	}
	if len(s) > maxPairsFlag {
		return nil, badf("-pairs: %d bytes, at most %d", len(s), maxPairsFlag)
	}
	var out [][2]int
	for _, f := range strings.Split(s, ",") {
		a, b, ok := strings.Cut(strings.TrimSpace(f), "-")
		x, err1 := strconv.Atoi(strings.TrimSpace(a))
		y, err2 := strconv.Atoi(strings.TrimSpace(b))
		if !ok || err1 != nil || err2 != nil {
			return nil, badf("-pairs: %q is not a pair A-B of qubit numbers (for example 0-1)", shorten(f))
		}
		out = append(out, [2]int{x, y})
	}
	if _, err := estimate.PairCalibrationPreparations(n, out); err != nil {
		_, why, _ := strings.Cut(err.Error(), estimate.ErrFormat.Error()+": ")
		return nil, badf("-pairs: %s", why)
	}
	return out, nil
}

// shorten clips a flag value for a message.
func shorten(s string) string {
	if len(s) > 40 {
		return s[:37] + "..."
	}
	return s
}

// loadCalibration reads the calibration records file of -calibration, with
// the pairs of -pairs, for a Hamiltonian of the given width.
func loadCalibration(path string, pairs [][2]int, qubits int) (*estimate.Calibration, error) {
	cal, err := estimate.ReadCalibrationPairsFile(path, pairs)
	if err != nil {
		return nil, bad(err)
	}
	if cal.Qubits() != qubits {
		return nil, badf("%s: calibration of %d qubits, the Hamiltonian has %d", path, cal.Qubits(), qubits)
	}
	return cal, nil
}

// parseRates parses the keyed forms of -readout: "p01=X,p10=Y" for every
// qubit (either key may be left out, meaning 0), or "@FILE" for a CSV file
// with the header "qubit,p01,p10" and one line per qubit.
func parseRates(s string, qubits int) ([]estimate.Readout, error) {
	if path, ok := strings.CutPrefix(s, "@"); ok {
		return readRatesFile(path, qubits)
	}
	var e estimate.Readout
	seen := map[string]bool{}
	for _, part := range strings.Split(s, ",") {
		k, v, ok := strings.Cut(strings.TrimSpace(part), "=")
		k = strings.ToLower(strings.TrimSpace(k))
		if !ok || (k != "p01" && k != "p10") || seen[k] {
			return nil, badf("-readout %q: want p01=X,p10=Y (p01: 0 read as 1, p10: 1 read as 0), P, P01,P10 or @FILE", s)
		}
		seen[k] = true
		p, err := parseRate(v)
		if err != nil {
			return nil, badf("-readout %q: %s: %v", s, k, err)
		}
		if k == "p01" {
			e.P01 = p
		} else {
			e.P10 = p
		}
	}
	r := make([]estimate.Readout, qubits)
	for q := range r {
		r[q] = e
	}
	return r, nil
}

// parseRate parses one flip probability in [0, 0.5).
func parseRate(s string) (float64, error) {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil || !(v >= 0 && v < 0.5) {
		return 0, fmt.Errorf("%q is not a probability in [0, 0.5)", strings.TrimSpace(s))
	}
	return v, nil
}

// readRatesFile reads per-qubit rates: the header "qubit,p01,p10", then one
// line per qubit, in any order, each qubit once.
func readRatesFile(path string, qubits int) ([]estimate.Readout, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, bad(err)
	}
	defer f.Close()
	if st, err := f.Stat(); err != nil {
		return nil, bad(err)
	} else if st.Size() > maxRatesFile {
		return nil, badf("%s: %d bytes, more than the %d a rates file may have", path, st.Size(), maxRatesFile)
	}
	sc := bufio.NewScanner(io.LimitReader(f, maxRatesFile))
	r := make([]estimate.Readout, qubits)
	seen := make([]bool, qubits)
	line := 0
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if line == 1 {
			if text != "qubit,p01,p10" {
				return nil, badf("%s: line 1: want the header qubit,p01,p10", path)
			}
			continue
		}
		if text == "" {
			continue
		}
		fields := strings.Split(text, ",")
		if len(fields) != 3 {
			return nil, badf("%s: line %d: want qubit,p01,p10", path, line)
		}
		q, err := strconv.Atoi(strings.TrimSpace(fields[0]))
		if err != nil || q < 0 || q >= qubits {
			return nil, badf("%s: line %d: qubit %q is not in 0..%d", path, line, fields[0], qubits-1)
		}
		if seen[q] {
			return nil, badf("%s: line %d: qubit %d given twice", path, line, q)
		}
		seen[q] = true
		for k, dst := range []*float64{&r[q].P01, &r[q].P10} {
			if *dst, err = parseRate(fields[1+k]); err != nil {
				return nil, badf("%s: line %d: %s: %v", path, line, []string{"p01", "p10"}[k], err)
			}
		}
	}
	if err := sc.Err(); err != nil {
		return nil, badf("%s: line %d: %v", path, line+1, err)
	}
	for q, ok := range seen {
		if !ok {
			return nil, badf("%s: no rates for qubit %d (want one line per qubit, %d qubits)", path, q, qubits)
		}
	}
	return r, nil
}

// mitigatedResult is what estimate prints for a mitigated estimate.
type mitigatedResult struct {
	res              *estimate.Result
	certified, data  float64
	calibrationBias  float64
	calibrationDelta float64
	bias             float64
}

// mitigatedEstimate estimates with readout mitigation and bounds the
// mitigated estimate: from a calibration (intervals, δ split) when cal is
// not nil, otherwise from rates taken as exact.
func mitigatedEstimate(h *hamiltonian.Hamiltonian, rec *estimate.Records, settings []pauli.Setting, shots []int, cal *estimate.Calibration, rates []estimate.Readout, delta, calDelta float64) (*mitigatedResult, error) {
	var m *estimate.Mitigation
	out := &mitigatedResult{}
	if cal != nil {
		b, err := guarantee.CalibratedBounds(h, rec, cal, delta, &guarantee.ReadoutOptions{CalibrationDelta: calDelta})
		if err != nil {
			return nil, bad(err)
		}
		m = b.Mitigation
		out.certified, out.data, out.calibrationBias, out.calibrationDelta, out.bias = b.Certified, b.Data.Bound, b.CalibrationBias, b.CalibrationDelta, b.Bias
	} else {
		var err error
		if m, err = estimate.NewMitigation(estimate.KnownRates(rates)); err != nil {
			return nil, bad(err)
		}
		data, _, err := guarantee.MitigatedData(h, rec, m, delta, nil)
		if err != nil {
			return nil, err
		}
		r, bias, err := guarantee.MitigatedRadius(h, settings, shots, m, delta, nil)
		if err != nil {
			return nil, err
		}
		out.certified, out.data, out.bias = r+bias, data.Bound, bias
	}
	res, err := estimate.Mitigated(h, rec, m, &estimate.Options{Confidence: 1 - delta})
	if err != nil {
		return nil, err
	}
	out.res = res
	return out, nil
}

// printMitigated prints the summary of a mitigated estimate.
func printMitigated(w io.Writer, r *mitigatedResult, groups int, delta float64, calibrated bool) {
	conf := 100 * (1 - delta)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "energy\t%.8f\treadout-mitigated grouped estimator, %d shots on %s\n", r.res.Energy, r.res.Shots, plural(groups, "setting"))
	fmt.Fprintf(tw, "error bar\t±%.8f\tAPPROXIMATE %g%% interval (standard error %.3g, normal approximation)\n", r.res.ApproxInterval[1]-r.res.Energy, 100*r.res.Confidence, r.res.StdErr)
	if calibrated {
		fmt.Fprintf(tw, "certified bound\t±%.8f\tfrom the plan and the calibration, every state, probability ≥ %g%%\n", r.certified, conf)
		fmt.Fprintf(tw, "data bound\t±%.8f\tfrom these shots and the calibration, probability ≥ %g%%\n", r.data, conf)
	} else {
		fmt.Fprintf(tw, "certified bound\t±%.8f\tfrom the plan, every state, probability ≥ %g%%, if the -readout rates are exact\n", r.certified, conf)
		fmt.Fprintf(tw, "data bound\t±%.8f\tfrom these shots, probability ≥ %g%%, if the -readout rates are exact\n", r.data, conf)
	}
	tw.Flush()
	if calibrated {
		fmt.Fprintf(w, "(both bounds include a calibration bias of at most %.4g; δ = %g split as %.3g for the calibration intervals and %.3g for the shots)\n",
			r.calibrationBias, delta, r.calibrationDelta, delta-r.calibrationDelta)
	}
	if r.bias > 0 {
		fmt.Fprintf(w, "(terms never measured add a bias of at most %.4g, included in both bounds)\n", r.bias)
	}
}

// estimateMitigated is estimate with -readout or -calibration.
func (e *env) estimateMitigated(h *hamiltonian.Hamiltonian, rec *estimate.Records, settings []pauli.Setting, shots []int, ro []estimate.Readout, calPath string, pairs [][2]int, delta, calDelta float64) error {
	if ro != nil && calPath != "" {
		return badf("-readout and -calibration both given: the calibration measures the rates")
	}
	var cal *estimate.Calibration
	if calPath != "" {
		var err error
		if cal, err = loadCalibration(calPath, pairs, h.Qubits()); err != nil {
			return err
		}
		if calDelta != 0 && !(calDelta > 0 && calDelta < delta) {
			return badf("-calibration-delta %g: want a value in (0, -delta = %g)", calDelta, delta)
		}
	} else if calDelta != 0 {
		return badf("-calibration-delta without -calibration")
	}
	r, err := mitigatedEstimate(h, rec, settings, shots, cal, ro, delta, calDelta)
	if err != nil {
		if cal != nil {
			return badf("%s: %w", calPath, err)
		}
		return err
	}
	if e.json {
		return e.writeJSON(struct {
			Energy           float64    `json:"energy"`
			StdError         float64    `json:"std_error"`
			ApproxInterval   [2]float64 `json:"approx_interval"`
			Bound            float64    `json:"certified_bound"`
			DataBound        float64    `json:"data_bound"`
			Bias             float64    `json:"bias"`
			CalibrationBias  float64    `json:"calibration_bias"`
			CalibrationDelta float64    `json:"calibration_delta"`
			Delta            float64    `json:"delta"`
			Shots            int        `json:"shots"`
			Settings         int        `json:"settings"`
			Mitigated        bool       `json:"readout_mitigated"`
			Calibrated       bool       `json:"readout_calibrated"`
		}{r.res.Energy, r.res.StdErr, r.res.ApproxInterval, r.certified, r.data, r.bias, r.calibrationBias, r.calibrationDelta, delta, r.res.Shots, rec.Groups(), true, cal != nil})
	}
	printMitigated(e.stdout, r, rec.Groups(), delta, cal != nil)
	return nil
}
