package compare

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/stat"

	"spinpop/model"
)

// AgeBootstrap is the burst age's sampling distribution under the fitted
// burst model: mock catalogs drawn from the with-burst fit μ(θ̂₁) and each
// refitted under it, nuisance parameters included (Efron & Tibshirani
// 1993, ch. 6 and 13, the parametric bootstrap of an estimator's bias and
// spread) [memory]. The profile interval assumes ln L is close to
// quadratic about one maximum; with a burst whose older half the survey
// loses, it need not be, and the refits show what the data's fit would
// have done on catalogs the fitted model makes.
type AgeBootstrap struct {
	// Ages are the refitted burst ages, in replicate order.
	Ages []float64
	// Median and the central 68 % and 95 % of Ages (quantiles of the
	// linearly interpolated empirical distribution, gonum stat.LinInterp).
	Median     float64
	Lo68, Hi68 float64
	Lo95, Hi95 float64
	// Truth is the age the replicates were drawn at (the data's best).
	Truth float64
}

// Bias is the median refitted age less the age drawn at, in Gyr.
func (b AgeBootstrap) Bias() float64 { return b.Median - b.Truth }

// Basic returns the basic ("reflected") bootstrap interval about best,
// taken in ln(age): a side extends as far as the replicates strayed on the
// other side (Davison & Hinkley 1997, eq. 5.6) [memory], so that an
// estimator that comes out old reads the truth younger.
func (b AgeBootstrap) Basic(best float64) Interval {
	if len(b.Ages) == 0 || !(best > 0) || !(b.Truth > 0) {
		return Interval{}
	}
	lt := math.Log(b.Truth)
	refl := func(q float64) float64 { return best * math.Exp(lt-math.Log(q)) }
	return Interval{Best: best, Lo68: refl(b.Hi68), Hi68: refl(b.Lo68), Lo95: refl(b.Hi95), Hi95: refl(b.Lo95)}
}

// Holds reports the share of the refitted ages inside [lo, hi].
func (b AgeBootstrap) Holds(lo, hi float64) float64 {
	if len(b.Ages) == 0 {
		return math.NaN()
	}
	n := 0
	for _, a := range b.Ages {
		if lo <= a && a <= hi {
			n++
		}
	}
	return float64(n) / float64(len(b.Ages))
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
			return fmt.Errorf("compare: burst-age replicate %d: %w", i, err)
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
	s := slices.Clone(ages)
	slices.Sort(s)
	q := func(p float64) float64 { return stat.Quantile(p, stat.LinInterp, s, nil) }
	return AgeBootstrap{Ages: ages, Truth: f1.Theta[age], Median: q(0.5),
		Lo68: q(0.158655), Hi68: q(0.841345), Lo95: q(0.025), Hi95: q(0.975)}, nil
}
