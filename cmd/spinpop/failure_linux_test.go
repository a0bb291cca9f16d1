package main

import (
	"os"
	"path/filepath"
	"syscall"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A full disk, for real where this process may mount a small tmpfs (root
// with the right to mount): every command that writes fails with exit
// status 1 and leaves nothing. Elsewhere the class is pinned by
// TestWriteFailureBeatsInputErrorInExitClass and internal/outset's
// /dev/full test.
func TestFullDiskExitOneEverywhere(t *testing.T) {
	if testing.Short() {
		t.Skip("builds templates (seconds)")
	}
	disk := t.TempDir()
	if err := syscall.Mount("tmpfs", disk, "tmpfs", 0, "size=200k"); err != nil {
		t.Skipf("cannot mount a small tmpfs here (%v): a full disk cannot be made", err)
	}
	defer syscall.Unmount(disk, 0)
	small := smallScenario(t, 300_000)
	for _, args := range [][]string{
		{"simulate", small, "--out", filepath.Join(disk, "s")},
		{"laws", small, "--stars", "100000", "--out", filepath.Join(disk, "l")},
		{"mock", small, "--stars", "20000", "--out", filepath.Join(disk, "m.csv")},
		{"compare", fitScenario(t, ""), "--set", "compare.template_stars=100000", "--replicates", "0", "--templates", "none", "--out", filepath.Join(disk, "c")},
	} {
		code, _, errs := runCLI(args...)
		assert.Equal(t, 1, code, "%v: %s", args, errs)
		assert.Contains(t, errs, "no space left on device", args)
		assert.NotContains(t, errs, ".spinpop-stage-", "the message names the file the user knows")
		es, err := os.ReadDir(disk)
		require.NoError(t, err)
		assert.Empty(t, es, "%v left %v", args, es)
	}
}
