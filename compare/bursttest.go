package compare

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strings"
	"sync"

	"gonum.org/v1/gonum/stat/distuv"

	"spinpop/compare/stats"
)

// TestOptions control BurstTest.
type TestOptions struct {
	Replicates int    // parametric-bootstrap replicates B (0: 1000)
	Seed       uint64 // replicate i draws from a stream of (Seed, i)
	Workers    int    // goroutines (0: GOMAXPROCS); results do not depend on it
	// Progress, if not nil, is called on the calling goroutine after each
	// finished replicate.
	Progress func(done, total int)
	// FitStarts is the number of starts of the fits to the data (0: 4);
	// ReplicateStarts of the refits of each replicate (0: 2), which also
	// start from the data's answers.
	FitStarts, ReplicateStarts int
	// NoProfile skips the profile interval of the burst age; NoEvidence
	// the Bayes factor (calibration runs need neither).
	NoProfile, NoEvidence bool
}

// BurstResult is the outcome of BurstTest.
type BurstResult struct {
	Smooth, Burst FitResult
	DeltaLogL     float64 // ln L̂(burst) − ln L̂(smooth)
	LR            float64 // 2 Δln L, floored at 0
	N             int     // catalogue stars compared
	KSmooth       int     // parameters counted for AIC/BIC: free ones, +1 for a free normalisation
	KBurst        int
	AICSmooth     float64
	AICBurst      float64
	BICSmooth     float64
	BICBurst      float64

	Replicates   int
	LRReplicates []float64 // LR* of each replicate, in replicate order
	// PValue = (1 + #{LR* ≥ LR})/(1 + B), the bootstrap p-value (Davison &
	// Hinkley 1997, eq. 4.11) [memory]; it never reaches 0 and is
	// conservative when LR* has ties (the point mass at 0).
	PValue float64
	// PValueRandomised breaks ties at random: (#{LR* > LR} +
	// U·(1 + #{LR* = LR}))/(1 + B), U uniform. Exactly uniform under a
	// simple null hypothesis, so it is what calibration checks test.
	PValueRandomised float64
	// Significance is the one-sided normal equivalent Φ⁻¹(1 − PValue),
	// floored at 0 (so that it is always finite).
	Significance float64

	// ChernoffP is ChernoffSF(LR), the asymptotic ½χ²₀ + ½χ²₁ reference;
	// ChernoffNote says when it is not to be trusted.
	ChernoffP    float64
	ChernoffNote string

	// LogBayesFactor is ln(Z_burst/Z_smooth) by grid integration over the
	// burst-only parameters (EvidenceParams, at most 3) with their priors;
	// EvidenceNote describes the approximation or why it was skipped.
	LogBayesFactor float64
	EvidenceParams []string
	HasEvidence    bool
	EvidenceNote   string

	// AgeParam names the burst's age parameter ("" if not free); AgeInterval
	// is its profile-likelihood interval under the burst model.
	AgeParam    string
	AgeInterval Interval

	Strength string // "strong", "moderate", "weak" or "none"
	Verdict  string
}

// Verdict thresholds on the bootstrap p-value. Strength language follows
// the common particle-physics practice of quoting one-sided normal
// equivalents: p ≤ 0.00135 is "3σ".
const (
	pStrong   = 0.00135 // ≥ 3σ: "strong", the smooth history is ruled out
	pModerate = 0.01    // "moderate": the smooth history is disfavoured
	pWeak     = 0.05    // "weak": a hint, not enough to rule anything out
)

// BurstTest tests a smooth history against one with a burst.
//
// It fits both models to the data, forms LR = 2 Δln L, and calibrates LR
// by a parametric bootstrap under the fitted smooth history: each
// replicate is a mock catalog drawn from μ(θ̂₀) (multinomial with the
// catalog's N stars for a free normalisation, Poisson for an absolute one)
// and refitted under both hypotheses. The asymptotic Chernoff (1954) law
// ½χ²₀ + ½χ²₁ applies only to one parameter on its boundary with the
// others identifiable under the null; a burst's age and width are not
// identifiable when its fraction is 0, which is where it fails
// (Protassov et al. 2002) — hence the bootstrap.
//
// AIC and BIC count k = free parameters + 1 for a free normalisation and
// take n = the number of catalogue stars in the comparison.
//
// Replicates run on Workers goroutines, each with its own stream of
// (Seed, index), and are stored by index: identical results for any
// Workers. Cancelling ctx returns ctx.Err() promptly and no result.
func BurstTest(ctx context.Context, like *Likelihood, smooth, burst HistoryModel, opts TestOptions) (*BurstResult, error) {
	if opts.Replicates <= 0 {
		opts.Replicates = 1000
	}
	if opts.FitStarts <= 0 {
		opts.FitStarts = 4
	}
	if opts.ReplicateStarts <= 0 {
		opts.ReplicateStarts = 2
	}
	f0, err := Fit(like, smooth, FitOptions{Starts: opts.FitStarts, Seed: opts.Seed})
	if err != nil {
		return nil, fmt.Errorf("compare: smooth fit: %w", err)
	}
	f1, err := Fit(like, burst, FitOptions{Starts: opts.FitStarts, Seed: opts.Seed, Init: nestedStarts(smooth, burst, f0.Theta)})
	if err != nil {
		return nil, fmt.Errorf("compare: burst fit: %w", err)
	}
	res := &BurstResult{Smooth: f0, Burst: f1, N: int(math.Round(like.N())), Replicates: opts.Replicates}
	res.DeltaLogL = f1.LogL - f0.LogL
	res.LR = math.Max(0, 2*res.DeltaLogL)
	norm := 0
	if like.Options().Normalisation == NormFree {
		norm = 1
	}
	res.KSmooth, res.KBurst = smooth.Dim()+norm, burst.Dim()+norm
	res.AICSmooth, res.AICBurst = stats.AIC(f0.LogL, res.KSmooth), stats.AIC(f1.LogL, res.KBurst)
	res.BICSmooth, res.BICBurst = stats.BIC(f0.LogL, res.KSmooth, res.N), stats.BIC(f1.LogL, res.KBurst, res.N)

	lrs, err := bootstrapLR(ctx, like, smooth, burst, f0, f1, opts)
	if err != nil {
		return nil, err
	}
	res.LRReplicates = lrs
	res.PValue, res.PValueRandomised = bootstrapP(res.LR, lrs, opts.Seed)
	res.Significance = math.Max(0, distuv.UnitNormal.Quantile(1-res.PValue))

	res.ChernoffP = stats.ChernoffSF(res.LR)
	extra := burstOnly(smooth, burst)
	switch {
	case len(extra) == 1:
		res.ChernoffNote = "asymptotic ½χ²₀+½χ²₁ reference for one parameter on its boundary (Chernoff 1954); the bootstrap p-value is the one to quote"
	default:
		res.ChernoffNote = fmt.Sprintf("unreliable here: the burst adds %d parameters, some not identifiable under the smooth history, where the ½χ²₀+½χ²₁ law fails (Protassov et al. 2002); quote the bootstrap p-value", len(extra))
	}

	if !opts.NoEvidence {
		if err := evidence(like, smooth, burst, f0, f1, res); err != nil {
			return nil, err
		}
	} else {
		res.EvidenceNote = "not computed"
	}
	for _, f := range burst.Free {
		if strings.HasSuffix(f.Name, "age_gyr") && !slices.Contains(smooth.Names(), f.Name) {
			res.AgeParam = f.Name
			break
		}
	}
	if res.AgeParam != "" && !opts.NoProfile {
		iv, err := ProfileAuto(like, burst, res.AgeParam, f1)
		if err != nil {
			return nil, err
		}
		res.AgeInterval = iv
	}
	res.Strength, res.Verdict = verdict(res)
	return res, nil
}

// burstOnly returns the burst model's free parameters that the smooth one
// lacks.
func burstOnly(smooth, burst HistoryModel) []string {
	var out []string
	for _, f := range burst.Free {
		if !slices.Contains(smooth.Names(), f.Name) {
			out = append(out, f.Name)
		}
	}
	return out
}

// nestedStarts returns a start for the burst model at the smooth
// optimum: shared parameters at their smooth fit values, mass fractions at
// their minimum, the rest at their defaults. When the smooth history is
// the burst model with no burst, the burst fit then starts where it can
// only improve on the smooth one.
func nestedStarts(smooth, burst HistoryModel, theta0 []float64) [][]float64 {
	t := burst.Default()
	for i, f := range burst.Free {
		if j := slices.Index(smooth.Names(), f.Name); j >= 0 {
			t[i] = theta0[j]
		} else if strings.HasSuffix(f.Name, "mass_fraction") {
			t[i] = f.Min
		}
	}
	return [][]float64{t}
}

// bootstrapLR computes LR* for every replicate.
func bootstrapLR(ctx context.Context, like *Likelihood, smooth, burst HistoryModel, f0, f1 FitResult, opts TestOptions) ([]float64, error) {
	mu := like.Expected(f0.Weights, nil)
	free := like.Options().Normalisation == NormFree
	n := int(math.Round(like.N()))
	lrs := make([]float64, opts.Replicates)
	err := parallelReplicates(ctx, opts.Replicates, opts.Workers, opts.Progress, func(i int, counts []float64) error {
		drawMock(counts, mu, n, free, replicateStream(opts.Seed, i))
		lr, err := refitLR(like, counts, smooth, burst, f0.Theta, f1.Theta, opts.ReplicateStarts, opts.Seed)
		if err != nil {
			return fmt.Errorf("compare: bootstrap replicate %d: %w", i, err)
		}
		lrs[i] = lr
		return nil
	}, len(mu))
	if err != nil {
		return nil, err
	}
	return lrs, nil
}

// parallelReplicates runs job(i) for i < n on workers goroutines, each
// with its own scratch slice of scratchLen values, and reports progress on
// the calling goroutine. Jobs write their results by index, so the outcome
// does not depend on the number of workers. The first error, or the
// context's, stops the run and is returned.
func parallelReplicates(ctx context.Context, n, workers int, progress func(done, total int), job func(i int, scratch []float64) error, scratchLen int) error {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	inner, cancel := context.WithCancel(ctx)
	defer cancel()
	jobs := make(chan int)
	done := make(chan error)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			scratch := make([]float64, scratchLen)
			for i := range jobs {
				if inner.Err() != nil {
					continue
				}
				err := job(i, scratch)
				select {
				case done <- err:
				case <-inner.Done():
				}
			}
		}()
	}
	go func() {
		defer close(jobs)
		for i := range n {
			select {
			case jobs <- i:
			case <-inner.Done():
				return
			}
		}
	}()
	go func() { wg.Wait(); close(done) }()
	finished := 0
	var firstErr error
	for err := range done {
		if err != nil && firstErr == nil {
			firstErr = err
			cancel()
		}
		finished++
		if progress != nil && firstErr == nil {
			progress(finished, n)
		}
	}
	if firstErr != nil {
		return firstErr
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if finished < n {
		return errors.New("compare: replicates stopped early")
	}
	return nil
}

// refitLR fits both hypotheses to one mock and returns its LR.
func refitLR(like *Likelihood, counts []float64, smooth, burst HistoryModel, theta0, theta1 []float64, starts int, seed uint64) (float64, error) {
	l, err := like.WithCounts(counts)
	if err != nil {
		return 0, err
	}
	r0, err := Fit(l, smooth, FitOptions{Starts: starts, Seed: seed, Init: [][]float64{theta0}})
	if err != nil {
		return 0, err
	}
	init := append([][]float64{theta1}, nestedStarts(smooth, burst, r0.Theta)...)
	r1, err := Fit(l, burst, FitOptions{Starts: starts, Seed: seed, Init: init})
	if err != nil {
		return 0, err
	}
	return math.Max(0, 2*(r1.LogL-r0.LogL)), nil
}

// lrTieTol is the precision of a fitted LR: two LRs closer than this are
// ties (in practice, both are the point mass at 0 that a boundary
// optimum produces, up to the optimiser's stopping rule).
const lrTieTol = 1e-6

// bootstrapP returns the conservative and the randomised bootstrap
// p-values of lr against the replicates.
func bootstrapP(lr float64, reps []float64, seed uint64) (p, pRand float64) {
	var ge, gt, eq int
	for _, v := range reps {
		switch {
		case math.Abs(v-lr) <= lrTieTol:
			ge++
			eq++
		case v > lr:
			ge++
			gt++
		}
	}
	b := float64(len(reps))
	u := replicateStream(seed, -1).Float64()
	return (1 + float64(ge)) / (1 + b), (float64(gt) + u*(1+float64(eq))) / (1 + b)
}
