package estimate

import (
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// TestSimulatorSameOnAnyCores checks that the same seed gives the same
// outcomes on 1, 2 and 3 goroutines when the distributions of distinct
// settings are computed in parallel (many shots per setting, so that Run
// takes every setting's full distribution), with readout error, the
// channels before readout and an entangled setting, and that a second Run
// (its settings then in the cache, computed on one goroutine) agrees too.
func TestSimulatorSameOnAnyCores(t *testing.T) {
	const n = 8
	psi := randomState(n, 21)
	rng := rand.New(rand.NewPCG(4, 5))
	var settings []pauli.Setting
	var shots []int
	for range 30 {
		settings = append(settings, randomSetting(rng, n))
		shots = append(shots, 200)
	}
	bell, err := pauli.NewFamilySetting([]pauli.String{pauli.MustParse("XXIIIIII"), pauli.MustParse("ZZIIIIII")})
	if err != nil {
		t.Fatal(err)
	}
	settings = append(settings, bell, settings[3])
	shots = append(shots, 200, 50)
	readout := make([]Readout, n)
	depol := make([]float64, n)
	for q := range readout {
		readout[q] = Readout{P01: 0.01 * float64(q%3), P10: 0.02}
		depol[q] = 0.01
	}
	run := func(procs int, opts *SimulatorOptions) [2]*Records {
		old := runtime.GOMAXPROCS(procs)
		defer runtime.GOMAXPROCS(old)
		sim, err := NewSimulator(psi, 77, opts)
		if err != nil {
			t.Fatal(err)
		}
		var out [2]*Records
		for r := range out {
			out[r] = NewRecords(n)
			if err := sim.Run(settings, shots, out[r]); err != nil {
				t.Fatal(err)
			}
		}
		return out
	}
	for _, opts := range []*SimulatorOptions{nil, {Readout: readout, Depolarizing: depol}, {CacheBytes: -1}} {
		want := run(1, opts)
		for _, procs := range []int{2, 3} {
			got := run(procs, opts)
			for r := range got {
				if !got[r].Equal(want[r]) {
					t.Errorf("options %+v, run %d: %d goroutines give other outcomes than one", opts, r+1, procs)
				}
			}
		}
		if want[0].Equal(want[1]) {
			t.Errorf("options %+v: two runs gave the same outcomes; the comparison tests nothing", opts)
		}
	}
}
