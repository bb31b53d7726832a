package estimate

import (
	"fmt"

	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// Device measures shots. A user implements it for their hardware; the
// package provides [Simulator].
//
// Run measures shots[k] fresh copies of the state in settings[k], for each k
// in order, and appends every outcome to rec in that order with
// [Records.Add]. The settings and rec have the same width. Run returns an
// error if the lengths differ, a width or a count is wrong, or the
// hardware fails; it should then append nothing.
type Device interface {
	Run(settings []pauli.Setting, shots []int, rec *Records) error
}

// maxRunShots bounds the shots of one call of [Simulator.Run], whose
// outcomes are held in memory at once (8 bytes each). It is the cap of the
// plan reader too (allocate.MaxShots): 2^32 shots.
const maxRunShots = inputcap.MaxShots

// checkRun validates the arguments of [Device.Run].
func checkRun(n int, settings []pauli.Setting, shots []int, rec *Records) error {
	if rec == nil {
		return fmt.Errorf("estimate: nil records")
	}
	if len(settings) != len(shots) {
		return fmt.Errorf("estimate: %d settings but %d shot counts", len(settings), len(shots))
	}
	if rec.Qubits() != n {
		return fmt.Errorf("estimate: records have %d qubits, device has %d", rec.Qubits(), n)
	}
	var total int64
	for k, s := range settings {
		if s.Qubits() != n {
			return fmt.Errorf("estimate: setting %d (%s) has %d qubits, device has %d", k, s, s.Qubits(), n)
		}
		if shots[k] < 0 {
			return fmt.Errorf("estimate: setting %d (%s) has negative shot count %d", k, s, shots[k])
		}
		if int64(shots[k]) > maxRunShots-total {
			return fmt.Errorf("estimate: setting %d (%s): more than %d shots in one call", k, s, maxRunShots)
		}
		total += int64(shots[k])
	}
	return nil
}
