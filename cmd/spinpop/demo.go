package main

import (
	"fmt"
	"io"
	"path/filepath"
	"runtime"
)

func runDemo(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("demo", "demo --out DIR [--force]",
		"Run the whole job on the built-in example: simulate the smooth-history and the burst\n"+
			"scenarios of the invented Larkspur survey into DIR/smooth and DIR/burst.", stdout)
	out := fs.String("out", "", "output folder (created if missing; must be empty unless --force)")
	force := fs.Bool("force", false, "write into a non-empty folder, replacing this tool's files there")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) > 0 {
		return usageErrorf("demo takes no scenario; it runs the built-in examples (got %v)", pos)
	}
	if err := prepareOutDir(*out, *force); err != nil {
		return err
	}
	for _, name := range []string{"smooth", "burst"} {
		res, err := loadScenario("example:" + name)
		if err != nil {
			return err
		}
		dir := filepath.Join(*out, name)
		if err := prepareOutDir(dir, *force); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "== example:%s → %s\n", name, dir)
		sum, err := simulate(res, "example:"+name, dir, runtime.GOMAXPROCS(0), stderr)
		if err != nil {
			return err
		}
		if err := printSummary(stdout, sum, false); err != nil {
			return err
		}
		fmt.Fprintln(stdout)
	}
	return nil
}
