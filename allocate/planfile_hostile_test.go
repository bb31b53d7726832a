package allocate

import (
	"errors"
	"os"
	"strings"
	"testing"
)

type zeroStream struct{}

func (zeroStream) Read(b []byte) (int, error) { clear(b); return len(b), nil }

// TestReadPlanHostile checks the plan reader's caps: binary input is refused
// at once, a plan above MaxShots is refused naming the entry, and a long
// setting is quoted shortened.
func TestReadPlanHostile(t *testing.T) {
	_, err := ReadPlan(zeroStream{})
	var pe *PlanFileError
	if !errors.As(err, &pe) || pe.Line != 1 || !strings.Contains(err.Error(), "not a plan file") {
		t.Errorf("ReadPlan(endless NUL bytes) = %v", err)
	}
	if _, serr := os.Stat("/dev/zero"); serr == nil {
		if _, err := ReadPlanFile("/dev/zero"); err == nil || !strings.Contains(err.Error(), "/dev/zero: line 1: not a plan file") {
			t.Errorf("ReadPlanFile(/dev/zero) = %v", err)
		}
	}
	head := `{"format": "shotplan plan", "version": 1, "qubits": 2, "strategy": "fixed", "seed": 0,` + "\n"
	big := head + `"settings": [{"setting": "ZZ", "shots": 5000000000},` + "\n" +
		`{"setting": "XX", "shots": 5000000000}],` + "\n" + `"cover": [0], "drawn": null}`
	_, err = ReadPlan(strings.NewReader(big))
	if !errors.As(err, &pe) || pe.Entry != "settings[0]" || !strings.Contains(err.Error(), "MaxShots") {
		t.Errorf("a plan of 10^10 shots: %v, want a refusal naming MaxShots", err)
	}
	wide := head + `"settings": [{"setting": "` + strings.Repeat("Q", 4000) + `", "shots": 1}], "cover": [], "drawn": null}`
	_, err = ReadPlan(strings.NewReader(wide))
	if err == nil || len(err.Error()) > 300 {
		t.Errorf("a 4000-letter setting is quoted in %d bytes", len(err.Error()))
	}
}
