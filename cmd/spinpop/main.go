// Command spinpop builds a synthetic Galactic population of rotating stars
// from a scenario file, observes it through an invented survey's selection,
// and writes the catalog, a run manifest and plots.
//
// Usage:
//
//	spinpop check SCENARIO
//	spinpop simulate SCENARIO --out DIR [--seed N] [--json] [--force]
//	spinpop gyrochrones SCENARIO [--ages-gyr 0.3,0.6,1,2,4] [--csv]
//	spinpop laws SCENARIO --out DIR
//	spinpop mock SCENARIO --out FILE --stars N
//	spinpop sequence SCENARIO [--json]
//	spinpop demo --out DIR
//
// Exit status: 0 on success; 2 for bad input (scenario, flags, data, an
// output folder that is not empty or is in use, a selection that keeps no
// star); 1 when the run itself fails (reading or writing files, a full
// disk, an interruption, an internal error — a panic is caught and
// reported as one).
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"

	"spinpop/internal/outset"
	"spinpop/internal/workerpanic"
	"spinpop/pipeline"
)

// version is the tool's version, recorded in every manifest.
const version = pipeline.Version

// usageError marks errors caused by what the user gave us: exit status 2.
type usageError struct{ msg string }

func (e usageError) Error() string { return e.msg }

func usageErrorf(format string, args ...any) error {
	return usageError{fmt.Sprintf(format, args...)}
}

type command struct {
	name    string
	summary string
	run     func(args []string, stdout, stderr io.Writer) error
}

func commands() []command {
	return []command{
		{"check", "validate a scenario; print its resolved form and hash", runCheck},
		{"simulate", "make and observe a synthetic population; write catalog, manifest, plots", runSimulate},
		{"gyrochrones", "tabulate period against color and mass at chosen ages for the scenario's spin-down law", runGyrochrones},
		{"mock", "draw a mock observed catalog of N stars from a scenario", runMock},
		{"laws", "the same population under each spin-down law, side by side", runLaws},
		{"compare", "score a scenario against its observed catalog: likelihood, residuals, marginal tests", runCompare},
		{"test-burst", "does the catalog demand a burst? likelihood ratio, bootstrap, evidence, height check", runTestBurst},
		{"test-alternatives", "which explanation does the catalog prefer? burst, stalled spin-down, both, neither — each fitted, bootstrap in both directions", runTestAlternatives},
		{"sequence", "where the catalog's main sequence lies against the model's relation table: the shift to fit it with", runSequence},
		{"heights", "young fraction against height above the plane, data against each hypothesis", runHeights},
		{"inject", "injection–recovery: how often the burst test finds bursts of each age and size in a catalog like yours", runInject},
		{"posterior", "posterior of the burst model's free parameters: corner plot, star-formation history band, chain", runPosterior},
		{"sweep", "one scenario over a grid of choices, here or on a Slurm cluster: merged table, plots, systematics", runSweep},
		{"demo", "the whole job on the built-in example scenario", runDemo},
		{"examples", "list the built-in example scenarios, or print one", runExamples},
	}
}

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

func run(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 || args[0] == "-h" || args[0] == "--help" || args[0] == "help" {
		printUsage(stdout)
		if len(args) == 0 {
			return 2
		}
		return 0
	}
	if args[0] == "--version" || args[0] == "version" {
		fmt.Fprintln(stdout, "spinpop", version)
		return 0
	}
	for _, c := range commands() {
		if c.name == args[0] {
			return runCommand(c, args[1:], stdout, stderr)
		}
	}
	fmt.Fprintf(stderr, "spinpop: unknown command %q\n\n", args[0])
	printUsage(stderr)
	return 2
}

// runCommand runs one command and returns its exit status.
func runCommand(c command, args []string, stdout, stderr io.Writer) (code int) {
	// A panic is a bug of ours, never the user's input: it is reported as
	// an internal error with what a bug report needs, and exits 1. (Panics
	// on worker goroutines are carried here by the pools that run them;
	// the command's deferred clean-ups, such as removing staged outputs,
	// have run by the time it arrives.)
	defer func() {
		if p := recover(); p != nil {
			code = reportPanic(p, debug.Stack(), stderr)
		}
	}()
	if stopProfile := startProfile(stderr); stopProfile != nil {
		defer stopProfile()
	}
	return exitCode(c.run(args, stdout, stderr), stderr)
}

func exitCode(err error, stderr io.Writer) int {
	if err == nil {
		return 0
	}
	if errors.Is(err, errHelp) {
		return 0
	}
	fmt.Fprintln(stderr, "spinpop:", err)
	return exitClass(err)
}

// exitClass is the exit status of a failed command. Failures of the run
// are looked for first: a write error met while reading input (rejected.csv
// written as the catalog is read, say) is still a failure of the run.
func exitClass(err error) int {
	var ioe *outset.IOError
	var rf runFailure
	if errors.As(err, &ioe) || errors.As(err, &rf) {
		return 1
	}
	var ue usageError
	var ie inputError
	if errors.As(err, &ue) || errors.As(err, &ie) || pipeline.IsInputError(err) {
		return 2
	}
	return 1
}

// runFailure marks an error as a failure of the run (exit status 1) even
// where it wraps an error of the input.
type runFailure struct{ err error }

func (e runFailure) Error() string { return e.err.Error() }
func (e runFailure) Unwrap() error { return e.err }

func runFailuref(format string, args ...any) error {
	return runFailure{fmt.Errorf(format, args...)}
}

// reportPanic prints a caught panic as an internal error and returns its
// exit status, 1.
func reportPanic(p any, stack []byte, stderr io.Writer) int {
	if wp, ok := p.(*workerpanic.Panic); ok {
		// The worker's own stack says where; the one here only how it got back.
		p, stack = wp.Value, append(append(wp.Stack, "\ncarried to:\n"...), stack...)
	}
	fmt.Fprintf(stderr, "spinpop: internal error: %v\n", p)
	fmt.Fprintf(stderr, "This is a bug in spinpop %s, not a fault of your input. Please report it with the command line,\n"+
		"the scenario (spinpop check SCENARIO --json) and the trace below.\n\n%s", version, stack)
	return 1
}

// inputError wraps an error from a package that was caused by user input
// (a bad scenario file, for instance).
type inputError struct{ err error }

func (e inputError) Error() string { return e.err.Error() }
func (e inputError) Unwrap() error { return e.err }

var errHelp = errors.New("help shown")

func printUsage(w io.Writer) {
	fmt.Fprintln(w, "spinpop: a Galactic-population forward model for stellar rotation-period catalogs")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Usage: spinpop COMMAND [arguments] (each command takes --help)")
	fmt.Fprintln(w)
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-12s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Exit status: 0 success, 2 bad input, 1 failure.")
}
