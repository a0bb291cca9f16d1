package pipeline

import (
	"context"
	"math"
	"math/rand/v2"

	"spinpop/compare/stats"
	"spinpop/model"
)

// Score is the comparison of one history with the observed catalog: its
// binned likelihood, Pearson residuals, and two-sample tests of the
// unbinned marginals against a synthetic catalog of the scenario.
type Score struct {
	Label  string    // "as written" or "fitted"
	Theta  []float64 // the burst model's free parameters
	Names  []string  // their names ("burst.age_gyr")
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

// Score scores the scenario's history as written or, with fit, at the
// best-fitting values of the burst model's free parameters.
func (c *Comparison) Score(ctx context.Context, fit bool) (*Score, error) {
	theta := c.Burst.Default()
	label := "as written"
	if fit {
		fr, err := c.Fit(c.Burst)
		if err != nil {
			return nil, err
		}
		theta, label = fr.Theta, "fitted"
	}
	w, err := c.Burst.Weights(theta)
	if err != nil {
		return nil, err
	}
	sc := &Score{Label: label, Theta: theta, Names: c.Burst.Names(), LogL: c.Likelihood.LogL(w), Counts: c.Likelihood.Counts(),
		Mu: c.Likelihood.Expected(w, nil), Resid: c.Likelihood.PearsonResiduals(w), Marginals: map[string]MarginalTest{}}
	for i, r := range sc.Resid {
		if sc.Mu[i] > 0 {
			sc.PearsonChi2 += r * r
			sc.NumBins++
		}
	}

	// Unbinned marginals against a synthetic catalog of the scenario.
	hist, err := c.Burst.History(theta)
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
// and star count) and keeps the catalogue stars inside the comparison
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
			if !ch.Flags[i].Selected() || sp.Index(ch.ObsBV[i], ch.MeasPeriodD[i], math.Abs(ch.ZPc[i])) < 0 {
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
