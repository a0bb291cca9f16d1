package main

import (
	"flag"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// newFlagSet makes a flag set whose --help prints the command's usage and
// whose parse errors are usage errors (exit status 2).
func newFlagSet(name, synopsis, about string, stdout io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	if strings.Contains(synopsis, "SCENARIO") {
		fs.Var(new(stringList), "set", "override a scenario key, validated like the file: `key=value`, repeatable\n(--set spin.law=torque --set history.burst.age_gyr=0.8; values in TOML syntax, bare words are strings)")
	}
	fs.Usage = func() {
		fmt.Fprintf(stdout, "Usage: spinpop %s\n\n%s\n\nOptions:\n", synopsis, about)
		printOptions(stdout, fs)
	}
	return fs
}

// stringList is a repeatable string flag.
type stringList []string

func (l *stringList) String() string { return strings.Join(*l, " ") }

func (l *stringList) Set(s string) error {
	*l = append(*l, s)
	return nil
}

// scenarioSets returns the --set arguments a command's flag set collected.
func scenarioSets(fs *flag.FlagSet) []string {
	if f := fs.Lookup("set"); f != nil {
		return *f.Value.(*stringList)
	}
	return nil
}

// parseInterleaved lets flags come before or after positional arguments
// (spinpop simulate SCENARIO --out DIR), which the flag package alone does
// not.
func parseInterleaved(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			if err == flag.ErrHelp { // the flag package has printed the usage
				return nil, errHelp
			}
			return nil, usageErrorf("%s: %v (see spinpop %s --help)", fs.Name(), err, fs.Name())
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

// floatList parses "0.3,0.6,1" into numbers.
func floatList(s, flagName string) ([]float64, error) {
	var out []float64
	for _, f := range strings.Split(s, ",") {
		f = strings.TrimSpace(f)
		if f == "" {
			continue
		}
		v, err := strconv.ParseFloat(f, 64)
		if err != nil {
			return nil, usageErrorf("--%s: %q is not a number (want a comma-separated list such as 0.3,0.6,1)", flagName, f)
		}
		out = append(out, v)
	}
	if len(out) == 0 {
		return nil, usageErrorf("--%s: empty list (want a comma-separated list such as 0.3,0.6,1)", flagName)
	}
	return out, nil
}

// printOptions lists a command's options as the README writes them
// (--name VALUE), each with its help text and its default. The flag
// package's own list would show the sentinel a flag uses for "not given"
// (-1, 0) as if it were a value to type; a help text that already says what
// happens by default ("default: compare.bootstrap") is left to say it, and
// zero values (false, 0, "") are not shown as defaults.
func printOptions(w io.Writer, fs *flag.FlagSet) {
	fs.VisitAll(func(f *flag.Flag) {
		kind, usage := flag.UnquoteUsage(f)
		head := "  --" + f.Name
		if kind != "" {
			head += " " + kind
		}
		fmt.Fprintln(w, head)
		body := strings.ReplaceAll(usage, "\n", "\n      ")
		if def := f.DefValue; def != "" && def != "0" && def != "false" && !strings.Contains(usage, "default") {
			if kind == "string" {
				def = strconv.Quote(def)
			}
			body += " (default " + def + ")"
		}
		fmt.Fprintln(w, "      "+body)
	})
}
