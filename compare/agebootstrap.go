package compare

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"

	"spinpop/compare/stats"
	"spinpop/model"
)

// AgeBootstrap is the burst age's sampling distribution under the fitted
// burst model: mock catalogs drawn from the with-burst fit μ(θ̂₁) and each
// refitted under it, nuisance parameters included (Efron & Tibshirani
// 1993, ch. 6 and 13, the parametric bootstrap of an estimator's bias and
// spread) [memory]. The profile interval assumes ln L is close to
// quadratic about one maximum; the refits show how far the age moves on
// catalogs the fitted model makes. They are optimistic: each starts at
// the fit and runs on its expansion (nuisance parameters inside its trust
// region, no exact templates, no starting grid), so a second maximum far
// from the fit is out of their reach.
type AgeBootstrap struct {
	// Ages are the refitted burst ages, in replicate order; NaN where a
	// refit failed.
	Ages []float64
	// Median and the central 68 % and 95 % of the refits that succeeded
	// (stats.QuantileSorted, the project's one quantile rule).
	Median     float64
	Lo68, Hi68 float64
	Lo95, Hi95 float64
	// Truth is the age the replicates were drawn at (the data's best).
	Truth float64
}

// Bias is the median refitted age less the age drawn at, in Gyr.
func (b AgeBootstrap) Bias() float64 { return b.Median - b.Truth }

// Holds reports the share of the refitted ages inside [lo, hi], among the
// refits that succeeded.
func (b AgeBootstrap) Holds(lo, hi float64) float64 {
	n, in := 0, 0
	for _, a := range b.Ages {
		if math.IsNaN(a) {
			continue
		}
		n++
		if lo <= a && a <= hi {
			in++
		}
	}
	if n == 0 {
		return math.NaN()
	}
	return float64(in) / float64(n)
}

// ageReplicateStream gives replicate i of the age bootstrap its own
// stream, apart from the burst test's replicates and the templates'.
func ageReplicateStream(seed uint64, i int) *rand.Rand {
	return model.ChunkStream(seed^0x13198a2e03707344, i)
}

// ageBootstrap draws n mocks from the burst fit f1 and refits each under
// burst (nuisance parameters on f1's expansion, starting from f1), and
// returns the refitted values of the parameter at index age. The
// likelihood is left holding f1's templates.
func ageBootstrap(ctx context.Context, like *Likelihood, burst HistoryModel, f1 FitResult, age, n int, opts TestOptions) (AgeBootstrap, error) {
	if err := useTemplates(like, f1, nil); err != nil {
		return AgeBootstrap{}, err
	}
	mu := like.Expected(f1.Weights, nil)
	ages := make([]float64, n)
	like.markShared()
	err := parallelReplicates(ctx, n, opts.Workers, nil, func(i int, counts []float64) error {
		drawLikeMock(counts, mu, like, ageReplicateStream(opts.Seed, i))
		l, err := like.withCounts(counts, false)
		if err != nil {
			return err
		}
		r, err := refitAt(l, burst, opts.Nuisance, f1.morph, FitOptions{Starts: opts.ReplicateStarts, Seed: opts.Seed, Init: [][]float64{f1.Theta}}, f1.Nuisance)
		if err != nil {
			// One mock the refit cannot handle does not cost the test
			// its answer: it is left out of the quantiles.
			ages[i] = math.NaN()
			return nil
		}
		ages[i] = r.Theta[age]
		return nil
	}, len(mu))
	if err != nil {
		return AgeBootstrap{}, err
	}
	if err := useTemplates(like, f1, nil); err != nil {
		return AgeBootstrap{}, err
	}
	s := slices.DeleteFunc(slices.Clone(ages), math.IsNaN)
	slices.Sort(s)
	q := func(p float64) float64 { return stats.QuantileSorted(s, p) }
	return AgeBootstrap{Ages: ages, Truth: f1.Theta[age], Median: q(0.5),
		Lo68: q(0.158655), Hi68: q(0.841345), Lo95: q(0.025), Hi95: q(0.975)}, nil
}
