package main

import (
	"bytes"
	"encoding/base64"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
)

// roundsStatus is the JSON of rounds add and rounds status.
type roundsStatus struct {
	Rounds   int        `json:"rounds"`
	Shots    int        `json:"shots"`
	Interval [2]float64 `json:"interval"`
	Radius   float64    `json:"radius"`
	Verdict  string     `json:"verdict"`
}

// The whole loop on H2, the simulator standing in for the device: every
// round's plan is written, measured and added until the run stops. Between
// rounds the process is "killed": nothing is kept in memory, a stray
// temporary file is left where an interrupted write would leave one, and
// the next round's plan is asked for twice (before and after the kill) and
// must be the same file. The final interval must contain the full-CI energy
// of psi4 (h2FCI): the interval holds with probability ≥ 1 − δ = 99% over
// the seeds, and the seeds here are fixed, so the check is deterministic.
func TestRoundsLoop(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	state := filepath.Join(dir, "state.json")
	ok(t, "rounds", "start", "-ham", ham, "-eps", "0.02", "-delta", "0.01", "-first", "500", "-o", state)
	if code, _, errOut := sp(t, "rounds", "start", "-ham", ham, "-eps", "0.02", "-o", state); code != 2 || !strings.Contains(errOut, "exists") {
		t.Errorf("start over an existing state: exit %d, %q; want 2 and a refusal", code, errOut)
	}
	var last roundsStatus
	for k := 1; ; k++ {
		if k > 30 {
			t.Fatal("no stop after 30 rounds")
		}
		plan := filepath.Join(dir, fmt.Sprintf("round%d.json", k))
		again := filepath.Join(dir, fmt.Sprintf("again%d.json", k))
		ok(t, "rounds", "next", "-state", state, "-o", plan)
		// A kill between rounds: a temporary file left over, the state
		// untouched; the resumed run asks for the plan again.
		if err := os.WriteFile(filepath.Join(dir, ".state.json.tmp-killed"), []byte("{"), 0o644); err != nil {
			t.Fatal(err)
		}
		before := readFile(t, state)
		ok(t, "rounds", "next", "-state", state, "-o", again)
		if !bytes.Equal(readFile(t, plan), readFile(t, again)) {
			t.Fatalf("round %d: the plan asked for again differs", k)
		}
		if !bytes.Equal(before, readFile(t, state)) {
			t.Fatalf("round %d: rounds next changed the state", k)
		}
		recs := filepath.Join(dir, fmt.Sprintf("round%d.csv", k))
		ok(t, "simulate", "-ham", ham, "-plan", plan, "-seed", fmt.Sprint(100+k), "-o", recs)
		okJSON(t, &last, "rounds", "add", "-state", state, "-records", recs)
		if last.Rounds != k {
			t.Fatalf("after round %d the state has %d rounds", k, last.Rounds)
		}
		// The same records again are refused and change nothing.
		saved := readFile(t, state)
		code, _, errOut := sp(t, "rounds", "add", "-state", state, "-records", recs)
		if last.Verdict == "continue" && (code != 2 || !strings.Contains(errOut, fmt.Sprintf("already added as round %d", k))) {
			t.Fatalf("re-adding round %d: exit %d, %q; want a refusal", k, code, errOut)
		}
		if !bytes.Equal(saved, readFile(t, state)) {
			t.Fatalf("re-adding round %d changed the state", k)
		}
		if last.Verdict != "continue" {
			break
		}
	}
	if last.Verdict != "stop: certified" || last.Radius > 0.02 {
		t.Fatalf("run ended with %q, radius %g", last.Verdict, last.Radius)
	}
	if !(last.Interval[0] <= h2FCI && h2FCI <= last.Interval[1]) {
		t.Errorf("certified interval %v misses the full-CI energy %.10f", last.Interval, h2FCI)
	}
	var st roundsStatus
	okJSON(t, &st, "rounds", "status", "-state", state)
	if st != last {
		t.Errorf("status %+v after a fresh read, add said %+v", st, last)
	}
	if code, _, errOut := sp(t, "rounds", "next", "-state", state, "-o", filepath.Join(dir, "more.json")); code != 2 || !strings.Contains(errOut, "certified") {
		t.Errorf("next after the stop: exit %d, %q", code, errOut)
	}
}

func readFile(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// A round's records may come in several files or on standard input, and
// records of another round's plan are refused naming the setting.
func TestRoundsRecordsSources(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	state := filepath.Join(dir, "state.json")
	plan := filepath.Join(dir, "r1.json")
	ok(t, "rounds", "start", "-ham", ham, "-eps", "0.02", "-first", "200", "-o", state)
	ok(t, "rounds", "next", "-state", state, "-o", plan)
	recs := filepath.Join(dir, "r1.csv")
	ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", recs)
	// Split the CSV into two files after its header line.
	lines := strings.SplitAfter(string(readFile(t, recs)), "\n")
	half := 1 + (len(lines)-1)/2
	a, b := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")
	os.WriteFile(a, []byte(strings.Join(lines[:half], "")), 0o644)
	os.WriteFile(b, []byte(lines[0]+strings.Join(lines[half:], "")), 0o644)
	// Half the shots alone are refused.
	if code, _, errOut := sp(t, "rounds", "add", "-state", state, "-records", a); code != 2 || !strings.Contains(errOut, "a.csv") {
		t.Errorf("half the records: exit %d, %q", code, errOut)
	}
	old := stdin
	defer func() { stdin = old }()
	stdin = bytes.NewReader(readFile(t, b))
	var st roundsStatus
	okJSON(t, &st, "rounds", "add", "-state", state, "-records", a, "-records", "-")
	if st.Rounds != 1 || st.Shots != 200 {
		t.Errorf("after a + standard input: %+v", st)
	}
}

// The state reader refuses damaged files with one line naming the file and
// the entry, and never panics.
func TestRoundsStateDamaged(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	state := filepath.Join(dir, "state.json")
	plan := filepath.Join(dir, "r1.json")
	ok(t, "rounds", "start", "-ham", ham, "-eps", "0.02", "-first", "50", "-o", state)
	ok(t, "rounds", "next", "-state", state, "-o", plan)
	recs := filepath.Join(dir, "r1.csv")
	ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", recs)
	ok(t, "rounds", "add", "-state", state, "-records", recs)
	good := readFile(t, state)
	var m map[string]any
	if err := json.Unmarshal(good, &m); err != nil {
		t.Fatal(err)
	}
	edit := func(f func(m map[string]any)) []byte {
		var c map[string]any
		json.Unmarshal(good, &c)
		f(c)
		b, _ := json.Marshal(c)
		return b
	}
	round := func(c map[string]any) map[string]any { return c["rounds"].([]any)[0].(map[string]any) }
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"truncated", good[:len(good)/2], "ends early"},
		{"syntax", append([]byte("{\n\"format\": ,"), good...), "line 2"},
		{"version", edit(func(c map[string]any) { c["version"] = 9 }), "version"},
		{"format", edit(func(c map[string]any) { c["format"] = "other" }), "format"},
		{"unknown key", edit(func(c map[string]any) { c["extra"] = 1 }), "extra"},
		{"outcome flipped", edit(func(c map[string]any) {
			o, _ := base64.StdEncoding.DecodeString(round(c)["outcomes"].(string))
			o[0] ^= 1
			round(c)["outcomes"] = base64.StdEncoding.EncodeToString(o)
		}), "rounds[0].records_sha256"},
		{"outcome bit beyond the qubits", edit(func(c map[string]any) {
			o, _ := base64.StdEncoding.DecodeString(round(c)["outcomes"].(string))
			o[3] |= 0x80
			round(c)["outcomes"] = base64.StdEncoding.EncodeToString(o)
		}), "rounds[0].outcomes: shot 3"},
		{"outcomes short", edit(func(c map[string]any) { round(c)["outcomes"] = "AAAA" }), "rounds[0].outcomes: 3 bytes"},
		{"outcomes not base64", edit(func(c map[string]any) { round(c)["outcomes"] = "%%" }), "rounds[0].outcomes: not base64"},
		{"round number", edit(func(c map[string]any) { round(c)["round"] = 2 }), "rounds[0]"},
		{"weights", edit(func(c map[string]any) { c["weights"].([]any)[0] = 0 }), "weights[0]"},
		{"setting", edit(func(c map[string]any) { c["settings"].([]any)[0] = "XQ" }), "settings[0]"},
		{"hamiltonian", edit(func(c map[string]any) { c["hamiltonian"] = "nonsense" }), "hamiltonian"},
	} {
		p := filepath.Join(dir, c.name+".json")
		os.WriteFile(p, c.data, 0o644)
		code, _, errOut := sp(t, "rounds", "status", "-state", p)
		if code != 2 || !strings.Contains(errOut, p) || !strings.Contains(errOut, c.want) || strings.Count(errOut, "\n") != 1 {
			t.Errorf("%s: exit %d, stderr %q; want 2 and one line naming %s and %q", c.name, code, errOut, p, c.want)
		}
	}
}

// FuzzRoundsState feeds the state reader arbitrary bytes: it returns a run
// or an input error, never panics, and a run it accepts writes back to a
// state it accepts again with the same interval.
func FuzzRoundsState(f *testing.F) {
	f.Add([]byte(`{"format":"shotplan rounds","version":1}`))
	f.Add([]byte(`{"format":"shotplan rounds","version":1,"hamiltonian":{"qubits":1,"terms":[{"pauli":"Z","coeff":1}]},"strategy":"greedy","seed":1,"target":0.1,"delta":0.05,"first_round":2,"growth":1,"max_shots":10,"settings":["Z"],"weights":[1],"rounds":[]}`))
	f.Add([]byte("{\"rounds\":[{\"outcomes\":\"AA==\"}]}"))
	f.Add([]byte("[]"))
	// A real state of one round of H2.
	dir := f.TempDir()
	ham, state, plan, recs := filepath.Join(dir, "h2.txt"), filepath.Join(dir, "s.json"), filepath.Join(dir, "p.json"), filepath.Join(dir, "r.csv")
	for _, args := range [][]string{
		{"convert", "-o", ham, h2Dump},
		{"rounds", "start", "-ham", ham, "-eps", "0.05", "-first", "20", "-o", state},
		{"rounds", "next", "-state", state, "-o", plan},
		{"simulate", "-ham", ham, "-plan", plan, "-o", recs},
		{"rounds", "add", "-state", state, "-records", recs},
	} {
		var o, e bytes.Buffer
		if code := run(args, &o, &e); code != 0 {
			f.Fatalf("%v: exit %d, %s", args, code, e.String())
		}
	}
	good, err := os.ReadFile(state)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(good)
	f.Fuzz(func(t *testing.T, data []byte) {
		// The light read (no replay) accepts whatever the full read
		// accepts, with the same rounds.
		light, lightErr := parseRoundsState("fuzz.json", data, false)
		r, err := parseRoundsState("fuzz.json", data, true)
		if err == nil && (lightErr != nil || light.done != r.done || light.used != r.used) {
			t.Fatalf("the full read accepts, the light read gives %v", lightErr)
		}
		for _, e := range []error{err, lightErr} {
			if e != nil && !strings.HasPrefix(e.Error(), "fuzz.json: ") {
				t.Fatalf("error %q does not name the file", e)
			}
		}
		if err != nil {
			return
		}
		b, err := json.Marshal(r.st)
		if err != nil {
			t.Fatal(err)
		}
		r2, err := parseRoundsState("again.json", b, true)
		if err != nil {
			t.Fatalf("written back, the state is refused: %v", err)
		}
		if r2.done != r.done || r2.interval != r.interval {
			t.Fatalf("written back: %d rounds %v, was %d %v", r2.done, r2.interval, r.done, r.interval)
		}
	})
}

// Two rounds add at once, with different records of the same round (two
// simulations of round 1's plan): exactly one is added, the other is
// refused, and the state holds the one that was added — no round is lost
// by both reading the old state.
func TestRoundsConcurrentAdd(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	for trial := range 5 {
		state := filepath.Join(dir, fmt.Sprintf("state%d.json", trial))
		plan := filepath.Join(dir, "p.json")
		ok(t, "rounds", "start", "-ham", ham, "-eps", "0.001", "-first", "5000", "-o", state)
		ok(t, "rounds", "next", "-state", state, "-o", plan)
		var recs [2]string
		for k := range recs {
			recs[k] = filepath.Join(dir, fmt.Sprintf("r%d.csv", k))
			ok(t, "simulate", "-ham", ham, "-plan", plan, "-seed", fmt.Sprint(10*trial+k), "-o", recs[k])
		}
		var codes [2]int
		var wg sync.WaitGroup
		for k := range recs {
			wg.Add(1)
			go func() {
				defer wg.Done()
				var o, e bytes.Buffer
				codes[k] = run([]string{"rounds", "add", "-state", state, "-records", recs[k]}, &o, &e)
			}()
		}
		wg.Wait()
		if codes[0]+codes[1] != 2 || codes[0]*codes[1] != 0 {
			t.Fatalf("trial %d: exit statuses %v, want one 0 and one 2", trial, codes)
		}
		r, err := readRoundsState(state, true)
		if err != nil || r.done != 1 {
			t.Fatalf("trial %d: %v rounds (%v)", trial, r, err)
		}
	}
}
