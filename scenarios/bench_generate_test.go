package scenarios

import (
	"context"
	"testing"

	"spinpop/model"
)

// BenchmarkGenerate measures the hot path: make and observe stars of the
// base example (empirical law, spots, binaries, aliases, dust), all cores.
// Reported as stars/s; allocations per op are per star.
func BenchmarkGenerate(b *testing.B) {
	res, err := LoadExample("base")
	if err != nil {
		b.Fatal(err)
	}
	built, err := Build(&res.Scenario)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	var sel int64
	err = model.RunChunks(context.Background(), 1, int64(b.N), 32768, 0, built.Population.Fill, func(c *model.Chunk) error {
		for i := 0; i < c.N; i++ {
			if c.Flags[i].Selected() {
				sel++
			}
		}
		return nil
	})
	if err != nil {
		b.Fatal(err)
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "stars/s")
}

// BenchmarkBuild measures the once-per-scenario tables (line-of-sight
// tables for 40 age bins, relations, laws).
func BenchmarkBuild(b *testing.B) {
	res, err := LoadExample("base")
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Build(&res.Scenario); err != nil {
			b.Fatal(err)
		}
	}
}
