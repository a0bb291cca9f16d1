package pipeline

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/compare/stats"
	"spinpop/model"
)

// Score is the comparison of one history with the observed catalog: its
// binned likelihood, Pearson residuals, and two-sample tests of the
// unbinned marginals against a synthetic catalog of the scenario.
type Score struct {
	Label string    // "as written" or "fitted"
	Theta []float64 // the free history parameters of the history as written
	Names []string  // their names ("burst.age_gyr")
	// Nuisance and NuisanceNames are the fitted nuisance parameters (their
	// scenario values as written).
	Nuisance      []float64
	NuisanceNames []string
	// Fit is the fit when ScoreOptions.Fit was set (its Rounds,
	// RoundLimit and LastGain say whether it finished); zero otherwise.
	Fit    compare.FitResult
	LogL   float64
	Counts []float64 // the data per comparison cell
	Mu     []float64 // the model's expectation per cell
	Resid  []float64 // Pearson residuals per cell
	// PearsonChi2 is Σ residual² over the NumBins cells with a model
	// expectation.
	PearsonChi2 float64
	NumBins     int
	// Marginals are the KS and Anderson–Darling tests of log10 period,
	// B−V and |z| ("log10_period", "b_v", "abs_z_pc"); a test that could
	// not be run is missing.
	Marginals map[string]MarginalTest
	// SyntheticStars is the size of the synthetic catalog.
	SyntheticStars int
	// GoodnessOfFit is the deviance calibrated by a parametric bootstrap
	// (nil when no replicates were asked for).
	GoodnessOfFit *compare.Adequacy
}

// MarginalTest is one marginal distribution, data against model.
// Its fields are in the order of their JSON names.
type MarginalTest struct {
	ADP        float64 `json:"ad_p"`
	ADPClamped bool    `json:"ad_p_clamped"`
	ADStat     float64 `json:"ad_statistic"`
	KSD        float64 `json:"ks_d"`
	KSP        float64 `json:"ks_p"`
}

// MarginalNames are the marginals Score tests, in report order.
var MarginalNames = []string{"log10_period", "b_v", "abs_z_pc"}

// ScoreOptions tune Score.
type ScoreOptions struct {
	Fit bool // fit the free parameters (history and nuisance) first
	// Replicates calibrate the goodness of fit (0: none); each is refitted
	// when Fit is set.
	Replicates int
	Progress   func(done, total int)
}

// Score scores the scenario's history as written — nothing added, its own
// free history parameters (assemble.AsWritten) — at its values or, with
// opts.Fit, at the best fit, and calibrates its goodness of fit.
func (c *Comparison) Score(ctx context.Context, opts ScoreOptions) (*Score, error) {
	hm, err := assemble.AsWritten(c.Scenario, c.Built.AgeEdgesGyr)
	if err != nil {
		return nil, InputError{fmt.Errorf("%s: %w", c.Source, err)}
	}
	theta := hm.Default()
	var fr compare.FitResult
	label := "as written"
	if opts.Fit {
		if fr, err = c.Fit(ctx, hm, nil); err != nil {
			return nil, err
		}
		theta, label = fr.Theta, "fitted"
	} else {
		w, err := hm.Weights(theta)
		if err != nil {
			return nil, err
		}
		fr = compare.FitResult{Theta: theta, Names: hm.Names(), Weights: w, LogL: c.Likelihood.LogL(w)}
	}
	sc := &Score{Label: label, Theta: theta, Names: hm.Names(), Nuisance: fr.Nuisance, NuisanceNames: fr.NuisanceNames, Marginals: map[string]MarginalTest{}}
	if opts.Fit {
		sc.Fit = fr
	}
	if opts.Replicates > 0 {
		a, err := compare.GoodnessOfFit(ctx, c.Likelihood, hm, fr, compare.GoFOptions{Replicates: opts.Replicates, Seed: c.Scenario.Run.Seed,
			Workers: c.Workers, Refit: opts.Fit, Nuisance: c.Nuisance, Progress: opts.Progress})
		if err != nil {
			return nil, err
		}
		sc.GoodnessOfFit = &a
	}
	if err := c.Likelihood.UseFit(fr); err != nil {
		return nil, err
	}
	w := fr.Weights
	sc.LogL, sc.Counts = fr.LogL, c.Likelihood.Counts()
	sc.Mu, sc.Resid = c.Likelihood.Expected(w, nil), c.Likelihood.PearsonResiduals(w)
	for i, r := range sc.Resid {
		if sc.Mu[i] > 0 {
			sc.PearsonChi2 += r * r
			sc.NumBins++
		}
	}

	// Unbinned marginals against a synthetic catalog of the scenario.
	hist, err := hm.History(theta)
	if err != nil {
		return nil, err
	}
	synth, err := c.syntheticMarginals(ctx, hist)
	if err != nil {
		return nil, err
	}
	sc.SyntheticStars = len(synth.logP)
	var dP, dC, dZ []float64
	for _, st := range c.Observed.Stars {
		dP = append(dP, math.Log10(st.PeriodD))
		dC = append(dC, st.BV)
		dZ = append(dZ, math.Abs(st.ZPc))
	}
	for i, m := range [][2][]float64{{dP, synth.logP}, {dC, synth.bv}, {dZ, synth.absZ}} {
		ks, err1 := stats.KS2Sample(m[0], m[1])
		ad, err2 := stats.AndersonKSample(m[0], m[1])
		if err1 != nil || err2 != nil {
			continue
		}
		sc.Marginals[MarginalNames[i]] = MarginalTest{KSD: ks.D, KSP: ks.PValue, ADStat: ad.Statistic, ADP: ad.PValue, ADPClamped: ad.Clamped}
	}
	return sc, nil
}

type marginals struct{ logP, bv, absZ []float64 }

// syntheticMarginals simulates the scenario with history h (its own seed
// and star count) and keeps the catalog stars inside the comparison
// space: the unbinned model sample for the marginal tests.
func (c *Comparison) syntheticMarginals(ctx context.Context, h interface {
	BinWeights([]float64) []float64
}) (*marginals, error) {
	pop := *c.Built.Population
	mass := h.BinWeights(c.Built.AgeEdgesGyr)
	pop.BinProb = make([]float64, len(mass))
	for k := range mass {
		pop.BinProb[k] = mass[k] * c.Built.Sampler.BinIntegral(k)
	}
	// Ages inside each bin: uniform, as in the templates.
	edges := c.Built.AgeEdgesGyr
	pop.Age = func(k int, r *rand.Rand) float64 { return edges[k] + (edges[k+1]-edges[k])*r.Float64() }
	if err := pop.Prepare(); err != nil {
		return nil, err
	}
	m := &marginals{}
	sp := c.Space
	s := c.Scenario
	err := model.RunChunks(ctx, s.Run.Seed, s.Run.StarsGenerated, s.Run.ChunkStars, c.Workers, pop.Fill, func(ch *model.Chunk) error {
		for i := 0; i < ch.N; i++ {
			// In the space by its column's color, compared by its color as
			// measured, as the catalog's stars are.
			if !ch.Flags[i].Selected() || sp.Index(sp.AxisColor(ch.ObsBV[i], ch.AV[i]), ch.MeasPeriodD[i], math.Abs(ch.ZPc[i])) < 0 {
				continue
			}
			m.logP = append(m.logP, math.Log10(ch.MeasPeriodD[i]))
			m.bv = append(m.bv, ch.ObsBV[i])
			m.absZ = append(m.absZ, math.Abs(ch.ZPc[i]))
		}
		return nil
	})
	return m, err
}
