package main

import (
	"fmt"
	"io"

	"spinpop/pipeline"
)

// yesFlag is the override of a refusal by the run estimate.
const yesFlag = "pass --yes"

// estimateGate prints a run's estimate on stderr before the run starts and
// refuses a run beyond this machine (exit status 2) unless yes.
func estimateGate(stderr io.Writer, yes bool) func(pipeline.Estimate) error {
	return func(e pipeline.Estimate) error {
		fmt.Fprintf(stderr, "estimate: %s\n", e)
		if err := e.Refusal("run.stars_generated", yesFlag); err != nil && !yes {
			return err
		}
		return nil
	}
}
