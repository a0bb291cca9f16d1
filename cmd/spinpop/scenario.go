package main

import (
	"os"
	"strings"

	"spinpop/scenarios"
)

// loadScenario reads a scenario file, or a built-in example named
// "example:NAME", and applies the --set overrides.
func loadScenario(arg string, sets []string) (*scenarios.Resolved, error) {
	overrides, err := scenarios.ParseOverrides(sets)
	if err != nil {
		return nil, inputError{err}
	}
	if strings.HasPrefix(arg, scenarios.ExamplePrefix) {
		res, err := scenarios.Resolve(arg, overrides...)
		if err != nil {
			return nil, inputError{err}
		}
		return res, nil
	}
	if _, err := os.Stat(arg); err != nil {
		for _, ex := range scenarios.Examples() {
			if strings.TrimSuffix(ex, ".toml") == strings.TrimSuffix(arg, ".toml") {
				return nil, usageErrorf("scenario file %s not found; for the built-in example write example:%s", arg, strings.TrimSuffix(ex, ".toml"))
			}
		}
		return nil, usageErrorf("scenario file %s cannot be read: %v", arg, err)
	}
	res, err := scenarios.Resolve(arg, overrides...)
	if err != nil {
		return nil, inputError{err}
	}
	return res, nil
}

func oneScenarioArg(pos []string, cmd string) (string, error) {
	if len(pos) != 1 {
		return "", usageErrorf("%s takes one scenario file (or example:NAME); got %d arguments (see spinpop %s --help)", cmd, len(pos), cmd)
	}
	return pos[0], nil
}
