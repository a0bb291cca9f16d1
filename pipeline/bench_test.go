package pipeline

import (
	"context"
	"math"
	"sync"
	"testing"

	"spinpop/compare"
	"spinpop/scenarios"
)

// The speed targets of issue 8, on the demo (example:fit: its catalog, its
// fourteen nuisance parameters, per-color likelihood, 71 age bins × 690
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

// BenchmarkObserveDemo times one re-observation of the demo's bank at a
// search loss (the 24 d node at 0.875, as at a fit's side point): what
// every set of templates a joint fit makes costs.
func BenchmarkObserveDemo(b *testing.B) {
	c := demoComparison(b)
	v := lossyDemoValues(b, c)
	for b.Loop() {
		if _, err := c.Nuisance.Source.Observe(context.Background(), v); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkObserveDemoWithSlopes is BenchmarkObserveDemo that also makes
// the derivatives in the five free search-efficiency nodes (the pass a
// fit's expansion makes at each centre).
func BenchmarkObserveDemoWithSlopes(b *testing.B) {
	c := demoComparison(b)
	v := lossyDemoValues(b, c)
	so, ok := c.Nuisance.Source.(compare.SlopeObserver)
	if !ok {
		b.Fatal("the demo's source of templates gives no derivatives")
	}
	var params []int
	for j := range v {
		if so.Slopes(j) {
			params = append(params, j)
		}
	}
	if len(params) != 5 {
		b.Fatalf("%d parameters with derivatives; example:fit frees five nodes", len(params))
	}
	for b.Loop() {
		if _, _, err := so.ObserveSlopes(context.Background(), v, params); err != nil {
			b.Fatal(err)
		}
	}
}

// lossyDemoValues returns the demo's nuisance values with the 24 d node
// of the search loss at 0.875.
func lossyDemoValues(b *testing.B, c *Comparison) []float64 {
	v := c.Nuisance.Nominal()
	for j, name := range c.Nuisance.Names() {
		if name == "survey.search_by_rossby.efficiency_24d" {
			v[j] = 0.875
			return v
		}
	}
	b.Fatal("example:fit does not free the 24 d node")
	return nil
}

// BenchmarkObserveDemoRound times the re-observations of one round of a
// joint fit's expansion on the demo: the centre, then two side points of
// each non-linear nuisance parameter, one step away (step: a quarter of
// the range for a flat prior, σ for a gaussian one). The centre's law
// coefficient a moves a little every iteration, as it does from round to
// round, so that no iteration finds the previous one's work.
func BenchmarkObserveDemoRound(b *testing.B) {
	c := demoComparison(b)
	ps := c.Nuisance.Params
	ia := -1
	for j, p := range ps {
		if p.Name == "spin.barnes2007.a" {
			ia = j
		}
	}
	if ia < 0 {
		b.Fatal("example:fit does not free spin.barnes2007.a")
	}
	ctx := context.Background()
	i := 0
	for b.Loop() {
		i++
		centre := c.Nuisance.Nominal()
		centre[ia] += 1e-4 * float64(i%50)
		points := [][]float64{centre}
		for j, p := range ps {
			if p.Linear {
				continue
			}
			step := p.Sigma
			if step <= 0 {
				step = (p.Max - p.Min) / 8
			}
			for _, d := range []float64{-step, step} {
				v := append([]float64(nil), centre...)
				v[j] = math.Min(p.Max, math.Max(p.Min, v[j]+d))
				points = append(points, v)
			}
		}
		for _, v := range points {
			if _, err := c.Nuisance.Source.Observe(ctx, v); err != nil {
				b.Fatal(err)
			}
		}
	}
}

// BenchmarkMeasureSequenceDemo times spinpop sequence on the demo catalog:
// three rounds, each a model build, 100,000 model catalog stars and a
// read of the catalog — what compare.measure_sequence adds before the
// templates.
func BenchmarkMeasureSequenceDemo(b *testing.B) {
	res, err := scenarios.Resolve("example:fit")
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := MeasureSequenceShift(context.Background(), res, "example:fit", nil); err != nil {
			b.Fatal(err)
		}
	}
}
