package main

import (
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

func exportFlags(fs *flag.FlagSet, e *env) func() error {
	plan := fs.String("plan", "", "plan file (required)")
	out := fs.String("o", "", "new directory for the programs and "+estimate.ManifestName+" (required; must not exist or be empty)")
	programLimit := fs.Int("program-limit", defaultProgramLimit, "refuse to write more program files than this (see -one-program)")
	oneProgram := fs.Bool("one-program", false, "write one program, "+estimate.InputsProgramName+", whose inputs choose the setting (local settings only) instead of one program per setting")
	maxShots := fs.Int("max-shots-per-circuit", 0, "the device's most shots of one circuit: a setting with more is cut into several circuits, one per job (0: no limit)")
	maxCircuits := fs.Int("max-circuits-per-job", 0, "the device's most circuits in one job: write the plan as jobs job_001, job_002, ... under -o, each with its programs and "+estimate.ManifestName+" (0: no limit)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := need("o", *out); err != nil {
			return err
		}
		f, err := loadPlan(*plan)
		if err != nil {
			return err
		}
		settings, shots := f.Plan.Distinct()
		if *maxShots < 0 || *maxCircuits < 0 {
			return badf("-max-shots-per-circuit %d, -max-circuits-per-job %d: want 0 (no limit) or more", *maxShots, *maxCircuits)
		}
		if *maxShots > 0 || *maxCircuits > 0 {
			if *oneProgram {
				return badf("-one-program writes one program for the whole plan; it does not combine with -max-shots-per-circuit or -max-circuits-per-job")
			}
			return exportJobs(e, *out, settings, shots, allocate.DeviceLimits{MaxShotsPerCircuit: *maxShots, MaxCircuitsPerJob: *maxCircuits}, *programLimit)
		}
		export := estimate.ExportQASM
		if *oneProgram {
			export = estimate.ExportQASMInputs
		} else if err := checkPrograms(settings, *programLimit); err != nil {
			return err
		}
		if err := export(*out, settings, shots); err != nil {
			return bad(err)
		}
		res := struct {
			Output   string `json:"output"`
			Manifest string `json:"manifest"`
			Programs int    `json:"programs"`
			Shots    int    `json:"shots"`
		}{*out, filepath.Join(*out, estimate.ManifestName), programs(settings, *oneProgram), f.Plan.TotalShots()}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "wrote %s of OpenQASM 3 and %s to %s (%d shots in all)\n", plural(res.Programs, "program"), estimate.ManifestName, *out, res.Shots)
		if *oneProgram {
			fmt.Fprintf(e.stdout, "%s: input basis_q sets the letter of qubit q (0 = Z, 1 = X, 2 = Y) as in the manifest's setting column\n", estimate.InputsProgramName)
		}
		fmt.Fprintf(e.stdout, "records: one CSV row \"setting,outcome\" per shot; the setting may be the manifest index, the outcome qubit 0 first\n")
		return nil
	}
}

// exportJobs writes the plan as jobs that respect the device's limits: a
// folder job_001, job_002, ... under out for each, holding the job's
// programs and manifest. Everything is checked before the first write; a
// failed write removes what this run wrote.
func exportJobs(e *env, out string, settings []pauli.Setting, shots []int, lim allocate.DeviceLimits, programLimit int) error {
	jobs, err := allocate.SplitJobs(settings, shots, lim)
	if err != nil {
		return bad(err)
	}
	circuits := 0
	for _, j := range jobs {
		circuits += len(j.Settings)
	}
	if circuits > programLimit {
		return badf("the plan splits into %s in %s: %d program files are over -program-limit %d (raise -max-shots-per-circuit, or raise -program-limit)", plural(circuits, "circuit"), plural(len(jobs), "job"), circuits, programLimit)
	}
	if entries, err := os.ReadDir(out); err == nil && len(entries) > 0 {
		return badf("-o %s: directory is not empty", out)
	} else if err != nil && !errors.Is(err, os.ErrNotExist) {
		return bad(err)
	}
	created := false
	if _, err := os.Stat(out); errors.Is(err, os.ErrNotExist) {
		if err := os.Mkdir(out, 0o777); err != nil {
			return bad(err)
		}
		created = true
	}
	digits := max(3, len(fmt.Sprint(len(jobs))))
	var names []string
	for k, j := range jobs {
		name := fmt.Sprintf("job_%0*d", digits, k+1)
		if err := estimate.ExportQASM(filepath.Join(out, name), j.Settings, j.Shots); err != nil {
			for _, n := range names {
				os.RemoveAll(filepath.Join(out, n))
			}
			if created {
				os.Remove(out)
			}
			return bad(err)
		}
		names = append(names, name)
	}
	total := 0
	for _, m := range shots {
		total += m
	}
	res := struct {
		Output   string   `json:"output"`
		Jobs     []string `json:"jobs"`
		Circuits int      `json:"circuits"`
		Shots    int      `json:"shots"`
	}{out, names, circuits, total}
	if e.json {
		return e.writeJSON(res)
	}
	fmt.Fprintf(e.stdout, "wrote %s (%s, %d shots in all) to %s, each a folder of OpenQASM 3 programs and %s\n", plural(len(jobs), "job"), plural(circuits, "circuit"), total, out, estimate.ManifestName)
	fmt.Fprintf(e.stdout, "records: one CSV row \"setting,outcome\" per shot with the setting's letters; the records of all jobs together make the plan's records\n")
	return nil
}
