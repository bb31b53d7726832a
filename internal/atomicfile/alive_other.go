//go:build !unix

package atomicfile

import "os"

// alive reports whether a process with this id is running. Where
// os.FindProcess cannot tell (it always succeeds on some systems), every
// process counts as running and no temporary is judged stale.
func alive(pid int) bool {
	p, err := os.FindProcess(pid)
	if err != nil {
		return false
	}
	p.Release()
	return true
}
