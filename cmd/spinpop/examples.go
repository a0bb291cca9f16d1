package main

import (
	"fmt"
	"io"
	"slices"
	"strings"

	"spinpop/scenarios"
	"spinpop/sweep"
)

func runExamples(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("examples", "examples [NAME]",
		"Without NAME, list the built-in example scenarios and sweep files. With NAME, print that file,\nto copy and edit (spinpop examples burst > my-burst.toml). Use them directly as example:NAME\n(a sweep file with spinpop sweep example:NAME).", stdout)
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	switch len(pos) {
	case 0:
		for _, ex := range scenarios.Examples() {
			fmt.Fprintln(stdout, "example:"+strings.TrimSuffix(ex, ".toml"))
		}
		for _, ex := range sweep.Examples() {
			fmt.Fprintf(stdout, "example:%s (a sweep file: spinpop sweep example:%s)\n", ex, ex)
		}
		return nil
	case 1:
		name := strings.TrimPrefix(pos[0], "example:")
		if !strings.HasSuffix(name, ".toml") {
			name += ".toml"
		}
		text, err := scenarios.ExampleText(name)
		if err != nil && slices.Contains(sweep.Examples(), strings.TrimSuffix(name, ".toml")) {
			text, err = sweep.ExampleText(strings.TrimSuffix(name, ".toml"))
		}
		if err != nil {
			return usageErrorf("no example %q; the examples are %s", pos[0], wordList(scenarios.Examples()))
		}
		_, err = stdout.Write(text)
		return err
	}
	return usageErrorf("examples takes at most one name")
}
