package runner

import (
	"context"
	"errors"
	"syscall"

	"golang.org/x/sys/unix"
)

// Interrupted is the cause of a context cancelled by a signal: the command line cancels
// a command's context with context.WithCancelCause and an *Interrupted when SIGINT or
// SIGTERM arrives, and [Run] records the signal's name in its run.failed record.
type Interrupted struct {
	Signal syscall.Signal
}

func (e *Interrupted) Error() string { return "stopped by " + e.Name() }

// Name is the signal's name, e.g. "SIGINT".
func (e *Interrupted) Name() string {
	if n := unix.SignalName(e.Signal); n != "" {
		return n
	}
	return e.Signal.String()
}

// InterruptedBy returns the signal that cancelled ctx, or nil when ctx was not cancelled
// by a signal.
func InterruptedBy(ctx context.Context) *Interrupted {
	var in *Interrupted
	if errors.As(context.Cause(ctx), &in) {
		return in
	}
	return nil
}

// UnfinishedError is the error of a run that stopped after it created its working
// folder: Dir is that folder, named DIR.incomplete-XXXX, whose audit log ends with
// run.failed. Its text is the cause's.
type UnfinishedError struct {
	Dir string
	Err error
}

func (e *UnfinishedError) Error() string { return e.Err.Error() }
func (e *UnfinishedError) Unwrap() error { return e.Err }
