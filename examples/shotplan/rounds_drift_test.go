package main

import (
	"fmt"
	"path/filepath"
	"strings"
	"testing"
)

// roundsDrift is the drift part of the JSON of rounds add and status.
type roundsDrift struct {
	Rounds   int     `json:"rounds"`
	P        float64 `json:"drift_p_value"`
	Tested   int     `json:"drift_settings_tested"`
	Rejected bool    `json:"drift_rejected"`
}

// TestRoundsDrift runs six equal rounds of 2000 shots on the H2 ground
// state twice. With the same readout error every round, the drift test (level
// 0.01) must not reject (a false warning has probability ≤ 1% up to the
// chi-square approximation; the seeds are fixed, so the check is
// deterministic). With the readout rate rising by 0.06 a round (0 to 0.3),
// every Z parity moves by several times its standard error (about 0.02 a
// round at 2000 shots spread over a few settings), and the test must reject
// and rounds status must print the warning.
func TestRoundsDrift(t *testing.T) {
	for _, drift := range []bool{false, true} {
		dir := t.TempDir()
		ham := h2Ham(t, dir)
		state := filepath.Join(dir, "state.json")
		ok(t, "rounds", "start", "-ham", ham, "-eps", "1e-6", "-delta", "0.01", "-first", "2000", "-growth", "1", "-max-shots", "12000", "-o", state)
		var last roundsDrift
		for k := 1; k <= 6; k++ {
			plan := filepath.Join(dir, fmt.Sprintf("round%d.json", k))
			recs := filepath.Join(dir, fmt.Sprintf("round%d.csv", k))
			ok(t, "rounds", "next", "-state", state, "-o", plan)
			rate := "0.02"
			if drift {
				rate = fmt.Sprint(0.06 * float64(k-1))
			}
			ok(t, "simulate", "-ham", ham, "-plan", plan, "-seed", fmt.Sprint(40+k), "-readout", rate, "-o", recs)
			okJSON(t, &last, "rounds", "add", "-state", state, "-records", recs)
		}
		if last.Rounds != 6 || last.Tested == 0 || last.Rejected != drift {
			t.Errorf("drift %v: %+v, want 6 rounds, some settings tested, rejected %v", drift, last, drift)
		}
		_, out, _ := sp(t, "rounds", "status", "-state", state)
		if strings.Contains(out, "warning: the outcomes of") != drift {
			t.Errorf("drift %v: rounds status printed\n%s", drift, out)
		}
		t.Logf("drift %v: %+v", drift, last)
	}
}
