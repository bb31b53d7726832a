package main

import (
	"io"
	"os"
	"time"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"

	"github.com/shotplan/shotplan/allocate"
)

// progressDelay is how long a step runs before it shows a progress bar.
const progressDelay = 2 * time.Second

// terminal returns w if it is a terminal, otherwise nil: progress bars are
// for people watching, not for logs or pipes.
func terminal(w io.Writer) io.Writer {
	if f, ok := w.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		return w
	}
	return nil
}

// planProgress returns an allocate progress callback that shows a bar of
// planned shots on standard error once the run has taken progressDelay,
// when standard error is a terminal; and a function that clears the bar at
// the end. Both are no-ops otherwise.
func (e *env) planProgress(desc string) (func(allocate.Progress), func()) {
	w := terminal(e.stderr)
	if w == nil {
		return nil, func() {}
	}
	var bar *progressbar.ProgressBar
	report := func(p allocate.Progress) {
		if bar == nil {
			if p.Elapsed < progressDelay {
				return
			}
			bar = progressbar.NewOptions64(int64(p.Budget),
				progressbar.OptionSetWriter(w),
				progressbar.OptionSetDescription(desc),
				progressbar.OptionShowCount(),
				progressbar.OptionSetPredictTime(true),
				progressbar.OptionClearOnFinish())
		}
		bar.Set64(int64(p.Shots))
	}
	done := func() {
		if bar != nil && !bar.IsFinished() {
			bar.Finish()
		}
	}
	return report, done
}

// busy shows a spinner with the elapsed time on standard error while a step
// that gives no progress reports runs (the exact ground state), once it has
// taken progressDelay, when standard error is a terminal. The returned
// function stops and clears it.
func (e *env) busy(desc string) (stop func()) {
	w := terminal(e.stderr)
	if w == nil {
		return func() {}
	}
	quit := make(chan struct{})
	done := make(chan struct{})
	go func() {
		defer close(done)
		delay := time.NewTimer(progressDelay)
		defer delay.Stop()
		select {
		case <-quit:
			return
		case <-delay.C:
		}
		bar := progressbar.NewOptions(-1,
			progressbar.OptionSetWriter(w),
			progressbar.OptionSetDescription(desc),
			progressbar.OptionSpinnerType(14),
			progressbar.OptionSetElapsedTime(true),
			progressbar.OptionClearOnFinish())
		tick := time.NewTicker(200 * time.Millisecond)
		defer tick.Stop()
		for {
			select {
			case <-quit:
				bar.Finish()
				return
			case <-tick.C:
				bar.Add(1)
			}
		}
	}()
	return func() {
		close(quit)
		<-done
	}
}
