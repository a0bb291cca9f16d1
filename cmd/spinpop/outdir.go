package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"syscall"

	"spinpop/internal/outset"
	"spinpop/pipeline"
)

// openOutDir opens the output set of a command writing into folder dir:
// the folder is locked against a second run, must be empty (or new)
// unless force, and everything is staged until publish (see
// internal/outset). The caller defers Close, which removes whatever was
// not published.
func openOutDir(dir string, force bool, stderr io.Writer) (*outset.Set, error) {
	if dir == "" {
		return nil, usageErrorf("--out DIR is required: name a folder for the outputs")
	}
	if fi, err := os.Stat(dir); err == nil && !fi.IsDir() {
		return nil, usageErrorf("--out %s is a file, not a folder; name a folder for the outputs", dir)
	}
	out, err := outset.Open(dir, outset.Options{Force: force})
	switch {
	case errors.Is(err, outset.ErrBusy):
		return nil, usageErrorf("output folder %s is in use by another spinpop run; wait for it to finish or choose another folder", dir)
	case errors.Is(err, outset.ErrNotEmpty):
		return nil, usageErrorf("output folder %s is not empty (%v); choose a new folder or pass --force to replace this tool's files in it", dir, errors.Unwrap(err))
	case err != nil:
		return nil, err
	}
	if out.Recovered {
		fmt.Fprintf(stderr, "note: %s held what an interrupted spinpop run left; it is removed\n", dir)
	}
	return out, nil
}

// signalContext is cancelled by Ctrl-C (SIGINT) or SIGTERM, so that a
// command stops, removes its staged outputs and exits, leaving nothing.
func signalContext() (context.Context, context.CancelFunc) {
	return signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
}

// interrupted is the error of a command stopped by a signal, once its
// staged outputs are gone.
func interrupted(dir string) error {
	return runFailuref("interrupted; nothing was written to %s", dir)
}

// publish makes the set's files visible, all at once, and lists them.
func publish(out *outset.Set) ([]string, error) {
	names := out.Names()
	return names, out.Commit()
}

// writeFileAtomic writes one file (not a folder of outputs) under a
// temporary name beside it and renames it into place, so a reader, a crash
// or an interruption never leaves a half-written file. A failure to write
// is an *outset.IOError (exit status 1); an error of write itself is
// returned as it is.
func writeFileAtomic(path string, write func(w io.Writer) error) (err error) {
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".partial-*")
	if err != nil {
		return &outset.IOError{Op: "writing", Path: path, Err: err}
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	ew := &errWriter{w: tmp}
	if err = write(ew); err != nil {
		if ew.err != nil && errors.Is(err, ew.err) {
			return &outset.IOError{Op: "writing", Path: path, Err: ew.err}
		}
		return err
	}
	for _, step := range []func() error{tmp.Sync, tmp.Close, func() error { return os.Chmod(tmp.Name(), 0o644) }, func() error { return os.Rename(tmp.Name(), path) }} {
		if err = step(); err != nil {
			return &outset.IOError{Op: "writing", Path: path, Err: err}
		}
	}
	return nil
}

// errWriter remembers its first write error, to tell it from the errors
// of the data being written.
type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) Write(p []byte) (int, error) {
	n, err := e.w.Write(p)
	if err != nil && e.err == nil {
		e.err = err
	}
	return n, err
}

// emptyOutcome handles a selection that kept no star: the command's JSON
// report says so (with the selection table), is published, and the error
// returned (exit status 2) names the step that emptied it.
func emptyOutcome(out *outset.Set, report string, head map[string]any, err error, stdout io.Writer, asJSON bool) error {
	var es *pipeline.EmptySelection
	if !errors.As(err, &es) {
		return err
	}
	rep := map[string]any{}
	for k, v := range head {
		rep[k] = v
	}
	r := es.Report()
	rep["outcome"], rep["message"], rep["emptied_at_step"], rep["counts"] = r.Outcome, r.Message, r.Step, r.Counts
	rep["outputs"] = append(out.Names(), report)
	if err := writeJSON(out, report, rep); err != nil {
		return err
	}
	if _, err := publish(out); err != nil {
		return err
	}
	if asJSON {
		printJSON(stdout, rep)
	}
	return inputError{fmt.Errorf("%w (wrote %s)", err, out.Final(report))}
}
