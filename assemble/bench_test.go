package assemble

import (
	"context"
	"testing"

	"spinpop/model"
	"spinpop/scenarios"
)

// BenchmarkGenerate measures the hot path: make and observe stars of the
// base example (empirical law, spots, binaries, aliases, dust), all cores,
// in the example's chunks. Reported as stars/s; allocations per op are per
// star. Issue 2's target: ≥ 5 M stars/s on this 2-core machine.
func BenchmarkGenerate(b *testing.B) { benchGenerate(b, "base", nil) }

// BenchmarkGenerateTorque is BenchmarkGenerate with the wind-torque law and
// its stall (the stall example), plus a tidally locked share of binaries:
// torque law, spots, binaries and aliases all on. Issue 3's target: ≥ 3 M
// stars/s.
func BenchmarkGenerateTorque(b *testing.B) {
	benchGenerate(b, "stall", func(s *scenarios.Scenario) { s.Stars.TidalLockFraction = 0.1 })
}

func benchGenerate(b *testing.B, example string, change func(*scenarios.Scenario)) {
	res, err := scenarios.LoadExample(example)
	if err != nil {
		b.Fatal(err)
	}
	if change != nil {
		change(&res.Scenario)
	}
	built, err := Build(&res.Scenario)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	var sel int64
	err = model.RunChunks(context.Background(), 1, int64(b.N), res.Scenario.Run.ChunkStars, 0, built.Population.Fill, func(c *model.Chunk) error {
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
	if sel == 0 && b.N >= 100000 {
		b.Fatal("no star selected")
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "stars/s")
}

// BenchmarkBuild measures the once-per-scenario tables (line-of-sight
// tables for the 71 age bins of base.toml, relations, laws).
func BenchmarkBuild(b *testing.B) {
	res, err := scenarios.LoadExample("base")
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Build(&res.Scenario); err != nil {
			b.Fatal(err)
		}
	}
}
