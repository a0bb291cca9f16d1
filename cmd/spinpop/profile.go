package main

import (
	"fmt"
	"io"
	"os"
	"runtime/pprof"
)

// startProfile writes a CPU profile of the command to the file named by
// SPINPOP_CPUPROFILE, for developers measuring where a long run spends its
// time (go tool pprof); it returns the function that stops it, or nil.
func startProfile(stderr io.Writer) func() {
	path := os.Getenv("SPINPOP_CPUPROFILE")
	if path == "" {
		return nil
	}
	f, err := os.Create(path)
	if err != nil {
		fmt.Fprintf(stderr, "spinpop: SPINPOP_CPUPROFILE: %v\n", err)
		return nil
	}
	if err := pprof.StartCPUProfile(f); err != nil {
		fmt.Fprintf(stderr, "spinpop: SPINPOP_CPUPROFILE: %v\n", err)
		f.Close()
		return nil
	}
	return func() {
		pprof.StopCPUProfile()
		f.Close()
	}
}
