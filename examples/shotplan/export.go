package main

import (
	"flag"
	"fmt"
	"path/filepath"

	"github.com/shotplan/shotplan/estimate"
)

func exportFlags(fs *flag.FlagSet, e *env) func() error {
	plan := fs.String("plan", "", "plan file (required)")
	out := fs.String("o", "", "new directory for the programs and "+estimate.ManifestName+" (required; must not exist or be empty)")
	programLimit := fs.Int("program-limit", defaultProgramLimit, "refuse to write more program files than this (see -one-program)")
	oneProgram := fs.Bool("one-program", false, "write one program, "+estimate.InputsProgramName+", whose inputs choose the setting (local settings only) instead of one program per setting")
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
