package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestMain lets the test binary stand in for the command: with
// SHOTPLAN_TEST_MAIN=1 in its environment it runs the command line it was
// given and exits, so a test can start the command as a separate process
// and kill it.
func TestMain(m *testing.M) {
	if os.Getenv("SHOTPLAN_TEST_MAIN") == "1" {
		os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

// A real kill (SIGKILL) of rounds add, at several moments of its run: the
// state file afterwards is always one the reader accepts, holding either no
// round or the whole round, and adding the same records again finishes the
// round exactly once.
func TestRoundsKilledAdd(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	recs := filepath.Join(dir, "r1.csv")
	delays := []time.Duration{0, 20 * time.Millisecond, 200 * time.Millisecond, 3 * time.Second}
	for k, delay := range delays {
		state := filepath.Join(dir, "state"+strings.Repeat("x", k)+".json")
		plan := filepath.Join(dir, "p.json")
		ok(t, "rounds", "start", "-ham", ham, "-eps", "0.001", "-first", "30000", "-o", state)
		ok(t, "rounds", "next", "-state", state, "-o", plan)
		if k == 0 {
			ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", recs)
		}
		cmd := exec.Command(os.Args[0], "rounds", "add", "-state", state, "-records", recs)
		cmd.Env = append(os.Environ(), "SHOTPLAN_TEST_MAIN=1")
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(delay)
		cmd.Process.Signal(syscall.SIGKILL)
		cmd.Wait()

		r, err := readRoundsState(state, true)
		if err != nil {
			t.Fatalf("kill after %v: the state is unreadable: %v", delay, err)
		}
		before := r.done
		if before > 1 {
			t.Fatalf("kill after %v: %d rounds", delay, before)
		}
		code, _, errOut := sp(t, "rounds", "add", "-state", state, "-records", recs)
		switch {
		case before == 0 && code != 0:
			t.Fatalf("kill after %v before the round was saved: adding again failed: %q", delay, errOut)
		case before == 1 && (code != 2 || !strings.Contains(errOut, "already added as round 1")):
			t.Fatalf("kill after %v after the round was saved: adding again gave %d %q", delay, code, errOut)
		}
		r, err = readRoundsState(state, true)
		if err != nil || r.done != 1 || r.used != 30000 {
			t.Fatalf("kill after %v: resumed state has %v rounds, %v shots (%v)", delay, r.done, r.used, err)
		}
		t.Logf("kill after %v: the state held %d rounds", delay, before)
	}
}
