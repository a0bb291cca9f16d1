package pipeline

import (
	"errors"
	"runtime"
)

// InputError marks an error caused by what the user gave (a scenario, a
// catalog, an option), as opposed to a failure of the run itself. Programs
// tell their users to fix their input when errors.As finds one.
type InputError struct{ Err error }

func (e InputError) Error() string { return e.Err.Error() }
func (e InputError) Unwrap() error { return e.Err }

// IsInputError reports whether err, or an error it wraps, is an InputError.
func IsInputError(err error) bool {
	var ie InputError
	return errors.As(err, &ie)
}

func defaultWorkers() int { return runtime.GOMAXPROCS(0) }
