package main

import (
	"bytes"
	"flag"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
)

// Every command's --help prints its usage once, lists each option once,
// and never offers a flag's "not given" sentinel (-1) as a default to type.
func TestHelpOnceWithoutSentinels(t *testing.T) {
	for _, c := range commands() {
		for _, args := range [][]string{{c.name, "--help"}, {c.name, "-h"}, {c.name, "example:base", "--help"}} {
			var o, e bytes.Buffer
			code := run(args, &o, &e)
			out := o.String()
			assert.Equal(t, 0, code, "%v: %s", args, e.String())
			assert.Equal(t, 1, strings.Count(out, "Usage: spinpop "+c.name), "%v printed its usage %d times:\n%s", args, strings.Count(out, "Usage:"), out)
			assert.Empty(t, e.String(), "%v wrote to stderr", args)
			assert.NotContains(t, out, "(default -1)", "%v", args)
			assert.NotContains(t, out, "(default 0)", "%v", args)
			for _, line := range strings.Split(out, "\n") {
				if strings.HasPrefix(line, "  --") {
					name := strings.Fields(line)[0]
					assert.Equal(t, 1, strings.Count(out, "\n"+"  "+name+" ")+strings.Count(out, "\n"+"  "+name+"\n"), "%v lists %s more than once", args, name)
				}
			}
		}
	}
}

// A default that the help text describes in words is not repeated as a
// number, and a real default is shown once.
func TestPrintOptionsDefaults(t *testing.T) {
	fs := flag.NewFlagSet("x", flag.ContinueOnError)
	fs.Int("replicates", -1, "bootstrap replicates (default: compare.bootstrap)")
	fs.Int("walkers", 32, "walkers of the ensemble")
	fs.String("ages-gyr", "0.3,1", "ages")
	fs.Bool("force", false, "replace")
	var b bytes.Buffer
	printOptions(&b, fs)
	out := b.String()
	assert.NotContains(t, out, "-1")
	assert.Contains(t, out, "walkers of the ensemble (default 32)")
	assert.Contains(t, out, `ages (default "0.3,1")`)
	assert.Contains(t, out, "  --force\n")
	assert.Contains(t, out, "  --walkers int\n")
}
