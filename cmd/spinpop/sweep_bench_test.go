package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"testing"
	"time"
)

// Speed of the sweep command (measured, never asserted; see
// DEVELOPERS.md, Benchmarks).

// The dry run of a 1,000-point sweep, the whole command: reading the
// file, resolving and hashing every point, printing the list.
func BenchmarkSweepDryRun1000(b *testing.B) {
	file := filepath.Join(b.TempDir(), "s.toml")
	text := "name = \"big\"\nscenario = \"example:fit\"\nwork = [\"test-burst\"]\n" +
		"[[axis]]\nkey = \"spin.law\"\nchoices = \"all\"\n" +
		"[[axis]]\nkey = \"spin.turnover\"\nchoices = \"all\"\n" +
		"[[axis]]\nkey = \"run.seed\"\nfrom = 1\nto = 125\n"
	if err := os.WriteFile(file, []byte(text), 0o644); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	for range b.N {
		if code := run([]string{"sweep", file, "--dry-run"}, io.Discard, io.Discard); code != 0 {
			b.Fatalf("exit %d", code)
		}
	}
}

// A sweep of points whose own work is next to nothing (a simulate of
// 1,000 stars, no catalog, no plots): the command's cost per point —
// resolving, the point's folder and markers, the once-per-scenario
// tables, the merge, the table's plots — beyond the work a real point
// does.
func BenchmarkSweepPerPoint(b *testing.B) {
	const points = 40
	file := filepath.Join(b.TempDir(), "s.toml")
	text := "name = \"tiny\"\nscenario = \"example:base\"\nwork = [\"simulate\"]\n" +
		"[set]\nrun.stars_generated = 1000\noutput.plots = false\noutput.catalog = false\n" +
		fmt.Sprintf("[[axis]]\nkey = \"run.seed\"\nfrom = 1\nto = %d\n", points)
	if err := os.WriteFile(file, []byte(text), 0o644); err != nil {
		b.Fatal(err)
	}
	b.ResetTimer()
	start := time.Now()
	for range b.N {
		out := filepath.Join(b.TempDir(), "out")
		if code := run([]string{"sweep", file, "--out", out, "--threads", "1"}, io.Discard, io.Discard); code != 0 {
			b.Fatalf("exit %d", code)
		}
	}
	b.ReportMetric(time.Since(start).Seconds()/float64(b.N*points)*1000, "ms/point")
}
