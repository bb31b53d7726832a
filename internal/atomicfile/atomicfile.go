// Package atomicfile writes files atomically: the content goes to a temporary
// file in the same directory, which is synced and then renamed over the
// target, so a reader never sees a half-written file and a failed write
// leaves no partial output behind.
//
// Targets. Only regular files are written. A target that exists and is a
// device, a named pipe, a socket or a directory is refused with a
// [*NotRegularError] (matching [ErrNotRegular]): renaming over it would
// replace, say, /dev/null with a regular file when run as root. A symbolic
// link to a regular file is followed: the file it points to is replaced
// (the temporary file is made beside it) and the link stays. A link to
// anything else, or to nothing, is refused, and so is a link that leads
// through /dev/ or /proc/ (such as /dev/stdout or /proc/self/fd/1, which
// name what a process has open) even when it ends at a regular file. The check is made before the
// write and again just before the rename; a target swapped in between by
// another process is not detected.
//
// Modes. A replaced file keeps its permission bits (0600 stays 0600). A new
// file gets 0666 less the process's umask, as a file made by open(2) does:
// the temporary file is created with that request and the operating system
// applies the umask. Owner and group are those of the writing process. A
// replaced file with other hard links is replaced by a new file: its other
// names keep the old content.
//
// Temporary names. A temporary file is named
// ".NAME.tmp-HOST-PID-RANDOM" beside its target, where HOST is a short hash of
// the host name and PID the writer's process id. [Interrupt] removes every
// temporary file the process is still writing (for a signal handler about to
// exit). A process killed outright (SIGKILL, a power cut) cannot clean up and
// leaves its temporary file; the next [Write] to the same target (or
// [WriteDir] to the same directory) made on the same host removes every such
// temporary whose process is no longer running. Temporary files of a live
// process, or made on another host (say on a shared network disk), are left
// alone.
package atomicfile

import (
	"bufio"
	"errors"
	"fmt"
	"hash/fnv"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
)

// ErrNotRegular is matched (with errors.Is) by the error for a target that
// is not a regular file.
var ErrNotRegular = errors.New("not a regular file")

// ErrInterrupted is returned by a write begun or finished after [Interrupt].
var ErrInterrupted = errors.New("atomicfile: interrupted: temporary files removed")

// NotRegularError reports a target that exists and is not a regular file
// (or a symbolic link to one).
type NotRegularError struct {
	Path string // the target as given
	Kind string // what it is: "character device", "named pipe", ...
}

func (e *NotRegularError) Error() string {
	return fmt.Sprintf("%s is a %s, not a regular file: refusing to replace it (to see the output, write to standard output instead of naming it)", e.Path, e.Kind)
}

// Is makes errors.Is(err, ErrNotRegular) true.
func (e *NotRegularError) Is(target error) bool { return target == ErrNotRegular }

// kind names the file type of a mode that is not regular.
func kind(m fs.FileMode) string {
	switch {
	case m&fs.ModeCharDevice != 0:
		return "character device"
	case m&fs.ModeDevice != 0:
		return "block device"
	case m&fs.ModeNamedPipe != 0:
		return "named pipe"
	case m&fs.ModeSocket != 0:
		return "socket"
	case m.IsDir():
		return "directory"
	}
	return "special file"
}

// resolve returns the file to replace for path: path itself, or the file a
// symbolic link leads to. exists tells whether it exists, and mode is its
// permission bits then.
func resolve(path string) (real string, mode fs.FileMode, exists bool, err error) {
	li, err := os.Lstat(path)
	if errors.Is(err, fs.ErrNotExist) {
		return path, 0, false, nil
	}
	if err != nil {
		return "", 0, false, err
	}
	if li.Mode().IsRegular() {
		return path, li.Mode().Perm(), true, nil
	}
	if li.Mode()&fs.ModeSymlink == 0 {
		return "", 0, false, &NotRegularError{Path: path, Kind: kind(li.Mode())}
	}
	fi, err := os.Stat(path)
	if errors.Is(err, fs.ErrNotExist) {
		return "", 0, false, &NotRegularError{Path: path, Kind: "symbolic link to nothing"}
	}
	if err != nil {
		return "", 0, false, err
	}
	if !fi.Mode().IsRegular() {
		return "", 0, false, &NotRegularError{Path: path, Kind: "symbolic link to a " + kind(fi.Mode())}
	}
	if hop := specialHop(path); hop != "" {
		return "", 0, false, &NotRegularError{Path: path, Kind: "symbolic link through " + hop + " (a name for a process's open file)"}
	}
	real, err = filepath.EvalSymlinks(path)
	if err != nil {
		return "", 0, false, err
	}
	return real, fi.Mode().Perm(), true, nil
}

// Check returns the error [Write] would give for path's target before
// writing anything: a [*NotRegularError] for a device, pipe, socket,
// directory or a link to one of them. A program can call it before a long
// computation whose result goes to path.
func Check(path string) error {
	_, _, _, err := resolve(path)
	return err
}

// specialHop returns path, if it is under /dev/ or /proc/, or the first link
// target under them on the chain of symbolic links from path, or "". Such a
// link (/dev/stdout, /proc/self/fd/1) names whatever the process has open,
// possibly a regular file that the caller did not mean to replace.
func specialHop(path string) string {
	p := path
	if a, err := filepath.Abs(p); err == nil && (strings.HasPrefix(a, "/dev/") || strings.HasPrefix(a, "/proc/")) {
		return a
	}
	for range 40 {
		t, err := os.Readlink(p)
		if err != nil {
			return ""
		}
		if !filepath.IsAbs(t) {
			t = filepath.Join(filepath.Dir(p), t)
		}
		t = filepath.Clean(t)
		if strings.HasPrefix(t, "/dev/") || strings.HasPrefix(t, "/proc/") {
			return t
		}
		p = t
	}
	return ""
}

// Write creates or replaces the file at path with what write produces. If
// write returns an error, or any step fails, the temporary file is removed
// and the target is left as it was. See the package documentation for the
// targets it refuses, the modes it gives and its temporary names.
func Write(path string, write func(w io.Writer) error) (err error) {
	real, mode, exists, err := resolve(path)
	if err != nil {
		return err
	}
	dir, base := filepath.Split(real)
	if dir == "" {
		dir = "."
	}
	removeStale(dir, base)
	f, tmp, err := createTemp(dir, base)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
			untrack(tmp)
		}
	}()
	bw := bufio.NewWriter(f)
	if err = write(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if exists {
		if err = f.Chmod(mode); err != nil {
			return err
		}
	}
	if err = f.Sync(); err != nil {
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	// Check again: the target may have changed while write ran.
	if again, _, _, err := resolve(path); err != nil {
		return err
	} else if again != real {
		return fmt.Errorf("%s: changed to a link to %s during the write", path, again)
	}
	return commit(tmp, real)
}

// WriteDir creates the directory dir complete or not at all: fill writes
// into a new temporary directory beside dir (named as temporary files are,
// see the package documentation), which is then renamed to dir. An existing
// empty directory at dir is replaced; anything else there is refused. If
// fill fails, the temporary directory is removed with everything in it. A
// new directory gets 0777 less the umask.
func WriteDir(dir string, fill func(tmp string) error) (err error) {
	dir = filepath.Clean(dir)
	if li, err := os.Lstat(dir); err == nil {
		if !li.IsDir() {
			return fmt.Errorf("%s exists and is not a directory", dir)
		}
		if entries, err := os.ReadDir(dir); err != nil {
			return err
		} else if len(entries) > 0 {
			return fmt.Errorf("directory %s is not empty", dir)
		}
	} else if !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	parent, base := filepath.Split(dir)
	if parent == "" {
		parent = "."
	}
	removeStale(parent, base)
	tmp, err := mkdirTemp(parent, base)
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			os.RemoveAll(tmp)
			untrack(tmp)
		}
	}()
	if err = fill(tmp); err != nil {
		return err
	}
	// An empty existing directory is replaced.
	if err = os.Remove(dir); err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	return commit(tmp, dir)
}

// live holds the temporary files and directories of writes in progress.
var live struct {
	sync.Mutex
	paths       map[string]bool
	interrupted bool
}

func track(p string) error {
	live.Lock()
	defer live.Unlock()
	if live.interrupted {
		return ErrInterrupted
	}
	if live.paths == nil {
		live.paths = make(map[string]bool)
	}
	live.paths[p] = true
	return nil
}

func untrack(p string) {
	live.Lock()
	delete(live.paths, p)
	live.Unlock()
}

// commit renames tmp to target unless [Interrupt] has run, in which case
// tmp is already gone.
func commit(tmp, target string) error {
	live.Lock()
	defer live.Unlock()
	if live.interrupted {
		return ErrInterrupted
	}
	delete(live.paths, tmp)
	if err := os.Rename(tmp, target); err != nil {
		os.RemoveAll(tmp)
		return err
	}
	return nil
}

// Interrupt removes every temporary file and directory of the writes in
// progress and makes every later write fail with [ErrInterrupted]; the
// targets are left as they were (or as a write that finished before made
// them). It is for a signal handler that is about to end the process, and
// returns the number of temporaries removed.
func Interrupt() int {
	live.Lock()
	defer live.Unlock()
	live.interrupted = true
	n := 0
	for p := range live.paths {
		if os.RemoveAll(p) == nil {
			n++
		}
		delete(live.paths, p)
	}
	return n
}

// hostTag is a short tag of the host name in temporary names, so that a
// process on another host sharing the directory is never judged dead by
// its process id.
var hostTag = func() string {
	name, _ := os.Hostname()
	h := fnv.New32a()
	io.WriteString(h, name)
	return fmt.Sprintf("%08x", h.Sum32())
}()

// tempPrefix is the start of every temporary name for a target named base.
func tempPrefix(base string) string { return "." + base + ".tmp-" }

func tempName(dir, base string) string {
	return filepath.Join(dir, fmt.Sprintf("%s%s-%d-%d", tempPrefix(base), hostTag, os.Getpid(), rand.Uint32()))
}

// createTemp creates a new temporary file for base in dir, requesting mode
// 0666 so that the umask applies.
func createTemp(dir, base string) (*os.File, string, error) {
	for try := 0; ; try++ {
		name := tempName(dir, base)
		if err := track(name); err != nil {
			return nil, "", err
		}
		f, err := os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o666)
		if err == nil {
			return f, name, nil
		}
		untrack(name)
		if !errors.Is(err, fs.ErrExist) || try == 100 {
			return nil, "", err
		}
	}
}

// mkdirTemp creates a new temporary directory for base in dir with mode
// 0777 less the umask.
func mkdirTemp(dir, base string) (string, error) {
	for try := 0; ; try++ {
		name := tempName(dir, base)
		if err := track(name); err != nil {
			return "", err
		}
		err := os.Mkdir(name, 0o777)
		if err == nil {
			return name, nil
		}
		untrack(name)
		if !errors.Is(err, fs.ErrExist) || try == 100 {
			return "", err
		}
	}
}

// removeStale removes the temporary files and directories for base in dir
// left by processes of this host that are no longer running. Errors are
// ignored: a stale temporary that cannot be removed does no harm.
func removeStale(dir, base string) {
	d, err := os.Open(dir)
	if err != nil {
		return
	}
	names, _ := d.Readdirnames(-1)
	d.Close()
	prefix := tempPrefix(base) + hostTag + "-"
	for _, name := range names {
		rest, ok := strings.CutPrefix(name, prefix)
		if !ok {
			continue
		}
		pidText, random, ok := strings.Cut(rest, "-")
		if !ok || strings.Contains(random, "-") {
			continue
		}
		if _, err := strconv.ParseUint(random, 10, 32); err != nil {
			continue
		}
		pid, err := strconv.Atoi(pidText)
		if err != nil || pid <= 0 || pid == os.Getpid() || alive(pid) {
			continue
		}
		os.RemoveAll(filepath.Join(dir, name))
	}
}
