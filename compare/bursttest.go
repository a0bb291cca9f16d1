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
	"spinpop/internal/workerpanic"
)

// TestOptions control BurstTest.
type TestOptions struct {
	Replicates int    // parametric-bootstrap replicates B (0: DefaultReplicates)
	Seed       uint64 // replicate i draws from a stream of (Seed, i)
	Workers    int    // goroutines (0: GOMAXPROCS); results do not depend on it
	// Progress, if not nil, is called on the calling goroutine with 0 when
	// the replicates begin (after the fits) and after each finished one.
	Progress func(done, total int)
	// FitStarts is the number of starts of the fits to the data (0: 4);
	// ReplicateStarts of the refits of each replicate (0: 2), which also
	// start from the data's answers.
	FitStarts, ReplicateStarts int
	// NoProfile skips the profile interval of the burst age; NoEvidence
	// the Bayes factor (calibration runs need neither).
	NoProfile, NoEvidence bool
	// Nuisance, when not nil, is fitted together with the history under
	// both hypotheses, in the data's fits and in every replicate's.
	Nuisance *Nuisance
	// Stage, if not nil, is told what the test is doing before the
	// bootstrap (the fits with nuisance parameters take a while).
	Stage func(msg string)
	// AgeCalibration, if not nil, gives the 1σ uncertainty of ln(age)
	// that the spin-down law's own calibration carries into a burst age
	// (ok false: none known). The age interval combines it with the
	// profile's (see BurstResult.AgeInterval).
	AgeCalibration func(ageGyr float64) (sigmaLn float64, ok bool)
	// MaxRounds bounds the expansions of each joint fit to the data (0:
	// MaxRounds).
	MaxRounds int
	// AgeReplicates is the number of mocks drawn from the with-burst fit
	// and refitted under it to measure the burst age's spread and bias
	// (BurstResult.AgeBootstrap; 0: none). Needs the profile.
	AgeReplicates int
}

// BurstResult is the outcome of BurstTest.
type BurstResult struct {
	Smooth, Burst FitResult
	DeltaLogL     float64 // ln L̂(burst) − ln L̂(smooth)
	LR            float64 // 2 Δln L, floored at 0
	N             int     // catalog stars compared
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

	// AgeParam names the burst's age parameter ("" if not free).
	// AgeIntervalProfile is its profile-likelihood interval under the
	// burst model (scaled by the dispersion when the model leaves misfit);
	// AgeCalibrationSigma the 1σ uncertainty of ln(age) from the law's
	// calibration (0 when none is known); AgeInterval the two combined,
	// each side's distance from the best age in ln(age) added in quadrature
	// with 1σ (68 %) or 1.96σ (95 %) of the calibration. A field catalog
	// cannot calibrate the law that dates it, so the calibration enters
	// even where the law's coefficients were fitted as nuisance
	// parameters (conservative: the profile already holds part of it).
	AgeParam string
	// AgeBounds are the age parameter's free range, [min, max] in Gyr
	// (zero when AgeParam is ""): a best age on either edge is the
	// range's answer, not the catalog's, and no burst is claimed there (onRangeEdge).
	AgeBounds           [2]float64 `json:"-"`
	AgeIntervalProfile  Interval
	AgeCalibrationSigma float64
	AgeInterval         Interval
	// AgeProfileUnconfirmed is the age at which the profile, drawn on the
	// with-burst fit's expansion, rose peakTol or more above the fit
	// (0: nowhere); AgeProfilePeakChecked whether a joint fit from within
	// 2 % of that age with exact templates found nothing better (false:
	// the profile peaked where no such fit started — after two
	// replacements, or on the final profile's wider grid). Either way the
	// best age is the fit's and the interval is read from its ln L.
	AgeProfileUnconfirmed float64
	AgeProfilePeakChecked bool
	// AgeBootstrap is the burst age refitted on mocks of the with-burst
	// fit (TestOptions.AgeReplicates; no Ages when none were asked for).
	AgeBootstrap AgeBootstrap

	// Adequacy of each fitted model (see Adequacy), calibrated by the same
	// replicates.
	AdequacySmooth, AdequacyBurst Adequacy
	// Dispersion is the burst model's φ̂; PValueQuasi the bootstrap
	// p-value of the quasi-likelihood ratio LR/φ̂ against the replicates'
	// LR*/φ̂* — the burst judged against the misfit that remains.
	Dispersion  float64
	PValueQuasi float64
	// Calibration names the p-value the strength rests on: "bootstrap"
	// (the burst model describes the catalog) or "quasi-likelihood" (it
	// does not, and the ratio is divided by the dispersion).
	Calibration string

	// Strains and StrainsSmooth are the nuisance parameters the with-burst
	// and the smooth fit strain (Strains); GaussianPriors how many have a
	// gaussian prior. A verdict that claims a burst names the first.
	Strains, StrainsSmooth []Strain
	GaussianPriors         int

	Strength string // "strong", "moderate", "weak", "none" or "unreliable"
	// StrengthReason says, for "unreliable", why no verdict is given.
	StrengthReason string
	Verdict        string
}

// DefaultReplicates is the burst test's number of bootstrap replicates
// when TestOptions.Replicates is 0.
const DefaultReplicates = 1000

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
// take n = the number of catalog stars in the comparison.
//
// Replicates run on Workers goroutines, each with its own stream of
// (Seed, index), and are stored by index: identical results for any
// Workers. Cancelling ctx returns ctx.Err() promptly and no result.
func BurstTest(ctx context.Context, like *Likelihood, smooth, burst HistoryModel, opts TestOptions) (*BurstResult, error) {
	if opts.Replicates <= 0 {
		opts.Replicates = DefaultReplicates
	}
	if opts.FitStarts <= 0 {
		opts.FitStarts = 4
	}
	if opts.ReplicateStarts <= 0 {
		opts.ReplicateStarts = 2
	}
	nu := opts.Nuisance
	stage := func(prefix string) func(string) {
		if opts.Stage == nil {
			return nil
		}
		return func(msg string) { opts.Stage(prefix + msg) }
	}
	f0, err := FitJoint(ctx, like, smooth, nu, FitOptions{Starts: opts.FitStarts, Seed: opts.Seed, MaxRounds: opts.MaxRounds, Workers: opts.Workers, Stage: stage("smooth history, ")})
	if err != nil {
		return nil, fmt.Errorf("compare: smooth fit: %w", err)
	}
	f1, err := FitJoint(ctx, like, burst, nu, FitOptions{Starts: opts.FitStarts, Seed: opts.Seed, MaxRounds: opts.MaxRounds, Workers: opts.Workers, Init: nestedStarts(smooth, burst, f0.Theta), NuisanceStart: f0.Nuisance, Stage: stage("with burst, ")})
	if err != nil {
		return nil, fmt.Errorf("compare: burst fit: %w", err)
	}
	if nu.Dim() > 0 {
		// The smooth fit may have bent the physics to mimic a burst it
		// cannot have (a wide period scatter smearing a ridge, a color
		// shift); the burst model is also fitted from the scenario's values,
		// with its own scan of burst ages, and the better fit kept.
		f1b, err := FitJoint(ctx, like, burst, nu, FitOptions{Starts: opts.FitStarts, Seed: opts.Seed, MaxRounds: opts.MaxRounds, Workers: opts.Workers, Stage: stage("with burst (from the scenario's values), ")})
		if err != nil {
			return nil, fmt.Errorf("compare: burst fit: %w", err)
		}
		if f1b.LogL > f1.LogL {
			f1 = f1b
		}
		if err := like.UseFit(f1); err != nil {
			return nil, err
		}
	}
	ageParam, rejected := "", []float64(nil)
	if ages := distinguishingAges([]Alternative{{History: smooth}, {History: burst}}, 1); len(ages) > 0 {
		ageParam = ages[0] // the burst's age: the first the smooth history does not free
	}
	if ageParam != "" && !opts.NoProfile {
		// The burst age's profile, on the fit's expansion, may rise above
		// the fit: a joint fit from its peak says whether a better answer
		// lies there, before anything is computed from the fit.
		before := f1.LogL
		if f1, rejected, err = confirmProfilePeak(ctx, like, burst, nu, f1, ageParam, FitOptions{Seed: opts.Seed, MaxRounds: opts.MaxRounds, Workers: opts.Workers, Stage: stage("with burst, ")}); err != nil {
			return nil, fmt.Errorf("compare: burst fit: %w", err)
		}
		if f1.LogL > before {
			// The burst fit found a higher maximum by a second search; the
			// smooth one gets a second search too, from the nuisance values
			// found there, so that the ratio does not gain from a search
			// only one hypothesis had.
			if f0, err = searchAgain(ctx, like, smooth, nu, f0, burst, f1, FitOptions{Seed: opts.Seed, MaxRounds: opts.MaxRounds, Workers: opts.Workers,
				Stage: stage("smooth history (from the with-burst fit's nuisance values), ")}); err != nil {
				return nil, fmt.Errorf("compare: smooth fit: %w", err)
			}
			if err := like.UseFit(f1); err != nil {
				return nil, err
			}
		}
	}
	res := &BurstResult{Smooth: f0, Burst: f1, N: int(math.Round(like.N())), Replicates: opts.Replicates, AgeParam: ageParam}
	for _, f := range burst.Free {
		if f.Name == ageParam {
			res.AgeBounds = [2]float64{f.Min, f.Max}
		}
	}
	res.DeltaLogL = f1.LogL - f0.LogL
	res.LR = math.Max(0, 2*res.DeltaLogL)
	norm := like.NumScales()
	res.KSmooth, res.KBurst = smooth.Dim()+nu.Dim()+norm, burst.Dim()+nu.Dim()+norm
	res.AICSmooth, res.AICBurst = stats.AIC(f0.LogL, res.KSmooth), stats.AIC(f1.LogL, res.KBurst)
	res.BICSmooth, res.BICBurst = stats.BIC(f0.LogL, res.KSmooth, res.N), stats.BIC(f1.LogL, res.KBurst, res.N)

	regs := misfitRegions(like.Space())
	d0, err := fitDeviance(like, f0, regs)
	if err != nil {
		return nil, err
	}
	d1, err := fitDeviance(like, f1, regs)
	if err != nil {
		return nil, err
	}
	reps, err := bootstrapPairs(ctx, like, smooth, burst, f0, f1, regs, opts)
	if err != nil {
		return nil, err
	}
	res.LRReplicates = make([]float64, len(reps))
	r0, r1 := make([]devianceRecord, len(reps)), make([]devianceRecord, len(reps))
	for i, r := range reps {
		res.LRReplicates[i], r0[i], r1[i] = r.lr, r.d0, r.d1
	}
	res.PValue, res.PValueRandomised = bootstrapP(res.LR, res.LRReplicates, opts.Seed)
	res.Significance = math.Max(0, distuv.UnitNormal.Quantile(1-res.PValue))
	res.AdequacySmooth = newAdequacy(d0, r0, regs, like.Counts())
	res.AdequacyBurst = newAdequacy(d1, r1, regs, like.Counts())
	res.Dispersion = res.AdequacyBurst.Dispersion
	res.PValueQuasi = quasiP(res.LR, res.Dispersion, reps, res.AdequacyBurst.ReplicateMean)

	res.ChernoffP = stats.ChernoffSF(res.LR)
	extra := burstOnly(smooth, burst)
	switch {
	case len(extra) == 1:
		res.ChernoffNote = "asymptotic ½χ²₀+½χ²₁ reference for one parameter on its boundary (Chernoff 1954); the bootstrap p-value is the one to quote"
	default:
		res.ChernoffNote = fmt.Sprintf("unreliable here: the burst adds %d parameters, some not identifiable under the smooth history, where the ½χ²₀+½χ²₁ law fails (Protassov et al. 2002); quote the bootstrap p-value", len(extra))
	}

	// What follows reads the burst model's templates.
	if err := useTemplates(like, f1, nil); err != nil {
		return nil, err
	}
	if !opts.NoEvidence {
		if err := evidence(like, smooth, burst, f0, f1, res); err != nil {
			return nil, err
		}
	} else {
		res.EvidenceNote = "not computed"
	}
	if res.AgeParam != "" && !opts.NoProfile {
		iv, peak, err := profileScan(like, burst, res.AgeParam, f1, nu, res.Dispersion)
		if err != nil {
			return nil, err
		}
		if age := slices.Index(burst.Names(), res.AgeParam); nu.Dim() > 0 {
			// With nuisance parameters the profile is drawn on the fit's
			// expansion, exact only at the fit: the best age is the fit's
			// (made with exact templates, and the age the replicates are
			// drawn at), and the interval is read from the fit's ln L, so
			// that points the expansion puts above it count as inside.
			iv = intervalFrom(peak.Pts, f1.LogL, f1.Theta[age], math.Max(1, res.Dispersion))
			if !math.IsNaN(peak.Value) && peak.Fit.LogL >= f1.LogL+peakTol {
				res.AgeProfileUnconfirmed = peak.Value
				res.AgeProfilePeakChecked = slices.ContainsFunc(rejected, func(v float64) bool {
					return math.Abs(v-peak.Value) <= 0.02*peak.Value
				})
			}
		}
		res.setAgeInterval(iv, opts.AgeCalibration)
		if opts.AgeReplicates > 0 {
			if opts.Stage != nil {
				opts.Stage(fmt.Sprintf("burst age: %d mocks of the with-burst fit, each refitted", opts.AgeReplicates))
			}
			age := slices.Index(burst.Names(), res.AgeParam)
			if res.AgeBootstrap, err = ageBootstrap(ctx, like, burst, f1, age, opts.AgeReplicates, opts); err != nil {
				return nil, err
			}
		}
	}
	res.Strains, res.StrainsSmooth, res.GaussianPriors = Strains(f1, nu), Strains(f0, nu), GaussianPriors(nu)
	res.Strength, res.StrengthReason, res.Calibration, res.Verdict = verdict(res)
	return res, nil
}

// fitDeviance returns the deviance of like's data at fit f, whole and by
// region.
func fitDeviance(like *Likelihood, f FitResult, regs []region) (devianceRecord, error) {
	if err := useTemplates(like, f, nil); err != nil {
		return devianceRecord{}, err
	}
	mu := like.Fitted(f.Weights, nil)
	per := make([]float64, len(mu))
	total := deviance(like.Counts(), mu, per) + like.addConstraint(per)
	return devianceRecord{total: total, regions: regionSums(regs, per)}, nil
}

// quasiP returns the bootstrap p-value of LR/φ̂ against the replicates'
// LR*/φ̂*, each replicate's dispersion from its own burst-model deviance
// (D*/mean D*, at least 1) so that the spread of φ̂ itself is accounted
// for. With φ̂ = 1 and the replicates' φ̂* ≈ 1 it is the plain bootstrap
// p-value.
func quasiP(lr, phi float64, reps []replicate, meanD float64) float64 {
	f := lr / phi
	ge := 0
	for _, r := range reps {
		p := 1.0
		if meanD > 0 && r.d1.total > meanD {
			p = r.d1.total / meanD
		}
		if r.lr/p >= f-lrTieTol {
			ge++
		}
	}
	return (1 + float64(ge)) / (1 + float64(len(reps)))
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

// sharedStarts returns a start for model to at from's parameters theta:
// the parameters the two share at theta's values, the rest at their
// defaults.
func sharedStarts(from, to HistoryModel, theta []float64) [][]float64 {
	t := to.Default()
	for i, name := range to.Names() {
		if j := slices.Index(from.Names(), name); j >= 0 {
			t[i] = theta[j]
		}
	}
	return [][]float64{t}
}

// replicate is one bootstrap replicate's outcome: its likelihood ratio and
// the deviance of each hypothesis' refit.
type replicate struct {
	lr     float64
	d0, d1 devianceRecord
}

// bootstrapPairs draws the replicates under the smooth fit f0 and refits
// both hypotheses to each.
func bootstrapPairs(ctx context.Context, like *Likelihood, smooth, burst HistoryModel, f0, f1 FitResult, regs []region, opts TestOptions) ([]replicate, error) {
	if err := useTemplates(like, f0, nil); err != nil {
		return nil, err
	}
	mu := like.Expected(f0.Weights, nil)
	out := make([]replicate, opts.Replicates)
	like.markShared()
	err := parallelReplicates(ctx, opts.Replicates, opts.Workers, opts.Progress, func(i int, counts []float64) error {
		drawLikeMock(counts, mu, like, replicateStream(opts.Seed, i))
		r, err := refitPair(like, counts, smooth, burst, f0, f1, regs, opts)
		if err != nil {
			return fmt.Errorf("compare: bootstrap replicate %d: %w", i, err)
		}
		out[i] = r
		return nil
	}, len(mu))
	if err != nil {
		return nil, err
	}
	return out, nil
}

// refitPair fits both hypotheses to one mock (nuisance parameters on the
// data fits' expansions, starting from the data's answers) and returns its
// LR and deviances.
func refitPair(like *Likelihood, counts []float64, smooth, burst HistoryModel, f0, f1 FitResult, regs []region, opts TestOptions) (replicate, error) {
	l, err := like.withCounts(counts, false)
	if err != nil {
		return replicate{}, err
	}
	nu := opts.Nuisance
	r0, err := refitAt(l, smooth, nu, f0.morph, FitOptions{Starts: opts.ReplicateStarts, Seed: opts.Seed, Init: [][]float64{f0.Theta}}, f0.Nuisance)
	if err != nil {
		return replicate{}, err
	}
	// The burst model is refitted on the expansion the replicate was drawn
	// from (the smooth fit's), starting from the smooth refit's nuisance
	// values and from burst-free histories, where it can do no worse than
	// the smooth model; on the burst fit's own expansion a replicate can
	// hold stars in bins that expansion does not reach at its start (the
	// nuisance values of the two data fits differ), and the refit would
	// begin at likelihood zero. That expansion is the fallback.
	init := append(nestedStarts(smooth, burst, r0.Theta), f1.Theta)
	r1, err := refitAt(l, burst, nu, f0.morph, FitOptions{Starts: opts.ReplicateStarts, Seed: opts.Seed, Init: init}, r0.Nuisance)
	if err != nil {
		var err1 error
		if r1, err1 = refitAt(l, burst, nu, f1.morph, FitOptions{Starts: opts.ReplicateStarts, Seed: opts.Seed, Init: init}, f1.Nuisance); err1 != nil {
			return replicate{}, fmt.Errorf("%w (and on the burst fit's expansion: %v)", err, err1)
		}
	}
	out := replicate{lr: math.Max(0, 2*(r1.LogL-r0.LogL))}
	if out.d0, err = fitDeviance(l, r0, regs); err != nil {
		return replicate{}, err
	}
	if out.d1, err = fitDeviance(l, r1, regs); err != nil {
		return replicate{}, err
	}
	return out, nil
}

// parallelReplicates runs job(i) for i < n on workers goroutines, each
// with its own scratch slice of scratchLen values, and reports progress on
// the calling goroutine. Jobs write their results by index, so the outcome
// does not depend on the number of workers. The first error, or the
// context's, stops the run and is returned.
func parallelReplicates(ctx context.Context, n, workers int, progress func(done, total int), job func(i int, scratch []float64) error, scratchLen int) error {
	if progress != nil {
		progress(0, n) // the replicates begin (a progress bar times them from here)
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	inner, cancel := context.WithCancel(ctx)
	defer cancel()
	jobs := make(chan int)
	done := make(chan error)
	var wg sync.WaitGroup
	panics := workerpanic.New(cancel)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer panics.Catch()
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
	panics.Repanic()
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

// setAgeInterval records the burst age's profile interval and, where cal
// knows the law's calibration at the best age, the two combined.
func (r *BurstResult) setAgeInterval(iv Interval, cal func(float64) (float64, bool)) {
	r.AgeIntervalProfile, r.AgeInterval, r.AgeCalibrationSigma = iv, iv, 0
	if cal == nil || !(iv.Best > 0) {
		return
	}
	if s, ok := cal(iv.Best); ok && s > 0 {
		r.AgeCalibrationSigma = s
		r.AgeInterval = WithCalibration(iv, s)
	}
}

// RivalAge is another maximum of the burst fit that the age interval does
// not hold: its burst age, how far below the best it lies in ln L, and
// that distance divided by the dispersion (as the interval's levels are).
type RivalAge struct {
	AgeGyr, DeltaLogL, ScaledDelta float64
}

// RivalAges returns the burst fit's other maxima (FitResult.OtherMaxima)
// that lie inside the 95 % level of ln L — Δ ln L / φ̂ ≤ ½χ²₁(0.95), φ̂
// the dispersion when above 1 — with a burst age outside the 95 %
// interval: answers the data cannot tell from the best one that the
// interval, drawn about one maximum, leaves out.
func (r *BurstResult) RivalAges() []RivalAge {
	age := -1
	for i, n := range r.Burst.Names {
		if n == r.AgeParam {
			age = i
		}
	}
	if age < 0 {
		return nil
	}
	phi := math.Max(r.Dispersion, 1)
	var out []RivalAge
	for _, o := range r.Burst.OtherMaxima {
		d := r.Burst.LogL - o.LogL
		a := o.Theta[age]
		if d/phi <= dLogL95 && (a < r.AgeInterval.Lo95 || a > r.AgeInterval.Hi95) {
			out = append(out, RivalAge{AgeGyr: a, DeltaLogL: d, ScaledDelta: d / phi})
		}
	}
	return out
}
