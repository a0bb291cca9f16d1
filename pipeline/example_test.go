package pipeline_test

import (
	"context"
	"fmt"

	"spinpop/pipeline"
	"spinpop/scenarios"
)

// Simulate a built-in scenario to a catalog in memory.
func Example() {
	res, err := scenarios.LoadExample("base")
	if err != nil {
		panic(err)
	}
	res.Scenario.Run.StarsGenerated = 100_000 // a quick run
	sim, err := pipeline.Simulate(context.Background(), res, pipeline.SimulateOptions{KeepCatalog: true})
	if err != nil {
		panic(err)
	}
	cat := sim.Catalog // catalog stars, one column per quantity
	fmt.Printf("%d of %d stars in the catalog\n", cat.N, sim.Tally.StepCounts[0])
	fmt.Printf("first star: %.3f Msun, P = %.2f d\n", cat.MassMsun[0], cat.MeasPeriodD[0])
	// Output:
	// 4796 of 100000 stars in the catalog
	// first star: 1.132 Msun, P = 17.60 d
}
