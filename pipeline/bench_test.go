package pipeline

import (
	"context"
	"sync"
	"testing"

	"spinpop/compare"
	"spinpop/scenarios"
)

// The speed targets of issue 8, on the demo (example:fit: its catalog, its
// thirteen nuisance parameters, per-color likelihood, 40 age bins × 690
// comparison cells). The comparison is set up once (templates and the
// bank of template stars: not timed).
var (
	demoOnce sync.Once
	demoComp *Comparison
	demoErr  error
)

func demoComparison(b *testing.B) *Comparison {
	demoOnce.Do(func() {
		res, err := scenarios.Resolve("example:fit")
		if err != nil {
			demoErr = err
			return
		}
		demoComp, demoErr = SetupComparison(context.Background(), res, ComparisonOptions{Source: "example:fit", TemplateDir: "none"})
	})
	if demoErr != nil {
		b.Fatal(demoErr)
	}
	return demoComp
}

// BenchmarkFitJointDemo times one fit of the burst model with the
// nuisance parameters on the demo catalog, from the scenario's values
// (target ≤ 60 s).
func BenchmarkFitJointDemo(b *testing.B) {
	c := demoComparison(b)
	for b.Loop() {
		c.Nuisance.ResetCache() // every fit makes its own templates
		if _, err := c.Fit(context.Background(), c.Burst, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkBurstTestDemo200 times the burst test with 200 bootstrap
// replicates, each refitting history and nuisance parameters under both
// hypotheses (target ≤ 10 min).
func BenchmarkBurstTestDemo200(b *testing.B) {
	c := demoComparison(b)
	for b.Loop() {
		c.Nuisance.ResetCache()
		if _, err := compare.BurstTest(context.Background(), c.Likelihood, c.Smooth, c.Burst, compare.TestOptions{
			Replicates: 200, Seed: 1, Workers: c.Workers, Nuisance: c.Nuisance, NoEvidence: true}); err != nil {
			b.Fatal(err)
		}
	}
}
