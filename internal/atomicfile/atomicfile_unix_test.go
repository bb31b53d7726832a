//go:build unix

package atomicfile

import (
	"bufio"
	"errors"
	"io"
	"io/fs"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
)

func writeString(path, s string) error {
	return Write(path, func(w io.Writer) error { _, err := io.WriteString(w, s); return err })
}

// A named pipe, a socket, a directory, a device and symbolic links to them
// or to nothing are refused, and left as they were.
func TestWriteRefusesNonRegular(t *testing.T) {
	dir := t.TempDir()
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	sub := filepath.Join(dir, "sub")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	regular := filepath.Join(dir, "regular")
	if err := os.WriteFile(regular, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	// A file opened by this process: /proc/self/fd/N leads to it.
	open, err := os.Open(regular)
	if err != nil {
		t.Fatal(err)
	}
	defer open.Close()
	procFd := "/proc/self/fd/" + strconv.Itoa(int(open.Fd()))
	links := map[string]string{"to-null": "/dev/null", "to-fifo": fifo, "to-nothing": filepath.Join(dir, "absent"), "to-fd": procFd}
	for name, to := range links {
		if err := os.Symlink(to, filepath.Join(dir, name)); err != nil {
			t.Fatal(err)
		}
	}
	cases := []struct{ path, kind string }{
		{fifo, "named pipe"},
		{sub, "directory"},
		{"/dev/null", "character device"},
		{filepath.Join(dir, "to-null"), "symbolic link to a character device"},
		{filepath.Join(dir, "to-fifo"), "symbolic link to a named pipe"},
		{filepath.Join(dir, "to-nothing"), "symbolic link to nothing"},
		{filepath.Join(dir, "to-fd"), "symbolic link through " + procFd + " (a name for a process's open file)"},
		{procFd, "symbolic link through " + procFd + " (a name for a process's open file)"},
	}
	for _, c := range cases {
		before, err := os.Lstat(c.path)
		if err != nil {
			t.Fatal(err)
		}
		err = writeString(c.path, "data\n")
		var nr *NotRegularError
		if !errors.Is(err, ErrNotRegular) || !errors.As(err, &nr) || nr.Kind != c.kind {
			t.Errorf("Write(%s) error = %v, want a NotRegularError of kind %q", c.path, err, c.kind)
		}
		if err != nil && !strings.Contains(err.Error(), "standard output") {
			t.Errorf("Write(%s) error %q does not say how to write to standard output", c.path, err)
		}
		after, err := os.Lstat(c.path)
		if err != nil || after.Mode() != before.Mode() {
			t.Errorf("%s changed from %v to %v (%v)", c.path, before.Mode(), after.Mode(), err)
		}
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 3+len(links) {
		t.Errorf("directory holds %d entries after refused writes, want %d", len(entries), 3+len(links))
	}
}

// A symbolic link to a regular file: the file is replaced, the link stays.
func TestWriteFollowsLinkToRegular(t *testing.T) {
	dir := t.TempDir()
	real := filepath.Join(dir, "real.txt")
	link := filepath.Join(dir, "link.txt")
	if err := os.WriteFile(real, []byte("old\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	if err := os.Symlink("real.txt", link); err != nil {
		t.Fatal(err)
	}
	if err := writeString(link, "new\n"); err != nil {
		t.Fatal(err)
	}
	if li, err := os.Lstat(link); err != nil || li.Mode()&fs.ModeSymlink == 0 {
		t.Errorf("link replaced: %v, %v", li.Mode(), err)
	}
	got, _ := os.ReadFile(real)
	if string(got) != "new\n" {
		t.Errorf("link target holds %q, want %q", got, "new\n")
	}
	if fi, _ := os.Stat(real); fi.Mode().Perm() != 0o600 {
		t.Errorf("link target mode %v, want 0600 kept", fi.Mode().Perm())
	}
}

// A replaced file keeps its permission bits; a new file gets 0666 less the
// umask, the mode open(2) gives to a file created with mode 0666 (POSIX).
func TestWriteModes(t *testing.T) {
	dir := t.TempDir()
	for _, perm := range []fs.FileMode{0o600, 0o640, 0o604} {
		path := filepath.Join(dir, "kept"+strconv.Itoa(int(perm)))
		if err := os.WriteFile(path, []byte("old"), 0); err != nil {
			t.Fatal(err)
		}
		if err := os.Chmod(path, perm); err != nil {
			t.Fatal(err)
		}
		if err := writeString(path, "new"); err != nil {
			t.Fatal(err)
		}
		if fi, _ := os.Stat(path); fi.Mode().Perm() != perm {
			t.Errorf("replaced file mode %v, want %v", fi.Mode().Perm(), perm)
		}
	}
	for _, umask := range []int{0o022, 0o077, 0o027} {
		old := syscall.Umask(umask)
		path := filepath.Join(dir, "new"+strconv.Itoa(umask))
		err := writeString(path, "new")
		syscall.Umask(old)
		if err != nil {
			t.Fatal(err)
		}
		want := fs.FileMode(0o666 &^ umask)
		if fi, _ := os.Stat(path); fi.Mode().Perm() != want {
			t.Errorf("umask %03o: new file mode %v, want %v", umask, fi.Mode().Perm(), want)
		}
	}
}

// childEnv names the target a re-executed test binary writes, blocking
// mid-write until it is killed.
const childEnv = "ATOMICFILE_TEST_CHILD_TARGET"

// TestChildWriter is the child's side: it is skipped unless run by
// startChild.
func TestChildWriter(t *testing.T) {
	target := os.Getenv(childEnv)
	if target == "" {
		t.Skip("run as a child process by the tests that kill it")
	}
	Write(target, func(w io.Writer) error {
		w.Write(make([]byte, 1<<20))
		w.(*bufio.Writer).Flush()
		os.Stdout.WriteString("ready\n")
		io.Copy(io.Discard, os.Stdin) // blocks until killed
		return errors.New("stdin closed")
	})
}

// startChild runs the test binary writing target, and returns once the
// child is mid-write.
func startChild(t *testing.T, target string) *exec.Cmd {
	cmd := exec.Command(os.Args[0], "-test.run=^TestChildWriter$")
	cmd.Env = append(os.Environ(), childEnv+"="+target)
	stdin, err := cmd.StdinPipe()
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { stdin.Close() })
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	line, err := bufio.NewReader(stdout).ReadString('\n')
	if line != "ready\n" {
		cmd.Process.Kill()
		cmd.Wait()
		t.Fatalf("child said %q (%v), want ready", line, err)
	}
	return cmd
}

// A writer killed by SIGKILL leaves its temporary file; the next write to
// the same target removes it. A temporary of a live process and files of
// other names are kept.
func TestStaleTempRemoved(t *testing.T) {
	dir := t.TempDir()
	target := filepath.Join(dir, "out.csv")
	cmd := startChild(t, target)
	cmd.Process.Signal(syscall.SIGKILL)
	cmd.Wait()
	stale, _ := filepath.Glob(filepath.Join(dir, ".out.csv.tmp-*"))
	if len(stale) != 1 || !strings.Contains(stale[0], "-"+strconv.Itoa(cmd.Process.Pid)+"-") {
		t.Fatalf("after SIGKILL the directory holds %v, want one temporary carrying pid %d", stale, cmd.Process.Pid)
	}
	// The parent of this test process is running: its temporary stays.
	livePid := filepath.Join(dir, ".out.csv.tmp-"+hostTag+"-"+strconv.Itoa(os.Getppid())+"-1")
	otherHost := filepath.Join(dir, ".out.csv.tmp-00000000-"+strconv.Itoa(cmd.Process.Pid)+"-1")
	if otherHost == stale[0] {
		otherHost = filepath.Join(dir, ".out.csv.tmp-ffffffff-"+strconv.Itoa(cmd.Process.Pid)+"-1")
	}
	foreign := filepath.Join(dir, ".out.csv.tmp123")
	for _, p := range []string{livePid, otherHost, foreign} {
		if err := os.WriteFile(p, nil, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := writeString(target, "done\n"); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(stale[0]); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("stale temporary %s not removed by the next write (%v)", stale[0], err)
	}
	for _, p := range []string{livePid, otherHost, foreign} {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("%s removed, want kept: %v", p, err)
		}
	}
}

// Interrupt removes the temporary of a write in progress and leaves the
// target as it was.
func TestInterrupt(t *testing.T) {
	defer func() { live.Lock(); live.interrupted = false; live.Unlock() }()
	dir := t.TempDir()
	target := filepath.Join(dir, "out.txt")
	if err := os.WriteFile(target, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	removed := 0
	err := Write(target, func(w io.Writer) error {
		io.WriteString(w, "partial")
		removed = Interrupt()
		return nil
	})
	if !errors.Is(err, ErrInterrupted) || removed != 1 {
		t.Errorf("Write after Interrupt: error %v, %d temporaries removed; want ErrInterrupted, 1", err, removed)
	}
	entries, _ := os.ReadDir(dir)
	if got, _ := os.ReadFile(target); len(entries) != 1 || string(got) != "old" {
		t.Errorf("after Interrupt: %d entries, target %q; want 1, \"old\"", len(entries), got)
	}
	if err := writeString(target, "new"); !errors.Is(err, ErrInterrupted) {
		t.Errorf("Write after Interrupt: %v, want ErrInterrupted", err)
	}
}
