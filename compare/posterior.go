package compare

import (
	"context"
	"fmt"
	"math"
	"slices"

	"spinpop/compare/stats"
)

// PosteriorOptions control SamplePosterior.
type PosteriorOptions struct {
	Walkers int    // 0: max(4·dim, 16), rounded up to even
	Steps   int    // steps per walker after the start (0: 2000)
	Burn    int    // steps dropped from the summaries (0: Steps/4)
	Seed    uint64 // the sampler's stream
	// Progress, if not nil, is called after each step.
	Progress func(done, total int)
}

// Posterior is a sample of the free parameters' posterior.
type Posterior struct {
	Names   []string
	Walkers int
	Steps   int
	Burn    int
	// Chain holds every stored position: Chain[(s·Walkers + w)·dim + i].
	Chain   []float64
	LogProb []float64 // per stored position, s·Walkers + w
	// AcceptanceFraction per walker; 0.2–0.5 is healthy for the stretch
	// move (common practice).
	AcceptanceFraction []float64
	// AutocorrTime per parameter (steps), after Burn; Converged is false
	// for a parameter whose chain is shorter than 50 τ, where neither τ
	// nor the quantiles are to be trusted (common practice; Sokal 1997).
	AutocorrTime []float64
	Converged    []bool
	Median       []float64
	Q16, Q84     []float64
	MAP          []float64 // the best stored position
}

// SamplePosterior samples p(θ | data) ∝ L(θ) π(θ) with the affine-invariant
// ensemble sampler (Goodman & Weare 2010; stats.Ensemble), priors uniform
// or log-uniform inside the FreeParam bounds. Walkers start in a small
// ball (10⁻³ of each range) around the maximum-likelihood fit, inside the
// bounds. ctx is checked between steps; cancelling returns ctx.Err().
func SamplePosterior(ctx context.Context, like *Likelihood, m HistoryModel, opts PosteriorOptions) (*Posterior, error) {
	d := m.Dim()
	if d == 0 {
		return nil, fmt.Errorf("compare: the history model has no free parameter to sample")
	}
	if opts.Walkers <= 0 {
		opts.Walkers = max(4*d, 16)
	}
	opts.Walkers += opts.Walkers % 2
	if opts.Steps <= 0 {
		opts.Steps = 2000
	}
	if opts.Burn <= 0 {
		opts.Burn = opts.Steps / 4
	}
	if opts.Burn >= opts.Steps {
		return nil, fmt.Errorf("compare: burn-in of %d steps leaves nothing of %d steps", opts.Burn, opts.Steps)
	}
	best, err := Fit(like, m, FitOptions{Seed: opts.Seed})
	if err != nil {
		return nil, err
	}
	o := newObjective(like, m, nil, nil)
	logProb := func(x []float64) float64 {
		lp := m.logPrior(x)
		if math.IsInf(lp, -1) {
			return lp
		}
		return lp + o.logL(x)
	}
	r := replicateStream(opts.Seed, 0x7057)
	init := make([][]float64, opts.Walkers)
	for w := range init {
		x := make([]float64, d)
		for i, f := range m.Free {
			rng := f.Max - f.Min
			x[i] = math.Min(f.Max, math.Max(f.Min, best.Theta[i]+1e-3*rng*r.NormFloat64()))
		}
		init[w] = x
	}
	ens, err := stats.NewEnsemble(logProb, init, 2)
	if err != nil {
		return nil, fmt.Errorf("compare: posterior sampler: %w", err)
	}
	for s := range opts.Steps {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if err := ens.Run(r, 1, nil); err != nil {
			return nil, err
		}
		if opts.Progress != nil {
			opts.Progress(s+1, opts.Steps)
		}
	}
	post := &Posterior{Names: m.Names(), Walkers: opts.Walkers, Steps: opts.Steps, Burn: opts.Burn}
	post.Chain, _ = ens.Flat(0, 1)
	post.LogProb = make([]float64, opts.Steps*opts.Walkers)
	bestLP := math.Inf(-1)
	for s := range opts.Steps {
		for w := range opts.Walkers {
			lp := ens.LogProb(s, w)
			post.LogProb[s*opts.Walkers+w] = lp
			if lp > bestLP {
				bestLP = lp
				post.MAP = append([]float64(nil), ens.Position(s, w)...)
			}
		}
	}
	post.AcceptanceFraction = ens.AcceptanceFraction()
	post.AutocorrTime, post.Converged = ens.AutocorrTime(opts.Burn, 5)
	flat, n := ens.Flat(opts.Burn, 1)
	post.Median, post.Q16, post.Q84 = make([]float64, d), make([]float64, d), make([]float64, d)
	col := make([]float64, n)
	for i := range d {
		for j := range n {
			col[j] = flat[j*d+i]
		}
		slices.Sort(col)
		post.Median[i] = stats.QuantileSorted(col, 0.5)
		post.Q16[i] = stats.QuantileSorted(col, 0.16)
		post.Q84[i] = stats.QuantileSorted(col, 0.84)
	}
	return post, nil
}

// SFHBand returns, at each age of ageGrid, the median and the 16 and 84 %
// quantiles of the star-formation rate (per Gyr, unit total mass) over
// posterior draws after burn-in. At most 2000 draws are used, evenly
// thinned. m must be the model the posterior was sampled with (its Base
// supplies the fixed parameters).
func (p *Posterior) SFHBand(m HistoryModel, ageGrid []float64) (median, lo16, hi84 []float64, err error) {
	d := len(p.Names)
	if m.Dim() != d {
		return nil, nil, nil, fmt.Errorf("compare: the model has %d free parameters, the posterior %d", m.Dim(), d)
	}
	first := p.Burn * p.Walkers
	total := p.Steps*p.Walkers - first
	if total <= 0 {
		return nil, nil, nil, fmt.Errorf("compare: no posterior draws after burn-in")
	}
	stride := max(1, total/2000)
	rates := make([][]float64, len(ageGrid))
	for j := first; j < p.Steps*p.Walkers; j += stride {
		h, err := m.History(p.Chain[j*d : (j+1)*d])
		if err != nil {
			return nil, nil, nil, err
		}
		for a, age := range ageGrid {
			rates[a] = append(rates[a], h.Rate(age))
		}
	}
	median, lo16, hi84 = make([]float64, len(ageGrid)), make([]float64, len(ageGrid)), make([]float64, len(ageGrid))
	for a, r := range rates {
		slices.Sort(r)
		median[a], lo16[a], hi84[a] = stats.QuantileSorted(r, 0.5), stats.QuantileSorted(r, 0.16), stats.QuantileSorted(r, 0.84)
	}
	return median, lo16, hi84, nil
}
