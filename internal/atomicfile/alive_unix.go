//go:build unix

package atomicfile

import (
	"errors"
	"syscall"
)

// alive reports whether a process with this id is running: signal 0 checks
// without sending anything. A process of another user answers EPERM and
// counts as running.
func alive(pid int) bool {
	return !errors.Is(syscall.Kill(pid, 0), syscall.ESRCH)
}
