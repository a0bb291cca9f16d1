package main

import (
	"fmt"
	"io"
	"strings"

	"spinpop/scenarios"
)

func runExamples(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("examples", "examples [NAME]",
		"Without NAME, list the built-in example scenarios. With NAME, print that file, to copy and edit\n(spinpop examples burst > my-burst.toml). Use them directly as example:NAME.", stdout)
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	switch len(pos) {
	case 0:
		for _, ex := range scenarios.Examples() {
			fmt.Fprintln(stdout, "example:"+strings.TrimSuffix(ex, ".toml"))
		}
		return nil
	case 1:
		name := strings.TrimPrefix(pos[0], "example:")
		if !strings.HasSuffix(name, ".toml") {
			name += ".toml"
		}
		text, err := scenarios.ExampleText(name)
		if err != nil {
			return usageErrorf("no example %q; the examples are %s", pos[0], wordList(scenarios.Examples()))
		}
		_, err = stdout.Write(text)
		return err
	}
	return usageErrorf("examples takes at most one name")
}
