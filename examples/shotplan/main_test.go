package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/pauli"
)

// h2FCI is the full-CI energy of H2/STO-3G at 0.74 Å in hartree (Debian's
// psi4 1.3.2, energy('fci'); see testdata/README.md).
const h2FCI = -1.1372838344855134

const h2Dump = "testdata/h2_sto3g_0.74A.fcidump"

// sp runs the command in-process and returns its exit status and outputs.
func sp(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = run(args, &o, &e)
	return code, o.String(), e.String()
}

// ok runs the command and fails the test unless it succeeds.
func ok(t *testing.T, args ...string) string {
	t.Helper()
	code, out, errOut := sp(t, args...)
	if code != 0 {
		t.Fatalf("shotplan %s: exit %d, stderr %q", strings.Join(args, " "), code, errOut)
	}
	return out
}

// okJSON runs the command with -json and decodes its output.
func okJSON(t *testing.T, v any, args ...string) map[string]any {
	t.Helper()
	out := ok(t, append(args, "-json")...)
	if err := json.Unmarshal([]byte(out), v); err != nil {
		t.Fatalf("shotplan %s -json: %v in %q", strings.Join(args, " "), err, out)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatal(err)
	}
	return m
}

// wantKeys checks that the JSON output has every key the workflow promises.
func wantKeys(t *testing.T, cmd string, m map[string]any, keys ...string) {
	t.Helper()
	for _, k := range keys {
		if _, ok := m[k]; !ok {
			t.Errorf("shotplan %s -json: no key %q in %v", cmd, k, m)
		}
	}
}

// TestWorkflowH2 chains every step on the H2 integrals and checks each
// against the library called directly, and the energies against psi4.
func TestWorkflowH2(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h2.txt")
	planPath := filepath.Join(dir, "plan.json")
	recPath := filepath.Join(dir, "records.csv")
	qasm := filepath.Join(dir, "qasm")

	// convert: the same Hamiltonian as molecule + fermion called directly.
	ok(t, "convert", "-encoding", "jw", "-o", ham, h2Dump)
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	g, err := molecule.ReadFCIDUMPFile(h2Dump)
	if err != nil {
		t.Fatal(err)
	}
	direct, err := g.QubitHamiltonian(fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	if !h.Equal(direct) {
		t.Errorf("convert wrote a Hamiltonian that differs from molecule.QubitHamiltonian(JordanWigner)")
	}

	// info: sizes, and the exact ground energy against psi4's full CI.
	var info struct {
		Qubits, Terms int
		Offset        float64
		OneNorm       float64 `json:"one_norm"`
		Ground        float64 `json:"ground_energy"`
	}
	m := okJSON(t, &info, "info", "-exact", ham)
	wantKeys(t, "info", m, "qubits", "terms", "offset", "one_norm", "ground_energy")
	if info.Qubits != 4 || info.Terms != h.Len() || info.Offset != h.Offset() || info.OneNorm != h.OneNorm() {
		t.Errorf("info = %+v, want 4 qubits, %d terms, offset %v, one-norm %v", info, h.Len(), h.Offset(), h.OneNorm())
	}
	if math.Abs(info.Ground-h2FCI) > 1e-8 { // psi4 FCI, testdata/README.md; tolerance covers its 1e-9 agreement
		t.Errorf("info ground_energy = %.12f, want %.12f (psi4 full CI) within 1e-8", info.Ground, h2FCI)
	}

	// plan: the same plan as allocate.Run with the same strategy and seed.
	ok(t, "plan", "-ham", ham, "-strategy", "derand", "-shots", "600", "-seed", "5", "-o", planPath)
	f, err := allocate.ReadPlanFile(planPath)
	if err != nil {
		t.Fatal(err)
	}
	a, _ := allocate.ByName("derand", 5)
	want, err := allocate.Run(h, 600, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	if fmt.Sprint(f.Plan.Settings) != fmt.Sprint(want.Settings) {
		t.Errorf("plan file settings differ from allocate.Run")
	}
	if !slices.Equal(f.Plan.Shots, want.Shots) || !slices.Equal(f.Plan.Cover, want.Cover) || f.Seed != 5 {
		t.Errorf("plan file shots/cover/seed differ from allocate.Run")
	}

	// certify: the library's certificate, number for number.
	var cert struct {
		Shots         int
		Delta         float64
		Bound         float64 `json:"certified_bound"`
		Radius        float64
		Bias          float64
		ScaledOneNorm float64 `json:"scaled_one_norm"`
	}
	m = okJSON(t, &cert, "certify", "-ham", ham, "-plan", planPath, "-delta", "0.1")
	wantKeys(t, "certify", m, "shots", "delta", "certified_bound", "radius", "bias", "scaled_one_norm", "one_norm", "relaxed_bound")
	c, err := guarantee.CertifyPlan(h, want, 0.1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if cert.Shots != 600 || cert.Delta != 0.1 || cert.Bound != c.Bound || cert.Radius != c.Radius || cert.Bias != c.Bias || cert.ScaledOneNorm != c.ScaledOneNorm {
		t.Errorf("certify = %+v, want the library's shots 600, δ 0.1, certified bound %v, radius %v, bias %v, scaled one-norm %v", cert, c.Bound, c.Radius, c.Bias, c.ScaledOneNorm)
	}

	// export: a manifest listing the plan's distinct settings and shots.
	ok(t, "export", "-plan", planPath, "-o", qasm)
	ms, mshots, err := estimate.ReadManifestFile(filepath.Join(qasm, estimate.ManifestName))
	if err != nil {
		t.Fatal(err)
	}
	ds, dshots := want.Distinct()
	if fmt.Sprint(ms) != fmt.Sprint(ds) || !slices.Equal(mshots, dshots) {
		t.Errorf("manifest %v %v, want the plan's distinct settings %v %v", ms, mshots, ds, dshots)
	}

	// simulate: the same records as the simulator called directly.
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-seed", "3", "-o", recPath)
	rec, err := estimate.ReadCSVFile(recPath, nil)
	if err != nil {
		t.Fatal(err)
	}
	sim, _, err := estimate.GroundStateSimulator(h, 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	wantRec := estimate.NewRecords(4)
	if err := sim.Run(want.Settings, want.Shots, wantRec); err != nil {
		t.Fatal(err)
	}
	if !rec.Equal(wantRec) {
		t.Errorf("simulate wrote records that differ from the simulator's with seed 3")
	}

	// estimate: the library's grouped estimate, and within the certified
	// bound of psi4's energy. The seed is fixed; over seeds the bound would
	// fail with probability at most δ = 0.1.
	var est struct {
		Energy   float64
		StdError float64 `json:"std_error"`
		Bound    float64 `json:"certified_bound"`
		Delta    float64
		Shots    int
	}
	m = okJSON(t, &est, "estimate", "-ham", ham, "-plan", planPath, "-records", recPath, "-delta", "0.1")
	wantKeys(t, "estimate", m, "energy", "std_error", "certified_bound", "data_bound", "delta", "shots")
	res, err := estimate.Grouped(h, wantRec, &estimate.Options{Confidence: 0.9})
	if err != nil {
		t.Fatal(err)
	}
	if est.Energy != res.Energy || est.StdError != res.StdErr || est.Bound != c.Bound || est.Delta != 0.1 || est.Shots != 600 {
		t.Errorf("estimate = %+v, want energy %v, std_error %v, certified bound %v, δ 0.1, 600 shots", est, res.Energy, res.StdErr, c.Bound)
	}
	if d := math.Abs(est.Energy - h2FCI); d > est.Bound {
		t.Errorf("estimate %v is %v from psi4's %v, beyond its certified bound %v", est.Energy, d, h2FCI, est.Bound)
	}
	// The data bound is the smaller of the library's pooled and residual
	// bounds at δ/2 each, named by data_form, and holds here too.
	var data struct {
		DataEpsilon float64 `json:"data_bound"`
		DataForm    string  `json:"data_form"`
	}
	okJSON(t, &data, "estimate", "-ham", ham, "-plan", planPath, "-records", recPath, "-delta", "0.1")
	pooled, err := guarantee.Empirical(h, wantRec, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	resid, err := guarantee.Empirical(h, wantRec, 0.05, &guarantee.EmpiricalOptions{Form: guarantee.Residual})
	if err != nil {
		t.Fatal(err)
	}
	wantEps, form := pooled.Bound, "pooled"
	if resid.Bound < wantEps {
		wantEps, form = resid.Bound, "residual"
	}
	if data.DataEpsilon != wantEps || data.DataForm != form {
		t.Errorf("estimate data bound %v (%s), want %v (%s)", data.DataEpsilon, data.DataForm, wantEps, form)
	}
	if d := math.Abs(est.Energy - h2FCI); d > data.DataEpsilon {
		t.Errorf("estimate %v is %v from psi4's %v, beyond its data bound %v", est.Energy, d, h2FCI, data.DataEpsilon)
	}

	// Records from a device, written with the manifest's setting indices and
	// in another order, give the same estimate.
	var idx strings.Builder
	idx.WriteString("setting,outcome\n")
	for g := range wantRec.Groups() {
		k := slices.IndexFunc(ms, func(s pauli.Setting) bool { return s.Equal(wantRec.Setting(g)) })
		for j := range wantRec.GroupLen(g) {
			fmt.Fprintf(&idx, "%d,%s\n", k, wantRec.Outcome(g, j).Format(4))
		}
	}
	idxPath := filepath.Join(dir, "device.csv")
	if err := os.WriteFile(idxPath, []byte(idx.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	var est2 struct{ Energy float64 }
	okJSON(t, &est2, "estimate", "-ham", ham, "-plan", planPath, "-records", idxPath, "-delta", "0.1")
	if math.Abs(est2.Energy-est.Energy) > 1e-12 { // same samples summed in another order
		t.Errorf("estimate from index records = %v, want %v within 1e-12", est2.Energy, est.Energy)
	}

	// The text outputs carry the same numbers.
	out := ok(t, "estimate", "-ham", ham, "-plan", planPath, "-records", recPath, "-delta", "0.1")
	for _, w := range []string{fmt.Sprintf("%.8f", res.Energy), "APPROXIMATE", fmt.Sprintf("%.8f", c.Bound)} {
		if !strings.Contains(out, w) {
			t.Errorf("estimate output lacks %q:\n%s", w, out)
		}
	}
}

// TestWorkflowEncodingsAndJSON runs the other encodings, an active space,
// JSON Hamiltonian and record files, readout error and the fixed strategy.
func TestWorkflowEncodingsAndJSON(t *testing.T) {
	dir := t.TempDir()
	for _, enc := range []string{"bk", "parity"} {
		ham := filepath.Join(dir, enc+".json")
		ok(t, "convert", "-encoding", enc, "-o", ham, h2Dump)
		var info struct {
			Ground float64 `json:"ground_energy"`
		}
		okJSON(t, &info, "info", "-exact", ham)
		if math.Abs(info.Ground-h2FCI) > 1e-8 { // psi4 FCI; every encoding has the same spectrum
			t.Errorf("%s: ground energy %.12f, want %.12f within 1e-8", enc, info.Ground, h2FCI)
		}
	}
	// Freezing nothing and keeping both orbitals is the whole space.
	ham := filepath.Join(dir, "h2.txt")
	ok(t, "convert", "-frozen", "0", "-active", "2", "-o", ham, h2Dump)

	settings := filepath.Join(dir, "settings.txt")
	if err := os.WriteFile(settings, []byte("# all Z, then the four XY settings\nZZZZ\nXXYY\nYYXX\nXYYX\nYXXY\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	planPath := filepath.Join(dir, "plan.json")
	ok(t, "plan", "-ham", ham, "-strategy", "fixed", "-settings", settings, "-shots", "500", "-o", planPath)
	recPath := filepath.Join(dir, "rec.json")
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-readout", "0.01", "-o", recPath)
	var est struct {
		Energy float64
		Bound  float64 `json:"certified_bound"`
	}
	okJSON(t, &est, "estimate", "-ham", ham, "-plan", planPath, "-records", recPath, "-readout", "0.01")
	if d := math.Abs(est.Energy - h2FCI); d > est.Bound {
		t.Errorf("mitigated estimate %v is %v from psi4's %v, beyond the bound %v", est.Energy, d, h2FCI, est.Bound)
	}
}

func TestHelp(t *testing.T) {
	for _, c := range commands {
		code, out, errOut := sp(t, c.name, "-h")
		if code != 0 || errOut != "" || !strings.HasPrefix(out, "usage: shotplan "+c.name) || !strings.Contains(out, "-json") {
			t.Errorf("shotplan %s -h: exit %d, stderr %q, stdout %q; want exit 0 and a usage naming -json", c.name, code, errOut, out)
		}
	}
	_, out, _ := sp(t, "plan", "-h")
	for _, n := range allocate.Names() {
		if !strings.Contains(out, "\n  "+n+" ") {
			t.Errorf("shotplan plan -h does not list strategy %q:\n%s", n, out)
		}
	}
	for _, n := range allocate.Names() {
		if strategyNotes[n] == "" {
			t.Errorf("shotplan plan -h lists strategy %q without a description", n)
		}
	}
	if code, out, _ := sp(t, "-h"); code != 0 || !strings.Contains(out, "estimate") {
		t.Errorf("shotplan -h: exit %d, output %q", code, out)
	}
}

// TestBadInput checks every kind of bad input: exit status 2, one line on
// standard error naming the file, line and problem, and no output file.
func TestBadInput(t *testing.T) {
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
	ok(t, "plan", "-ham", ham, "-shots", "50", "-o", planPath)
	recPath := filepath.Join(dir, "rec.csv")
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-o", recPath)

	offsetOnly := write("offset.txt", "qubits 4\n-0.5 I\n")
	badHam := write("bad.txt", "qubits 4\n-1 ZZII\n0.5 XQII\n")
	wide := write("wide.txt", "-1 ZZIIII\n-0.5 XIIIII\n")
	badDump := write("bad.fcidump", "&FCI NORB=2, NELEC=2 &END\n 0.67 1 1 1 1\n 0.5 1 1 x 0\n")
	planText, err := os.ReadFile(planPath)
	if err != nil {
		t.Fatal(err)
	}
	badPlan := write("badplan.json", strings.Replace(string(planText), `"setting": "ZZZZ"`, `"setting": "ZZKZ"`, 1))
	badRec := write("badrec.csv", "setting,outcome\nZZZZ,0101\nZZZZ,01x1\n")
	shortRec := write("short.csv", "setting,outcome\nZZZZ,0101\n")
	recText, err := os.ReadFile(recPath)
	if err != nil {
		t.Fatal(err)
	}
	extraRec := write("extra.csv", string(recText)+"XZXZ,0000\n")
	full := filepath.Join(dir, "full")
	if err := os.Mkdir(full, 0o755); err != nil {
		t.Fatal(err)
	}
	write("full/keep.txt", "x")
	out := filepath.Join(dir, "out.file")

	cases := []struct {
		name string
		args []string
		want []string // substrings of the one line
	}{
		{"missing Hamiltonian", []string{"plan", "-ham", filepath.Join(dir, "none.txt"), "-o", out}, []string{"none.txt", "no such file"}},
		{"missing argument file", []string{"info", filepath.Join(dir, "none.txt")}, []string{"none.txt", "no such file"}},
		{"malformed Hamiltonian line", []string{"plan", "-ham", badHam, "-o", out}, []string{"bad.txt", "line 3", "unknown letter 'Q'"}},
		{"malformed FCIDUMP line", []string{"convert", "-o", out, badDump}, []string{"bad.fcidump", "line 3", "not an integer"}},
		{"nothing to measure", []string{"plan", "-ham", offsetOnly, "-o", out}, []string{"offset.txt", "no non-identity terms"}},
		{"unknown strategy", []string{"plan", "-ham", ham, "-strategy", "best", "-o", out}, []string{`unknown strategy "best"`, "greedy"}},
		{"qubit mismatch", []string{"simulate", "-ham", wide, "-plan", planPath, "-o", out}, []string{"plan.json", "line 4", "4 qubits", "has 6", "wide.txt"}},
		{"qubit mismatch certify", []string{"certify", "-ham", wide, "-plan", planPath}, []string{"plan.json", "line 4", "4 qubits"}},
		{"malformed plan", []string{"export", "-plan", badPlan, "-o", out}, []string{"badplan.json", "line 9", "settings[0]", "unknown letter 'K'"}},
		{"malformed records line", []string{"estimate", "-ham", ham, "-plan", planPath, "-records", badRec}, []string{"badrec.csv", "line 3", "'x'"}},
		{"records short of the plan", []string{"estimate", "-ham", ham, "-plan", planPath, "-records", shortRec}, []string{"short.csv", "the plan asks for"}},
		{"records beyond the plan", []string{"estimate", "-ham", ham, "-plan", planPath, "-records", extraRec}, []string{"extra.csv", "setting XZXZ is not in the plan"}},
		{"export into a full directory", []string{"export", "-plan", planPath, "-o", full}, []string{"full"}},
		{"output directory missing", []string{"simulate", "-ham", ham, "-plan", planPath, "-o", filepath.Join(dir, "nodir", "rec.csv")}, []string{"nodir"}},
		{"missing -o", []string{"simulate", "-ham", ham, "-plan", planPath}, []string{"-o is required"}},
		{"bad readout", []string{"simulate", "-ham", ham, "-plan", planPath, "-readout", "0.7", "-o", out}, []string{"-readout", "0.7"}},
		{"unknown flag", []string{"plan", "-budget", "5"}, []string{"-budget"}},
		{"unknown command", []string{"measure"}, []string{`"measure"`}},
		{"fixed without settings", []string{"plan", "-ham", ham, "-strategy", "fixed", "-o", out}, []string{"-settings"}},
		{"bad delta", []string{"certify", "-ham", ham, "-plan", planPath, "-delta", "1.5"}, []string{"-delta"}},
		{"plan over its Hamiltonian", []string{"plan", "-ham", ham, "-o", ham}, []string{"h2.txt", "input file"}},
		{"simulate over its plan", []string{"simulate", "-ham", ham, "-plan", planPath, "-o", planPath}, []string{"plan.json", "input file"}},
		{"convert over its FCIDUMP", []string{"convert", "-o", badDump, badDump}, []string{"bad.fcidump", "input file"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			before := listDir(t, dir)
			code, stdout, stderr := sp(t, c.args...)
			t.Logf("stderr: %s", stderr)
			if code != 2 {
				t.Errorf("exit %d, want 2 (stderr %q)", code, stderr)
			}
			if strings.Count(stderr, "\n") != 1 || !strings.HasSuffix(stderr, "\n") {
				t.Errorf("stderr %q is not one line", stderr)
			}
			if strings.Contains(stderr, "goroutine") || strings.Contains(stderr, "panic") {
				t.Errorf("stderr looks like a crash: %q", stderr)
			}
			for _, w := range c.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr %q does not mention %q", stderr, w)
				}
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			if after := listDir(t, dir); !slices.Equal(before, after) {
				t.Errorf("files changed: before %v, after %v", before, after)
			}
		})
	}
}

// listDir lists the files under dir, recursively.
func listDir(t *testing.T, dir string) []string {
	t.Helper()
	var names []string
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		names = append(names, p)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return names
}

// TestConvertFrozenCore freezes LiH's lowest orbital and checks the exact
// energy of the 10-qubit Hamiltonian against psi4's frozen-core full CI,
// −7.8821759908 hartree (testdata/README.md). The lowest eigenvalue over all
// electron numbers is the two-electron one here (checked by this value).
func TestConvertFrozenCore(t *testing.T) {
	ham := filepath.Join(t.TempDir(), "lih.txt")
	ok(t, "convert", "-frozen", "1", "-o", ham, "testdata/lih_sto3g_1.5949A.fcidump")
	var info struct {
		Qubits int
		Ground float64 `json:"ground_energy"`
	}
	okJSON(t, &info, "info", "-exact", ham)
	if info.Qubits != 10 || math.Abs(info.Ground-(-7.8821759908)) > 1e-8 { // psi4 value given to 1e-10
		t.Errorf("frozen-core LiH: %d qubits, ground energy %.10f; want 10 and −7.8821759908 within 1e-8", info.Qubits, info.Ground)
	}
}

// TestJSONEverywhere checks that every step's -json output is one valid
// JSON object and nothing else.
func TestJSONEverywhere(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h2.txt")
	planPath := filepath.Join(dir, "plan.json")
	recPath := filepath.Join(dir, "rec.csv")
	steps := [][]string{
		{"convert", "-o", ham, h2Dump},
		{"info", ham},
		{"plan", "-ham", ham, "-strategy", "importance", "-shots", "100", "-o", planPath},
		{"certify", "-ham", ham, "-plan", planPath},
		{"export", "-plan", planPath, "-o", filepath.Join(dir, "qasm")},
		{"simulate", "-ham", ham, "-plan", planPath, "-o", recPath},
		{"estimate", "-ham", ham, "-plan", planPath, "-records", recPath},
	}
	for _, s := range steps {
		out := ok(t, append(s, "-json")...)
		var m map[string]any
		if err := json.Unmarshal([]byte(out), &m); err != nil {
			t.Errorf("shotplan %s -json: %v in %q", s[0], err, out)
		}
	}
}

// TestCertifyTop checks that -top N lists exactly N terms, -top 0 none.
func TestCertifyTop(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h2.txt")
	ok(t, "convert", "-o", ham, h2Dump)
	planPath := filepath.Join(dir, "plan.json")
	ok(t, "plan", "-ham", ham, "-shots", "100", "-o", planPath)
	for _, n := range []int{0, 3, -2} {
		var c struct{ Top []json.RawMessage }
		okJSON(t, &c, "certify", "-ham", ham, "-plan", planPath, "-top", fmt.Sprint(n))
		if want := max(n, 0); len(c.Top) != want {
			t.Errorf("certify -top %d -json lists %d terms, want %d", n, len(c.Top), want)
		}
		out := ok(t, "certify", "-ham", ham, "-plan", planPath, "-top", fmt.Sprint(n))
		if got, want := strings.Count(out, "  term "), max(n, 0); got != want {
			t.Errorf("certify -top %d lists %d terms, want %d:\n%s", n, got, want, out)
		}
	}
}
