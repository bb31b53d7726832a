package main

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestCalibratedWorkflow runs the readout calibration end to end on H2 with
// an entangled plan: simulate with asymmetric readout error and calibration
// shots, then estimate with -calibration. At -delta 0.001 each bound of the
// mitigated estimate misses psi4's full-CI energy with probability at most
// 0.001 (MATH.md §2.1.2); the seeds are fixed, so the run is reproducible.
// The plain estimate on the same records is shown to be off by more than
// its own data bound (the readout bias it ignores), and -readout with the
// true rates must give a data bound about the mitigated estimate, not the
// plain one.
func TestCalibratedWorkflow(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h2.txt")
	ok(t, "convert", "-o", ham, h2Dump)
	planPath := filepath.Join(dir, "plan.json")
	ok(t, "plan", "-ham", ham, "-strategy", "sorted-gc", "-shots", "20000", "-o", planPath)
	rates := filepath.Join(dir, "rates.csv")
	if err := os.WriteFile(rates, []byte("qubit,p01,p10\n0,0.02,0.05\n1,0.01,0.04\n3,0.03,0.06\n2,0.02,0.03\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	rec, cal := filepath.Join(dir, "rec.csv"), filepath.Join(dir, "cal.csv")
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-readout", "@"+rates, "-calibration-shots", "20000", "-calibration-o", cal, "-o", rec)

	type result struct {
		Energy     float64 `json:"energy"`
		Bound      float64 `json:"certified_bound"`
		DataBound  float64 `json:"data_bound"`
		CalBias    float64 `json:"calibration_bias"`
		CalDelta   float64 `json:"calibration_delta"`
		Calibrated bool    `json:"readout_calibrated"`
		Mitigated  bool    `json:"readout_mitigated"`
	}
	var m, plain, known result
	okJSON(t, &m, "estimate", "-ham", ham, "-plan", planPath, "-records", rec, "-calibration", cal, "-delta", "0.001")
	okJSON(t, &plain, "estimate", "-ham", ham, "-plan", planPath, "-records", rec, "-delta", "0.001")
	if !m.Mitigated || !m.Calibrated || !(m.CalBias > 0) || m.CalDelta != 0.001/4 {
		t.Errorf("calibrated estimate: %+v", m)
	}
	if d := math.Abs(m.Energy - h2FCI); d > m.Bound || d > m.DataBound {
		t.Errorf("mitigated energy %v is %v from psi4's %v: beyond the certified %v or data bound %v", m.Energy, d, h2FCI, m.Bound, m.DataBound)
	}
	if d := math.Abs(plain.Energy - h2FCI); d <= plain.DataBound {
		t.Errorf("plain energy %v within its data bound %v of %v: the readout error in this test does not matter", plain.Energy, plain.DataBound, h2FCI)
	}
	okJSON(t, &known, "estimate", "-ham", ham, "-plan", planPath, "-records", rec, "-readout", "@"+rates, "-delta", "0.001")
	if !known.Mitigated || known.Calibrated || known.DataBound == plain.DataBound {
		t.Errorf("-readout: %+v; plain data bound %v", known, plain.DataBound)
	}
	if d := math.Abs(known.Energy - h2FCI); d > known.DataBound {
		t.Errorf("-readout with the true rates: energy %v is %v from %v, beyond its data bound %v", known.Energy, d, h2FCI, known.DataBound)
	}
	out := ok(t, "estimate", "-ham", ham, "-plan", planPath, "-records", rec, "-calibration", cal)
	for _, w := range []string{"readout-mitigated", "calibration bias", "split as"} {
		if !strings.Contains(out, w) {
			t.Errorf("estimate -calibration output lacks %q:\n%s", w, out)
		}
	}
	// The keyed and the old positional syntax give the same simulation.
	r1, r2 := filepath.Join(dir, "r1.csv"), filepath.Join(dir, "r2.csv")
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-readout", "p10=0.05,p01=0.02", "-o", r1)
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-readout", "0.02,0.05", "-o", r2)
	b1, _ := os.ReadFile(r1)
	b2, _ := os.ReadFile(r2)
	if string(b1) != string(b2) {
		t.Error("-readout p10=0.05,p01=0.02 and 0.02,0.05 simulate differently")
	}
}

func TestCalibratePlan(t *testing.T) {
	p := filepath.Join(t.TempDir(), "calplan.csv")
	ok(t, "calibrate", "-qubits", "3", "-shots", "250", "-o", p)
	b, err := os.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	if want := "prepared,shots\n000,250\n111,250\n"; string(b) != want {
		t.Errorf("calibration plan %q, want %q", b, want)
	}
}

// TestCalibrationBadInput: bad calibration input exits 2 with one line
// naming the file, line or flag, and writes nothing.
func TestCalibrationBadInput(t *testing.T) {
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	ham := filepath.Join(dir, "h2.txt")
	ok(t, "convert", "-o", ham, h2Dump)
	planPath := filepath.Join(dir, "plan.json")
	ok(t, "plan", "-ham", ham, "-shots", "200", "-o", planPath)
	rec := filepath.Join(dir, "rec.csv")
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-o", rec)
	badCal := write("badcal.csv", "prepared,outcome\n0000,0000\n1111,11a1\n")
	narrowCal := write("narrow.csv", "prepared,outcome\n000,000\n111,111\n")
	goodCal := write("good.csv", "prepared,outcome\n0000,0000\n1111,1111\n")
	noisyCal := write("noisy.csv", "prepared,outcome\n0000,1111\n1111,0000\n")
	missing := write("missing.csv", "qubit,p01,p10\n0,0.01,0.02\n1,0.01,0.02\n")
	badRate := write("badrate.csv", "qubit,p01,p10\n0,0.01,0.02\n1,0.6,0.02\n")
	out := filepath.Join(dir, "out.csv")
	est := []string{"estimate", "-ham", ham, "-plan", planPath, "-records", rec}
	cases := []struct {
		name string
		args []string
		want []string
	}{
		{"bad calibration line", append(slices.Clone(est), "-calibration", badCal), []string{"badcal.csv", "line 3", "'a'"}},
		{"calibration width", append(slices.Clone(est), "-calibration", narrowCal), []string{"narrow.csv", "3 qubits"}},
		{"calibration without information", append(slices.Clone(est), "-calibration", noisyCal), []string{"noisy.csv", "nothing to mitigate"}},
		{"readout and calibration", append(slices.Clone(est), "-calibration", noisyCal, "-readout", "0.01"), []string{"-readout", "-calibration"}},
		{"calibration delta", append(slices.Clone(est), "-calibration", goodCal, "-calibration-delta", "0.5"), []string{"-calibration-delta 0.5"}},
		{"calibration delta without calibration", append(slices.Clone(est), "-readout", "0.01", "-calibration-delta", "0.01"), []string{"-calibration-delta"}},
		{"unknown rate key", []string{"simulate", "-ham", ham, "-plan", planPath, "-readout", "p02=0.1", "-o", out}, []string{"-readout", "p02", "p01"}},
		{"rate too large", []string{"simulate", "-ham", ham, "-plan", planPath, "-readout", "p01=0.7", "-o", out}, []string{"-readout", "0.7"}},
		{"rates file missing a qubit", []string{"simulate", "-ham", ham, "-plan", planPath, "-readout", "@" + missing, "-o", out}, []string{"missing.csv", "qubit 2"}},
		{"rates file bad rate", []string{"simulate", "-ham", ham, "-plan", planPath, "-readout", "@" + badRate, "-o", out}, []string{"badrate.csv", "line 3", "0.6"}},
		{"calibration shots without file", []string{"simulate", "-ham", ham, "-plan", planPath, "-calibration-shots", "10", "-o", out}, []string{"-calibration-o"}},
		{"too many calibration shots", []string{"simulate", "-ham", ham, "-plan", planPath, "-calibration-shots", "1000000000", "-calibration-o", out, "-o", out + "2"}, []string{"-calibration-shots", "at most"}},
		{"calibrate without qubits", []string{"calibrate", "-shots", "10", "-o", out}, []string{"-qubits"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			before := listDir(t, dir)
			code, stdout, stderr := sp(t, c.args...)
			if code != 2 || strings.Count(stderr, "\n") != 1 || stdout != "" {
				t.Errorf("exit %d, stdout %q, stderr %q; want exit 2 and one line on stderr", code, stdout, stderr)
			}
			for _, w := range c.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr %q does not mention %q", stderr, w)
				}
			}
			if after := listDir(t, dir); !slices.Equal(before, after) {
				t.Errorf("files changed: before %v, after %v", before, after)
			}
		})
	}
}

// FuzzReadoutFlag: every -readout value and rates file either parses to
// rates in [0, 0.5) for every qubit or gives an input error, never a panic.
func FuzzReadoutFlag(f *testing.F) {
	f.Add("p01=0.02,p10=0.05", "qubit,p01,p10\n0,0.1,0.2\n1,0,0\n")
	f.Add("@", "qubit,p01,p10\n1,0.1,0.2\n0,0.3,0.4\n")
	f.Add("0.01,0.02", "")
	f.Fuzz(func(t *testing.T, flagValue, file string) {
		p := filepath.Join(t.TempDir(), "rates.csv")
		if err := os.WriteFile(p, []byte(file), 0o644); err != nil {
			t.Fatal(err)
		}
		if flagValue == "@" {
			flagValue = "@" + p
		}
		r, err := parseReadout(flagValue, 2)
		if err != nil {
			var ie inputError
			if !errors.As(err, &ie) {
				t.Fatalf("%q: error %v is not an input error", flagValue, err)
			}
			return
		}
		if flagValue == "" {
			return
		}
		if len(r) != 2 {
			t.Fatalf("%q: %d rates", flagValue, len(r))
		}
		for _, e := range r {
			if !(e.P01 >= 0 && e.P01 < 0.5 && e.P10 >= 0 && e.P10 < 0.5) {
				t.Fatalf("%q: rates %+v", flagValue, e)
			}
		}
	})
}
