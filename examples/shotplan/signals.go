package main

import (
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"

	"github.com/shotplan/shotplan/internal/atomicfile"
)

// handleSignals makes an interrupt (SIGINT, Ctrl-C) or a termination
// request (SIGTERM) remove the temporary files of the writes in progress,
// leaving every output as it was, and end the process with the conventional
// status 128 + the signal's number (130, 143). A process killed by SIGKILL
// cannot do this; its temporary files are removed by the next write to the
// same output (see internal/atomicfile).
func handleSignals(stderr io.Writer) {
	c := make(chan os.Signal, 1)
	signal.Notify(c, os.Interrupt, syscall.SIGTERM)
	go func() {
		sig := <-c
		n := atomicfile.Interrupt()
		fmt.Fprintf(stderr, "shotplan: stopped by %v; %s removed, outputs left as they were\n", sig, plural(n, "temporary file"))
		code := 1
		if s, ok := sig.(syscall.Signal); ok {
			code = 128 + int(s)
		}
		os.Exit(code)
	}()
}
