//go:build unix

package main

import (
	"os"
	"path/filepath"
	"syscall"
)

// lockDir takes an exclusive lock on the folder that holds path, waiting for
// it, and returns the function that releases it. rounds add holds it from
// reading the state to replacing it, so two adds on one run cannot both
// read the old state and lose one round. The lock is on the folder (an
// flock of its descriptor), not on a file: the state is replaced by a
// rename, and no lock file is left behind; the kernel releases the lock when
// the process ends, however it ends.
func lockDir(path string) (func(), error) {
	d, err := os.Open(filepath.Dir(path))
	if err != nil {
		return nil, err
	}
	for {
		err = syscall.Flock(int(d.Fd()), syscall.LOCK_EX)
		if err != syscall.EINTR {
			break
		}
	}
	if err != nil {
		d.Close()
		return nil, err
	}
	return func() {
		syscall.Flock(int(d.Fd()), syscall.LOCK_UN)
		d.Close()
	}, nil
}
