package pipeline

import (
	"context"
	"fmt"
	"math"
	"strings"
	"time"

	"spinpop/compare"
	"spinpop/internal/grid"
)

// NotConvergedWarning starts the warning given when any parameter's chain
// is shorter than 50 autocorrelation times.
const NotConvergedWarning = "chain shorter than 50 autocorrelation times: run longer (--steps)"

// PosteriorOptions describe a posterior sampling run.
type PosteriorOptions struct {
	Walkers, Steps, Burn int
	Seed                 uint64 // 0: run.seed
	Progress             func(done, total int)
}

// PosteriorReport summarises the posterior, as posterior.json holds it.
type PosteriorReport struct {
	ReportHead
	Seed               uint64           `json:"seed"`
	Walkers            int              `json:"walkers"`
	Steps              int              `json:"steps"`
	Burn               int              `json:"burn"`
	Parameters         []PosteriorParam `json:"parameters"`
	AcceptanceMean     float64          `json:"acceptance_fraction_mean"`
	AcceptanceFraction []float64        `json:"acceptance_fraction_per_walker"`
	Converged          bool             `json:"converged"`
	MAPLogPosterior    float64          `json:"map_log_posterior"`
	SFH                SFHBand          `json:"star_formation_history"`
	Warnings           []string         `json:"warnings"`
	Seconds            float64          `json:"seconds"`
	Outputs            []string         `json:"outputs"`
}

// PosteriorParam summarises one free parameter.
type PosteriorParam struct {
	Name      string   `json:"name"`
	PriorMin  float64  `json:"prior_min"`
	PriorMax  float64  `json:"prior_max"`
	Prior     string   `json:"prior"`
	Median    float64  `json:"median"`
	Q16       float64  `json:"q16"`
	Q84       float64  `json:"q84"`
	MAP       float64  `json:"map"`
	Tau       *float64 `json:"autocorr_time_steps"` // null when it cannot be estimated
	Converged bool     `json:"converged"`
}

// SFHBand is the star-formation rate's posterior on an age grid (share of
// all mass formed per Gyr).
type SFHBand struct {
	AgeGyr  []float64 `json:"age_gyr"`
	Median  []float64 `json:"rate_median_per_gyr"`
	Q16     []float64 `json:"rate_q16_per_gyr"`
	Q84     []float64 `json:"rate_q84_per_gyr"`
	MAPRate []float64 `json:"rate_map_per_gyr"`
}

// Posterior samples the posterior of the burst model's free parameters
// with the affine-invariant ensemble sampler and summarises it.
func (c *Comparison) Posterior(ctx context.Context, o PosteriorOptions) (*compare.Posterior, *PosteriorReport, error) {
	d := c.Burst.Dim()
	if d == 0 {
		return nil, nil, InputError{fmt.Errorf("%s: the burst model has no free parameter; list some in [[compare.free]]", c.Source)}
	}
	if o.Walkers < 2*d {
		return nil, nil, InputError{fmt.Errorf("walkers %d are too few for %d free parameters; use at least %d", o.Walkers, d, 2*d)}
	}
	opts := compare.PosteriorOptions{Walkers: o.Walkers, Steps: o.Steps, Burn: o.Burn, Seed: c.Scenario.Run.Seed, Progress: o.Progress}
	if o.Seed != 0 {
		opts.Seed = o.Seed
	}
	start := time.Now()
	post, err := compare.SamplePosterior(ctx, c.Likelihood, c.Burst, opts)
	if err != nil {
		return nil, nil, err
	}
	rep, err := newPosteriorReport(c, post, opts.Seed)
	if err != nil {
		return nil, nil, err
	}
	rep.Seconds = time.Since(start).Seconds()
	return post, rep, nil
}

func newPosteriorReport(c *Comparison, post *compare.Posterior, seed uint64) (*PosteriorReport, error) {
	s := c.Scenario
	rep := &PosteriorReport{
		ReportHead: c.reportHead(), Seed: seed, Walkers: post.Walkers, Steps: post.Steps, Burn: post.Burn,
		AcceptanceFraction: post.AcceptanceFraction, Converged: true, Warnings: []string{},
		MAPLogPosterior: math.Inf(-1),
	}
	for _, a := range post.AcceptanceFraction {
		rep.AcceptanceMean += a / float64(len(post.AcceptanceFraction))
	}
	for _, lp := range post.LogProb {
		rep.MAPLogPosterior = math.Max(rep.MAPLogPosterior, lp)
	}
	var unconverged []string
	for i, f := range c.Burst.Free {
		prior := "uniform"
		if f.LogPrior {
			prior = "log-uniform"
		}
		p := PosteriorParam{Name: f.Name, PriorMin: f.Min, PriorMax: f.Max, Prior: prior,
			Median: post.Median[i], Q16: post.Q16[i], Q84: post.Q84[i], MAP: post.MAP[i], Converged: post.Converged[i]}
		if t := post.AutocorrTime[i]; !math.IsNaN(t) && !math.IsInf(t, 0) {
			p.Tau = &t
		} else {
			p.Converged = false
		}
		if !p.Converged {
			rep.Converged = false
			unconverged = append(unconverged, f.Name)
		}
		rep.Parameters = append(rep.Parameters, p)
	}
	if !rep.Converged {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s (%s); the quantiles may be wrong", NotConvergedWarning, strings.Join(unconverged, ", ")))
	}
	if rep.AcceptanceMean < 0.1 || rep.AcceptanceMean > 0.9 {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("mean acceptance fraction %.2f lies outside 0.1–0.9, where the ensemble sampler moves poorly; check chain.csv", rep.AcceptanceMean))
	}
	band, err := c.SFHBandAt(post, grid.Linspace(0, s.History.MaxAgeGyr, 801))
	if err != nil {
		return nil, err
	}
	rep.SFH = band
	return rep, nil
}

// SFHBandAt is the posterior's star-formation-rate band and the best
// sample's rate at ages.
func (c *Comparison) SFHBandAt(post *compare.Posterior, ages []float64) (SFHBand, error) {
	med, lo, hi, err := post.SFHBand(c.Burst, ages)
	if err != nil {
		return SFHBand{}, err
	}
	h, err := c.Burst.History(post.MAP)
	if err != nil {
		return SFHBand{}, err
	}
	mr := make([]float64, len(ages))
	for i, a := range ages {
		mr[i] = h.Rate(a)
	}
	return SFHBand{AgeGyr: ages, Median: med, Q16: lo, Q84: hi, MAPRate: mr}, nil
}

// BurstZoom is the age range of a plot around the burst: the burst age's
// 16–84 % range widened by four burst widths each side (the width's 84 %
// quantile when free, else its fixed value), within the history. ok is
// false when the burst age is not a free parameter.
func (c *Comparison) BurstZoom(rep *PosteriorReport) (age PosteriorParam, lo, hi float64, ok bool) {
	part := c.Scenario.Compare.BurstPart
	var width PosteriorParam
	var haveWidth bool
	for _, p := range rep.Parameters {
		switch p.Name {
		case part + ".age_gyr":
			age, ok = p, true
		case part + ".width_gyr":
			width, haveWidth = p, true
		}
	}
	if !ok {
		return age, 0, 0, false
	}
	w := 0.05
	if haveWidth {
		w = width.Q84
	} else {
		for _, p := range c.Burst.Base.Params() {
			if p.Name == part+".width_gyr" {
				w = p.Value
			}
		}
	}
	return age, math.Max(0, age.Q16-4*w), math.Min(c.Scenario.History.MaxAgeGyr, age.Q84+4*w), true
}
