package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"github.com/shotplan/shotplan/internal/onceflag"
	"io"
	"os"
	"strings"
)

func main() {
	handleSignals(os.Stderr)
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// command is one subcommand.
type command struct {
	name    string
	summary string
	// flags defines the subcommand's flags on fs and returns the function
	// that runs it once they are parsed.
	flags func(fs *flag.FlagSet, env *env) func() error
	usage string // the argument synopsis after the name
	// more, if not nil, returns text printed after the flags by -h.
	more func() string
}

var commands = []command{
	{"info", "print the size, offset and one-norm of a Hamiltonian (and its exact ground energy)", infoFlags, "[-exact [-electrons N] [-spin MS2]] [-json] HAMILTONIAN", nil},
	{"convert", "turn an FCIDUMP file into a qubit Hamiltonian file", convertFlags, "[-encoding jw|bk|parity] [-frozen K] [-active M] -o OUT FCIDUMP", nil},
	{"plan", "plan the settings of a budget of shots with a strategy", planFlags, "-ham H [-strategy NAME] [-shots N] [-seed S] [-settings FILE] [-cost-budget B -shot-cost T -circuit-cost T] [-observables N,Sz,S2 -targets E,... [-delta δ]] [-proxy worst|hf|exact|BITS|FILE [-electrons N] [-spin MS2]] [-by-seed] -o PLAN", strategyHelp},
	{"certify", "bound the error of a plan's estimate before any shot", certifyFlags, "-ham H -plan PLAN [-delta δ] [-top N] [-readout P|p01=X,p10=Y|@FILE] [-calibration CALIB [-calibration-delta D] [-pairs A-B,...]] [-observables N,Sz,S2]", certifyHelp},
	{"budget", "count the shots a target accuracy needs, per strategy", budgetFlags, "-ham H -eps E [-delta δ] [-strategy NAME|all] [-proxy worst|hf|exact|BITS|FILE [-electrons N] [-spin MS2]] [-readout P|p01=X,p10=Y|@FILE | -calibration CALIB [-pairs A-B,...]] [-calibration-delta D]", budgetHelp},
	{"export", "write a plan's settings as OpenQASM 3 programs with a manifest", exportFlags, "-plan PLAN [-max-shots-per-circuit N] [-max-circuits-per-job N] [-one-program] -o DIR", nil},
	{"simulate", "simulate a plan's shots on the exact ground state or a prepared state", simulateFlags, "-ham H -plan PLAN [-seed S] [-prepare ground|hf|FILE] [-readout P|p01=X,p10=Y|@FILE] [-depolarizing P] [-dephasing P] [-pair-flip P [-pairs A-B,...]] [-calibration-shots M -calibration-o CALIB] [-electrons N] [-spin MS2] [-state FILE] -o RECORDS", nil},
	{"estimate", "estimate the energy from shot records, with error bar and bounds", estimateFlags, "-ham H -plan PLAN -records RECORDS... [-delta δ] [-readout P|p01=X,p10=Y|@FILE] [-calibration CALIB [-calibration-delta D] [-pairs A-B,...]] [-observables N,Sz,S2]", estimateHelp},
	{"calibrate", "write the readout calibration plan: basis states to prepare and shots of each", calibrateFlags, "-qubits N -shots M [-pairs A-B,...] -o PLAN", calibrateHelp},
	{"rounds start", "begin a round-by-round certified run; its state goes to one file", roundsStartFlags, "-ham H -eps E [-delta δ] [-strategy NAME] [-baseline none|hf|exact|BITS|FILE] -o STATE", roundsHelp},
	{"rounds next", "write the plan of the run's next round", roundsNextFlags, "-state STATE -o PLAN", roundsHelp},
	{"rounds add", "add a round's records; print the interval and whether to stop", roundsAddFlags, "-state STATE -records RECORDS...", roundsHelp},
	{"rounds status", "print the run's interval and whether to stop", roundsStatusFlags, "-state STATE", roundsHelp},
	{"version", "print the module version and the versions of the file formats", versionFlags, "", nil},
}

// env is what a subcommand writes to.
type env struct {
	stdout, stderr io.Writer
	data           io.Writer // standard output, when -o - sends the output there
	json           bool
	args           []string // positional arguments, wherever they stood among the flags
}

// inputError marks an error caused by the command's input (files, flags,
// arguments): it ends the command with exit status 2.
type inputError struct{ err error }

func (e inputError) Error() string { return e.err.Error() }
func (e inputError) Unwrap() error { return e.err }

// bad marks err as an input error; nil stays nil.
func bad(err error) error {
	if err == nil {
		return nil
	}
	return inputError{err}
}

// badf is bad(fmt.Errorf(...)).
func badf(format string, args ...any) error { return inputError{fmt.Errorf(format, args...)} }

func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		mainUsage(stderr)
		return 2
	}
	switch args[0] {
	case "-h", "-help", "--help", "help":
		mainUsage(stdout)
		return 0
	}
	for _, c := range commands {
		if c.name == args[0] {
			return runCommand(c, args[1:], stdout, stderr)
		}
		if len(args) > 1 && c.name == args[0]+" "+args[1] {
			return runCommand(c, args[2:], stdout, stderr)
		}
	}
	if args[0] == "rounds" {
		fmt.Fprintf(stderr, "shotplan rounds: want start, next, add or status after rounds (see shotplan -h)\n")
		return 2
	}
	fmt.Fprintf(stderr, "shotplan: unknown command %q (commands: %s; see shotplan -h)\n", args[0], commandNames())
	return 2
}

func commandNames() string {
	var names []string
	for _, c := range commands {
		first, _, _ := strings.Cut(c.name, " ")
		if len(names) == 0 || names[len(names)-1] != first {
			names = append(names, first)
		}
	}
	return strings.Join(names, ", ")
}

func mainUsage(w io.Writer) {
	fmt.Fprintln(w, "usage: shotplan COMMAND [flags]\n\nThe file-based workflow of shotplan, one step per command:")
	for _, c := range commands {
		fmt.Fprintf(w, "  %-14s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w, "\nRun shotplan COMMAND -h for the flags of a command. Every command takes -json.")
}

func runCommand(c command, args []string, stdout, stderr io.Writer) int {
	e := &env{stdout: stdout, stderr: stderr}
	fs := flag.NewFlagSet("shotplan "+c.name, flag.ContinueOnError)
	fs.SetOutput(io.Discard) // parse errors are reported in one line below
	fs.BoolVar(&e.json, "json", false, "print the result as JSON on standard output")
	exec := c.flags(fs, e)
	fs.Usage = func() {
		fmt.Fprintf(fs.Output(), "usage: shotplan %s %s\n\n%s.\n\nflags:\n", c.name, c.usage, upperFirst(c.summary))
		fs.PrintDefaults()
		if c.more != nil {
			fmt.Fprint(fs.Output(), c.more())
		}
	}
	// A single-valued flag given twice is an error, not last-wins.
	err := onceflag.Parse(fs, func() error { return parse(fs, args, e) })
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			fs.SetOutput(stdout)
			fs.Usage()
			return 0
		}
		fmt.Fprintf(stderr, "shotplan %s: %v (see shotplan %s -h)\n", c.name, err, c.name)
		return 2
	}
	err = exec()
	if err == nil {
		return 0
	}
	msg := firstLine(err)
	if usageMistake(msg) {
		msg += fmt.Sprintf(" (see shotplan %s -h)", c.name)
	}
	fmt.Fprintf(stderr, "shotplan %s: %s\n", c.name, msg)
	var ie inputError
	if errors.As(err, &ie) {
		return 2
	}
	return 1
}

// usageMistake reports whether msg is about the command line itself (a
// missing flag or argument), where the command's -h is the next step.
func usageMistake(msg string) bool {
	return strings.HasPrefix(msg, "flag -") || strings.HasPrefix(msg, "missing argument") || strings.HasPrefix(msg, "want one argument")
}

// libraryPrefixes are the package names that start the library's error
// messages; the command drops them, at the start and after a file name,
// since its own line already says where the message comes from.
var libraryPrefixes = []string{"pauli: ", "hamiltonian: ", "fermion: ", "molecule: ", "allocate: ", "estimate: ", "guarantee: "}

func dropLibraryPrefix(msg string) string {
	for _, p := range libraryPrefixes {
		msg = strings.ReplaceAll(msg, ": "+p, ": ")
	}
	for again := true; again; {
		again = false
		for _, p := range libraryPrefixes {
			if strings.HasPrefix(msg, p) {
				msg, again = msg[len(p):], true
			}
		}
	}
	return msg
}

func upperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// firstLine returns the first line of an error's message, noting how many
// more there were: the readers join one error per bad line.
func firstLine(err error) string {
	msg := dropLibraryPrefix(err.Error())
	i := strings.IndexByte(msg, '\n')
	if i < 0 {
		return msg
	}
	return fmt.Sprintf("%s (and %d more errors)", msg[:i], strings.Count(msg, "\n"))
}

// writeJSON prints v as indented JSON.
func (e *env) writeJSON(v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return err
	}
	b = append(b, '\n')
	_, err = e.stdout.Write(b)
	return err
}

// parse parses flags and positional arguments in any order.
func parse(fs *flag.FlagSet, args []string, e *env) error {
	for {
		if err := fs.Parse(args); err != nil {
			return err
		}
		args = fs.Args()
		if len(args) == 0 {
			return nil
		}
		e.args = append(e.args, args[0])
		args = args[1:]
	}
}

// positional checks the number of positional arguments.
func (e *env) positional(n int, what string) error {
	switch {
	case len(e.args) == n:
		return nil
	case n == 0:
		return badf("unexpected argument %q (inputs are given by flags)", e.args[0])
	case len(e.args) == 0:
		return badf("missing argument: %s", what)
	}
	return badf("want one argument, %s; got %d", what, len(e.args))
}

// need checks that a required flag was given.
func need(flagName, value string) error {
	if value == "" {
		return badf("flag -%s is required", flagName)
	}
	return nil
}
