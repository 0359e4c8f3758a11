package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
	"time"

	"github.com/geored/geored/io/outset"
)

// Exit statuses of a run stopped by a signal: 128 + the signal's number,
// what a shell reports for a process the signal killed, so a scheduler
// or a script reads them as it would read a kill, while geored has
// cleaned up and said so.
const (
	exitInterrupted = 128 + int(syscall.SIGINT)  // 130
	exitTerminated  = 128 + int(syscall.SIGTERM) // 143
)

// A signalStop is the cause of a run's context ended by a signal.
type signalStop struct{ sig syscall.Signal }

func (s signalStop) Error() string {
	if s.sig == syscall.SIGINT {
		return "stopped by SIGINT"
	}
	return "stopped by SIGTERM"
}

func (s signalStop) status() int { return 128 + int(s.sig) }

// stopOnSignals returns a context that SIGINT or SIGTERM ends (its cause
// a signalStop), and the function that stops listening. After the first
// signal geored no longer catches them: a second one kills it at once,
// and the next run removes what it left.
func stopOnSignals() (context.Context, func()) {
	ctx, cancel := context.WithCancelCause(context.Background())
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, syscall.SIGINT, syscall.SIGTERM)
	done := make(chan struct{})
	go func() {
		select {
		case s := <-ch:
			signal.Stop(ch)
			cancel(signalStop{s.(syscall.Signal)})
		case <-done:
		}
	}()
	return ctx, func() { signal.Stop(ch); close(done); cancel(nil) }
}

// stopped reports a run stopped by a signal: one line on stderr and the
// signal's exit status; ok is false for any other error.
func stopped(stderr io.Writer, cmd, out string, err error) (int, bool) {
	var s signalStop
	if !errors.As(err, &s) {
		return 0, false
	}
	fmt.Fprintf(stderr, "geored %s: %v: this run's temporary files are removed and %s is as it was before it\n", cmd, s, out)
	return s.status(), true
}

// Test hooks, read only here. GEORED_TEST_STOP_AT=STAGE makes geored kill
// itself with SIGKILL when it reaches STAGE; GEORED_TEST_PAUSE_AT=STAGE
// makes it print "geored test hook: paused at STAGE" on stderr and wait
// there until a signal stops the run (at most a minute). The stages are
// "row" (the first row written), then the output set's (outset.Options.Hook):
// "written:NAME", "complete", "swapped". DEVELOPERS.md lists them.
const (
	envStopAt  = "GEORED_TEST_STOP_AT"
	envPauseAt = "GEORED_TEST_PAUSE_AT"
)

// testHook is the hook the environment asks for, nil if none.
func testHook(ctx context.Context, stderr io.Writer) func(stage string) {
	stop, pause := os.Getenv(envStopAt), os.Getenv(envPauseAt)
	if stop == "" && pause == "" {
		return nil
	}
	return func(stage string) {
		switch stage {
		case stop:
			syscall.Kill(os.Getpid(), syscall.SIGKILL)
			select {} // SIGKILL is not caught: this never runs on
		case pause:
			fmt.Fprintf(stderr, "geored test hook: paused at %s\n", stage)
			select {
			case <-ctx.Done():
			case <-time.After(time.Minute):
			}
		}
	}
}

// setOptions are the output set's options for a command's run.
func setOptions(ctx context.Context, stderr io.Writer, keep []outset.Keep, wait bool) outset.Options {
	return outset.Options{Keep: keep, Earlier: reduceFiles, Wait: wait, Log: stderr, Hook: testHook(ctx, stderr)}
}
