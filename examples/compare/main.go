package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"github.com/shotplan/shotplan/internal/onceflag"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/plotutil"
	"gonum.org/v1/plot/vg"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/internal/scenario"
	"github.com/shotplan/shotplan/pauli"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// maxSimQubits is the widest Hamiltonian whose ground state compare
// simulates; wider ones get the certified bounds only.
const maxSimQubits = 20

type config struct {
	ham        string
	shots      int
	sweep      []int
	reps       int
	delta      float64
	seed       uint64
	plotPath   string
	csvPath    string
	json       bool
	strategies []string
	skipped    []string  // adaptive strategies: no a-priori certificate
	progress   io.Writer // nil: no progress bar
}

func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("compare", flag.ContinueOnError)
	fs.SetOutput(io.Discard) // parse errors are reported in one line below
	var c config
	var sweep, strategies string
	fs.StringVar(&c.ham, "ham", "", "Hamiltonian file (text or JSON); empty means the built-in spin ladder")
	fs.IntVar(&c.shots, "shots", 1000, "shots per plan for the table")
	fs.StringVar(&sweep, "sweep", "100,300,1000,3000,10000", "comma-separated budgets for the plot")
	fs.IntVar(&c.reps, "reps", 20, "simulated repetitions per strategy for the RMSE")
	fs.Float64Var(&c.delta, "delta", 0.05, "failure probability δ of the certified bound")
	fs.Uint64Var(&c.seed, "seed", 1, "seed of the simulations and random strategies")
	fs.StringVar(&c.plotPath, "plot", "", "write a plot of the certified bound against the -sweep budgets to this .png or .svg file (default: no plot)")
	fs.StringVar(&c.csvPath, "csv", "", "also write the table, with the bound at every -sweep budget, to this CSV file")
	fs.BoolVar(&c.json, "json", false, "print the table as JSON on standard output instead of text")
	fs.StringVar(&strategies, "strategies", strings.Join(allocate.Names(), ","), "comma-separated strategies to compare")
	fs.Usage = func() {
		fmt.Fprintln(fs.Output(), "usage: compare [flags]\n\nCompares the allocation strategies on one Hamiltonian: certified bound and simulated RMSE as a table (-json, -csv FILE), and a plot with -plot FILE.")
		fs.PrintDefaults()
	}
	// A flag given twice is an error, not last-wins.
	err := onceflag.Parse(fs, func() error { return fs.Parse(args) })
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			fs.SetOutput(stdout)
			fs.Usage()
			return 0
		}
		fmt.Fprintf(stderr, "compare: %v (see compare -h)\n", err)
		return 2
	}
	if err := c.check(fs, sweep, strategies); err != nil {
		fmt.Fprintf(stderr, "compare: %v\n", err)
		return 2
	}
	if f, ok := stderr.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		c.progress = stderr
	}
	h := scenario.Ladder()
	name := scenario.Name
	if c.ham != "" {
		var err error
		if h, err = hamiltonian.ReadFile(c.ham); err != nil {
			fmt.Fprintf(stderr, "compare: %s\n", firstLine(err))
			return 2
		}
		name = c.ham
		if h.Len() == 0 {
			fmt.Fprintf(stderr, "compare: %s: no non-identity terms, nothing to measure\n", c.ham)
			return 2
		}
	}
	if err := compare(stdout, h, name, c); err != nil {
		fmt.Fprintf(stderr, "compare: %s\n", firstLine(err))
		return 1
	}
	return 0
}

func (c *config) check(fs *flag.FlagSet, sweep, strategies string) error {
	if fs.NArg() > 0 {
		return fmt.Errorf("unexpected argument %q (it takes flags only)", fs.Arg(0))
	}
	if c.shots < 1 {
		return fmt.Errorf("-shots %d: want at least 1", c.shots)
	}
	if c.reps < 1 {
		return fmt.Errorf("-reps %d: want at least 1", c.reps)
	}
	if !(c.delta > 0 && c.delta < 1) {
		return fmt.Errorf("-delta %g: want a value in (0, 1)", c.delta)
	}
	for f := range strings.SplitSeq(sweep, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil || n < 1 {
			return fmt.Errorf("-sweep: %q is not a positive number of shots", f)
		}
		c.sweep = append(c.sweep, n)
	}
	slices.Sort(c.sweep)
	c.sweep = slices.Compact(c.sweep)
	for s := range strings.SplitSeq(strategies, ",") {
		s = strings.TrimSpace(s)
		a, err := allocate.ByName(s, 0)
		if err != nil {
			return err
		}
		if _, adaptive := a.(allocate.Observer); adaptive {
			c.skipped = append(c.skipped, s)
			continue
		}
		c.strategies = append(c.strategies, s)
	}
	switch ext := strings.ToLower(filepath.Ext(c.plotPath)); {
	case c.plotPath == "":
	case ext != ".png" && ext != ".svg":
		return fmt.Errorf("-plot %s: the file name must end in .png or .svg", c.plotPath)
	default:
		if err := writable("-plot", c.plotPath); err != nil {
			return err
		}
	}
	if c.csvPath != "" {
		if !strings.EqualFold(filepath.Ext(c.csvPath), ".csv") {
			return fmt.Errorf("-csv %s: the file name must end in .csv", c.csvPath)
		}
		if err := writable("-csv", c.csvPath); err != nil {
			return err
		}
	}
	return nil
}

// writable fails before the run, not after it, if an output file's folder
// is missing.
func writable(flagName, path string) error {
	if fi, err := os.Stat(filepath.Dir(path)); err != nil {
		return fmt.Errorf("%s %s: %w", flagName, path, err)
	} else if !fi.IsDir() {
		return fmt.Errorf("%s %s: %s is not a directory", flagName, path, filepath.Dir(path))
	}
	return nil
}

// newStrategy returns the strategy by name; "fixed" gets the all-X, all-Y,
// all-Z settings.
func newStrategy(name string, h *hamiltonian.Hamiltonian, seed uint64) (allocate.Allocator, error) {
	a, err := allocate.ByName(name, seed)
	if err != nil {
		return nil, err
	}
	if f, ok := a.(*allocate.Fixed); ok {
		for _, l := range []string{"X", "Y", "Z"} {
			f.Settings = append(f.Settings, pauli.MustParseSetting(strings.Repeat(l, h.Qubits())))
		}
	}
	return a, nil
}

// row is one strategy's line of the table.
type row struct {
	name     string
	settings float64 // distinct settings, mean over reps
	bound    float64 // certified bound, mean over reps
	bias     float64 // its bias part, mean over reps
	rmse     float64 // NaN when not simulated
	errBar   float64 // mean approximate error bar
	elapsed  time.Duration
	bounds   []float64 // certified bound at each sweep budget
}

func compare(w io.Writer, h *hamiltonian.Hamiltonian, name string, c config) error {
	simulate := h.Qubits() <= maxSimQubits
	var ground hamiltonian.Eigenpair
	if simulate {
		var err error
		if ground, err = hamiltonian.GroundState(h, nil); err != nil {
			return err
		}
	}
	reps := c.reps
	if !simulate {
		reps = 1
	}
	bar := newProgress(c.progress, len(c.strategies)*(reps+len(c.sweep)))
	defer bar.finish()

	rows := make([]row, len(c.strategies))
	for k, s := range c.strategies {
		r := row{name: s, rmse: math.NaN()}
		var sq float64
		for rep := range reps {
			a, err := newStrategy(s, h, c.seed+uint64(rep))
			if err != nil {
				return err
			}
			start := time.Now()
			plan, err := allocate.Run(h, c.shots, a, nil)
			if err != nil {
				return err
			}
			r.elapsed += time.Since(start)
			cert, err := guarantee.CertifyPlan(h, plan, c.delta, &guarantee.Options{Top: -1})
			if err != nil {
				return err
			}
			r.settings += float64(cert.Settings) / float64(reps)
			r.bound += cert.Bound / float64(reps)
			r.bias += cert.Bias / float64(reps)
			if simulate {
				sim, err := estimate.NewSimulator(ground.State, c.seed+uint64(rep), nil)
				if err != nil {
					return err
				}
				rec := estimate.NewRecords(h.Qubits())
				if err := sim.Run(plan.Settings, plan.Shots, rec); err != nil {
					return err
				}
				res, err := estimate.Grouped(h, rec, &estimate.Options{Confidence: 1 - c.delta})
				if err != nil {
					return err
				}
				d := res.Energy - ground.Energy
				sq += d * d
				r.errBar += (res.ApproxInterval[1] - res.Energy) / float64(reps)
			}
			bar.add()
		}
		r.elapsed /= time.Duration(reps)
		if simulate {
			r.rmse = math.Sqrt(sq / float64(reps))
		} else {
			r.errBar = math.NaN()
		}
		for _, n := range c.sweep {
			a, err := newStrategy(s, h, c.seed)
			if err != nil {
				return err
			}
			plan, err := allocate.Run(h, n, a, nil)
			if err != nil {
				return err
			}
			cert, err := guarantee.CertifyPlan(h, plan, c.delta, &guarantee.Options{Top: -1})
			if err != nil {
				return err
			}
			r.bounds = append(r.bounds, cert.Bound)
			bar.add()
		}
		rows[k] = r
	}
	bar.finish()

	if c.csvPath != "" {
		if err := writeCSV(c.csvPath, c, rows); err != nil {
			return err
		}
	}
	if c.plotPath != "" {
		if err := writePlot(c.plotPath, name, c, rows); err != nil {
			return err
		}
	}
	if c.json {
		return writeJSON(w, h, name, c, rows, simulate, ground.Energy, reps)
	}
	printTable(w, h, name, c, rows, simulate, ground.Energy, reps)
	if c.csvPath != "" {
		fmt.Fprintf(w, "\ntable written to %s\n", c.csvPath)
	}
	if c.plotPath != "" {
		fmt.Fprintf(w, "\nplot of certified bound against shots written to %s\n", c.plotPath)
	}
	return nil
}

func printTable(w io.Writer, h *hamiltonian.Hamiltonian, name string, c config, rows []row, simulate bool, exact float64, reps int) {
	fmt.Fprintf(w, "%s\n%d qubits, %d terms, one-norm %.4g", name, h.Qubits(), h.Len(), h.OneNorm())
	if simulate {
		fmt.Fprintf(w, ", exact ground energy %.6g", exact)
	}
	fmt.Fprintf(w, "\n%d shots per plan, certified at δ = %g", c.shots, c.delta)
	if simulate {
		fmt.Fprintf(w, "; RMSE over %d simulated runs on the exact ground state", reps)
	} else {
		fmt.Fprintf(w, "; no simulation above %d qubits", maxSimQubits)
	}
	fmt.Fprint(w, "\n\n")
	width := len("strategy")
	for _, r := range rows {
		width = max(width, len(r.name))
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "%-*s\tsettings\tcertified bound ±\tof which bias\tsimulated RMSE\terror bar (approx.)\tplan time\t\n", width, "strategy")
	for _, r := range rows {
		fmt.Fprintf(tw, "%-*s\t%.0f\t%.4g\t%.3g\t%s\t%s\t%s\t\n", width, r.name, r.settings, r.bound, r.bias,
			orNA(r.rmse), orNA(r.errBar), r.elapsed.Round(10*time.Microsecond))
	}
	tw.Flush()
	fmt.Fprintln(w, "\ncertified bound ±: holds with probability ≥ 1 − δ for every state (shot noise only; mean over runs for random strategies).")
	fmt.Fprintln(w, "error bar (approx.): normal approximation from the data, not a guarantee; fixed = all-X, all-Y, all-Z cycled.")
	if len(c.skipped) > 0 {
		fmt.Fprintf(w, "skipped (adaptive, so no certificate before the data): %s\n", strings.Join(c.skipped, ", "))
	}
}

func orNA(x float64) string {
	if math.IsNaN(x) {
		return "n/a"
	}
	return strconv.FormatFloat(x, 'g', 4, 64)
}

func writePlot(path, name string, c config, rows []row) error {
	p := plot.New()
	p.Title.Text = "certified bound at δ = " + strconv.FormatFloat(c.delta, 'g', -1, 64) + ": " + shorten(name)
	p.X.Label.Text = "shots"
	p.Y.Label.Text = "certified bound on |estimate − energy|"
	p.X.Scale, p.Y.Scale = plot.LogScale{}, plot.LogScale{}
	p.X.Tick.Marker, p.Y.Tick.Marker = plot.TickerFunc(logTicks), plot.TickerFunc(logTicks)
	p.Add(plotter.NewGrid())
	p.Legend.Left = true // the lines fall to the right: the lower left is free
	colors := palette(len(rows))
	for k, r := range rows {
		xy := make(plotter.XYs, len(c.sweep))
		for i, n := range c.sweep {
			xy[i].X, xy[i].Y = float64(n), r.bounds[i]
		}
		line, points, err := plotter.NewLinePoints(xy)
		if err != nil {
			return err
		}
		line.Color = colors[k]
		line.Dashes = plotutil.Dashes(k / len(basePalette))
		points.Color = colors[k]
		points.Shape = plotutil.Shape(k)
		p.Add(line, points)
		p.Legend.Add(r.name, line, points)
	}
	wt, err := p.WriterTo(7*vg.Inch, 5*vg.Inch, strings.ToLower(filepath.Ext(path))[1:])
	if err != nil {
		return err
	}
	return atomicfile.Write(path, func(w io.Writer) error {
		_, err := wt.WriteTo(w)
		return err
	})
}

// basePalette holds twelve colours that are told apart on screen and in
// print: the "Paired" qualitative scheme of ColorBrewer (Brewer, Harrower &
// Penn State, colorbrewer2.org), darker member first.
var basePalette = []color.RGBA{
	{0x1f, 0x78, 0xb4, 0xff}, {0x33, 0xa0, 0x2c, 0xff}, {0xe3, 0x1a, 0x1c, 0xff}, {0xff, 0x7f, 0x00, 0xff},
	{0x6a, 0x3d, 0x9a, 0xff}, {0xb1, 0x59, 0x28, 0xff}, {0xa6, 0xce, 0xe3, 0xff}, {0xb2, 0xdf, 0x8a, 0xff},
	{0xfb, 0x9a, 0x99, 0xff}, {0xfd, 0xbf, 0x6f, 0xff}, {0xca, 0xb2, 0xd6, 0xff}, {0x80, 0x80, 0x80, 0xff},
}

// palette returns n colours; the first twelve are distinct, and past them
// the lines differ by their dash pattern as well (see writePlot).
func palette(n int) []color.Color {
	out := make([]color.Color, n)
	for k := range out {
		out[k] = basePalette[k%len(basePalette)]
	}
	return out
}

// logTicks puts a tick at every integer multiple of the powers of ten in
// [min, max] and labels those at 1, 2 and 5 times a power of ten; when that
// gives fewer than four labels (a range of about one decade or less) it
// labels every tick.
func logTicks(min, max float64) []plot.Tick {
	ticks := logTicks125(min, max)
	labelled := 0
	for _, t := range ticks {
		if t.Label != "" {
			labelled++
		}
	}
	if labelled < 4 {
		for k := range ticks {
			ticks[k].Label = tickLabel(ticks[k].Value)
		}
	}
	return ticks
}

func tickLabel(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }

func logTicks125(min, max float64) []plot.Tick {
	var ticks []plot.Tick
	for e := math.Floor(math.Log10(min)); e <= math.Ceil(math.Log10(max)); e++ {
		base := math.Pow(10, e)
		for m := 1; m <= 9; m++ {
			v := float64(m) * base
			if v < min || v > max {
				continue
			}
			// m·10^e as a decimal, not m times a rounded 10^e.
			v, _ = strconv.ParseFloat(strconv.Itoa(m)+"e"+strconv.Itoa(int(e)), 64)
			t := plot.Tick{Value: v}
			if m == 1 || m == 2 || m == 5 {
				t.Label = tickLabel(v)
			}
			ticks = append(ticks, t)
		}
	}
	return ticks
}

// shorten keeps the part of a scenario description before its first comma.
func shorten(s string) string {
	if i := strings.IndexByte(s, ','); i > 0 {
		return s[:i]
	}
	return s
}

// firstLine returns the first line of an error's message, noting how many
// more there were (the readers join one error per bad line).
func firstLine(err error) string {
	msg := err.Error()
	i := strings.IndexByte(msg, '\n')
	if i < 0 {
		return msg
	}
	return fmt.Sprintf("%s (and %d more lines of errors)", msg[:i], strings.Count(msg, "\n"))
}

// progress shows a progress bar on a terminal once a run has taken more than
// two seconds; with a nil writer it shows nothing.
type progress struct {
	w           io.Writer
	total, done int
	start       time.Time
	bar         *progressbar.ProgressBar
}

func newProgress(w io.Writer, total int) *progress {
	return &progress{w: w, total: total, start: time.Now()}
}

func (p *progress) add() {
	p.done++
	if p.w == nil {
		return
	}
	if p.bar == nil {
		if time.Since(p.start) < 2*time.Second {
			return
		}
		p.bar = progressbar.NewOptions(p.total,
			progressbar.OptionSetWriter(p.w),
			progressbar.OptionSetDescription("comparing strategies"),
			progressbar.OptionShowCount(),
			progressbar.OptionSetPredictTime(true),
			progressbar.OptionClearOnFinish())
	}
	p.bar.Set(p.done)
}

func (p *progress) finish() {
	if p.bar != nil && !p.bar.IsFinished() {
		p.bar.Finish()
	}
}

// jsonRow is one strategy in the JSON output.
type jsonRow struct {
	Strategy  string     `json:"strategy"`
	Settings  float64    `json:"settings"`
	Certified float64    `json:"certified_bound"`
	Bias      float64    `json:"bias"`
	RMSE      *float64   `json:"simulated_rmse"`
	ErrorBar  *float64   `json:"approx_error_bar"`
	Seconds   float64    `json:"plan_seconds"`
	Sweep     []sweepRow `json:"sweep"`
}

type sweepRow struct {
	Shots     int     `json:"shots"`
	Certified float64 `json:"certified_bound"`
}

func finite(x float64) *float64 {
	if math.IsNaN(x) {
		return nil
	}
	return &x
}

func writeJSON(w io.Writer, h *hamiltonian.Hamiltonian, name string, c config, rows []row, simulate bool, exact float64, reps int) error {
	out := struct {
		Hamiltonian string    `json:"hamiltonian"`
		Qubits      int       `json:"qubits"`
		Terms       int       `json:"terms"`
		Exact       *float64  `json:"exact_ground_energy"`
		Shots       int       `json:"shots"`
		Delta       float64   `json:"delta"`
		Reps        int       `json:"reps"`
		Skipped     []string  `json:"skipped_adaptive"`
		Rows        []jsonRow `json:"strategies"`
	}{Hamiltonian: name, Qubits: h.Qubits(), Terms: h.Len(), Shots: c.shots, Delta: c.delta, Reps: reps, Skipped: c.skipped}
	if simulate {
		out.Exact = &exact
	}
	if out.Skipped == nil {
		out.Skipped = []string{}
	}
	for _, r := range rows {
		j := jsonRow{Strategy: r.name, Settings: r.settings, Certified: r.bound, Bias: r.bias,
			RMSE: finite(r.rmse), ErrorBar: finite(r.errBar), Seconds: r.elapsed.Seconds()}
		for i, n := range c.sweep {
			j.Sweep = append(j.Sweep, sweepRow{n, r.bounds[i]})
		}
		out.Rows = append(out.Rows, j)
	}
	b, err := json.MarshalIndent(out, "", "  ")
	if err != nil {
		return err
	}
	_, err = w.Write(append(b, '\n'))
	return err
}

// writeCSV writes the table with one column per -sweep budget, atomically.
func writeCSV(path string, c config, rows []row) error {
	return atomicfile.Write(path, func(w io.Writer) error {
		cw := csv.NewWriter(w)
		head := []string{"strategy", "settings", "certified_bound", "bias", "simulated_rmse", "approx_error_bar", "plan_seconds"}
		for _, n := range c.sweep {
			head = append(head, "certified_bound_at_"+strconv.Itoa(n))
		}
		if err := cw.Write(head); err != nil {
			return err
		}
		g := func(x float64) string {
			if math.IsNaN(x) {
				return ""
			}
			return strconv.FormatFloat(x, 'g', -1, 64)
		}
		for _, r := range rows {
			rec := []string{r.name, g(r.settings), g(r.bound), g(r.bias), g(r.rmse), g(r.errBar), g(r.elapsed.Seconds())}
			for _, b := range r.bounds {
				rec = append(rec, g(b))
			}
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
		cw.Flush()
		return cw.Error()
	})
}
