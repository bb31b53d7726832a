//go:build unix

package main

import (
	"bufio"
	"errors"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"github.com/shotplan/shotplan/internal/atomicfile"
)

// signalChildEnv tells a re-executed test binary to write the file or
// directory it names and to block mid-write until a signal ends it.
const signalChildEnv = "SHOTPLAN_TEST_SIGNAL_CHILD"

// TestSignalChild is the child's side of TestSignalsRemoveTemps: it installs
// the command's signal handling, starts a write of a file (a name ending in
// .csv) or of a directory (any other name), reports "ready" on standard
// output once its temporary holds data, and blocks.
func TestSignalChild(t *testing.T) {
	target := os.Getenv(signalChildEnv)
	if target == "" {
		t.Skip("run as a child process by TestSignalsRemoveTemps")
	}
	handleSignals(os.Stderr)
	block := func() error {
		os.Stdout.WriteString("ready\n")
		io.Copy(io.Discard, os.Stdin) // until the signal ends the process
		return errors.New("stdin closed")
	}
	if strings.HasSuffix(target, ".csv") {
		atomicfile.Write(target, func(w io.Writer) error {
			w.Write(make([]byte, 1<<20))
			w.(*bufio.Writer).Flush()
			return block()
		})
		return
	}
	atomicfile.WriteDir(target, func(tmp string) error {
		for _, name := range []string{"setting_0.qasm", "setting_1.qasm"} {
			if err := os.WriteFile(filepath.Join(tmp, name), []byte("OPENQASM 3.0;\n"), 0o644); err != nil {
				return err
			}
		}
		return block()
	})
}

// A command stopped by SIGINT or SIGTERM in the middle of writing a file or
// a directory leaves nothing behind and ends with status 128 + the signal's
// number (common practice of shells: 130 for SIGINT, 143 for SIGTERM).
func TestSignalsRemoveTemps(t *testing.T) {
	for _, c := range []struct {
		sig    syscall.Signal
		target string
		code   int
	}{
		{syscall.SIGTERM, "rec.csv", 143},
		{syscall.SIGINT, "rec.csv", 130},
		{syscall.SIGTERM, "programs", 143},
	} {
		dir := t.TempDir()
		cmd := exec.Command(os.Args[0], "-test.run=^TestSignalChild$")
		cmd.Env = append(os.Environ(), signalChildEnv+"="+filepath.Join(dir, c.target))
		stdin, err := cmd.StdinPipe()
		if err != nil {
			t.Fatal(err)
		}
		stdout, err := cmd.StdoutPipe()
		if err != nil {
			t.Fatal(err)
		}
		var stderr strings.Builder
		cmd.Stderr = &stderr
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		line, _ := bufio.NewReader(stdout).ReadString('\n')
		if line != "ready\n" {
			cmd.Process.Kill()
			cmd.Wait()
			t.Fatalf("child said %q, want ready; stderr %q", line, stderr.String())
		}
		if entries, _ := os.ReadDir(dir); len(entries) != 1 {
			t.Fatalf("mid-write the directory holds %d entries, want the one temporary", len(entries))
		}
		cmd.Process.Signal(c.sig)
		cmd.Wait()
		stdin.Close()
		if got := cmd.ProcessState.ExitCode(); got != c.code {
			t.Errorf("%v writing %s: exit status %d, want %d; stderr %q", c.sig, c.target, got, c.code, stderr.String())
		}
		entries, _ := os.ReadDir(dir)
		for _, e := range entries {
			t.Errorf("%v writing %s left %s behind", c.sig, c.target, e.Name())
		}
		if !strings.Contains(stderr.String(), "1 temporary file removed") {
			t.Errorf("%v: stderr %q does not report the removed temporary", c.sig, stderr.String())
		}
	}
}

// A command killed by SIGKILL mid-write leaves its temporary file; the next
// run that writes the same output removes it.
func TestStaleTempRemovedByNextRun(t *testing.T) {
	dir := t.TempDir()
	target := filepath.Join(dir, "rec.csv")
	cmd := exec.Command(os.Args[0], "-test.run=^TestSignalChild$")
	cmd.Env = append(os.Environ(), signalChildEnv+"="+target)
	stdin, err := cmd.StdinPipe()
	if err != nil {
		t.Fatal(err)
	}
	defer stdin.Close()
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	if line, _ := bufio.NewReader(stdout).ReadString('\n'); line != "ready\n" {
		cmd.Process.Kill()
		cmd.Wait()
		t.Fatalf("child said %q, want ready", line)
	}
	cmd.Process.Signal(syscall.SIGKILL)
	cmd.Wait()
	if entries, _ := os.ReadDir(dir); len(entries) != 1 {
		t.Fatalf("after SIGKILL the directory holds %d entries, want the temporary", len(entries))
	}
	ham := filepath.Join(t.TempDir(), "h.txt")
	if err := os.WriteFile(ham, []byte("0.5 ZZ\n0.25 XX\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errs strings.Builder
	if code := run([]string{"plan", "-ham", ham, "-shots", "10", "-o", target}, &out, &errs); code != 0 {
		t.Fatalf("plan: exit %d, stderr %q", code, errs.String())
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 || entries[0].Name() != "rec.csv" {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Errorf("after the next run the directory holds %v, want [rec.csv]", names)
	}
}
