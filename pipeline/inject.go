package pipeline

import (
	"context"
	"fmt"
	"slices"
	"strings"
	"time"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/compare/stats"
	"spinpop/scenarios"
)

// DetectionP is the p-value below which the burst test counts as a
// detection in injection–recovery (common practice, no source).
const DetectionP = 0.01

// InjectionError says why an injected value cannot be recovered by the
// scenario's fit. Option names what was wrong ("ages_gyr", "fractions",
// or "" for the scenario itself).
type InjectionError struct {
	Option string
	Msg    string
}

func (e *InjectionError) Error() string {
	if e.Option == "" {
		return e.Msg
	}
	return e.Option + ": " + e.Msg
}

// CheckInjections returns the burst model's age and fraction parameter
// names, and says which injected values the fit could not recover: an
// injected age outside the free age's range, a fraction outside the free
// fraction's range. Check before building templates: a burst the fit
// cannot reach would be a wasted hour.
func CheckInjections(s *scenarios.Scenario, ages, fracs []float64) (ageParam, fracParam string, err error) {
	part := s.Compare.BurstPart
	ageParam, fracParam = part+".age_gyr", part+".mass_fraction"
	// The same rule as assemble.Hypotheses: without any free parameter of
	// the burst part, the default ones are freed.
	free := s.Compare.Free
	if !slices.ContainsFunc(free, func(f scenarios.FreeParam) bool { return strings.HasPrefix(f.Path, "history."+part+".") }) {
		free = append(slices.Clone(free), scenarios.DefaultFree(part, s.History.MaxAgeGyr)...)
	}
	var ageFree, fracFree *scenarios.FreeParam
	for i, f := range free {
		switch f.Path {
		case "history." + ageParam:
			ageFree = &free[i]
		case "history." + fracParam:
			fracFree = &free[i]
		}
	}
	if ageFree == nil {
		return "", "", &InjectionError{"", fmt.Sprintf("injection–recovery measures how well the burst age is found, but compare.free does not free history.%s; add it", ageParam)}
	}
	lo, hi := ageFree.Min, ageFree.Max
	for _, a := range ages {
		if a < lo || a > hi {
			return "", "", &InjectionError{"ages_gyr", fmt.Sprintf("%g Gyr lies outside [%g, %g] Gyr, the range in which the fit looks for the burst (compare.free history.%s)", a, lo, hi, ageParam)}
		}
	}
	if fracFree != nil {
		for _, f := range fracs {
			if f < fracFree.Min || f > fracFree.Max {
				return "", "", &InjectionError{"fractions", fmt.Sprintf("%g lies outside [%g, %g], the range the fit allows (compare.free history.%s)", f, fracFree.Min, fracFree.Max, fracParam)}
			}
		}
	}
	return ageParam, fracParam, nil
}

// InjectOptions describe an injection–recovery sweep.
type InjectOptions struct {
	AgesGyr, Fractions []float64 // injected bursts: every age with every fraction
	Replicates         int       // mock catalogs per cell, and of the smooth history
	Stars              int       // stars per mock; 0: as many as the catalog compares
	Bootstrap          int       // 0: one calibrated null of NullMocks mocks; else a bootstrap per mock
	NullMocks          int
	Seed               uint64 // of the mocks; 0: run.seed
	Progress           func(done, total int)
}

// Jobs is the number of burst tests the sweep runs.
func (o InjectOptions) Jobs() int {
	jobs := o.Replicates * (1 + len(o.AgesGyr)*len(o.Fractions))
	if o.Bootstrap == 0 {
		jobs += o.NullMocks
	}
	return jobs
}

// Inject runs injection–recovery: mock catalogs drawn from the templates
// under the smooth history with bursts injected, and under the smooth
// history alone, each put through the burst test.
func (c *Comparison) Inject(ctx context.Context, o InjectOptions) (*InjectReport, error) {
	ageParam, fracParam, err := CheckInjections(c.Scenario, o.AgesGyr, o.Fractions)
	if err != nil {
		return nil, InputError{err}
	}
	n := o.Stars
	if n == 0 {
		n = c.Observed.N
	}
	sweep := compare.InjectionSweep{
		BurstAgesGyr: o.AgesGyr, BurstFractions: o.Fractions, Replicates: o.Replicates, NStars: n,
		Seed: c.Scenario.Run.Seed, Workers: c.Workers, Bootstrap: o.Bootstrap, NullMocks: o.NullMocks,
		AgeParam: ageParam, FractionParam: fracParam, Progress: o.Progress,
	}
	if o.Seed != 0 {
		sweep.Seed = o.Seed
	}
	start := time.Now()
	ir, err := compare.InjectRecover(ctx, c.Templates, assemble.LikeOptions(c.Scenario), c.Smooth, c.Burst, sweep)
	if err != nil {
		return nil, err
	}
	rep, err := newInjectReport(c, sweep, ir, n == c.Observed.N)
	if err != nil {
		return nil, err
	}
	rep.Seconds = time.Since(start).Seconds()
	return rep, nil
}

// InjectReport is what injection–recovery found, as inject.json holds it.
type InjectReport struct {
	ReportHead
	Method         string       `json:"calibration"`
	Seed           uint64       `json:"seed"`
	Threads        int          `json:"threads"`
	StarsPerMock   int          `json:"stars_per_mock"`
	LikeYours      bool         `json:"mock_size_is_catalog_size"`
	Replicates     int          `json:"replicates"`
	NullMocks      int          `json:"null_mocks"`
	Bootstrap      int          `json:"bootstrap_per_mock"`
	DetectionP     float64      `json:"detection_p_below"`
	AgeParam       string       `json:"age_parameter"`
	FractionParam  string       `json:"fraction_parameter"`
	AgesGyr        []float64    `json:"injected_ages_gyr"`
	Fractions      []float64    `json:"injected_fractions"`
	FalseAlarm     FalseAlarms  `json:"false_alarms"`
	Cells          []InjectCell `json:"cells"`
	NullLRs        []float64    `json:"null_likelihood_ratios,omitempty"`
	Seconds        float64      `json:"seconds"`
	Outputs        []string     `json:"outputs"`
	FalseAlarmNote string       `json:"false_alarm_note"`
}

// FalseAlarms are the smooth-history mocks' results.
type FalseAlarms struct {
	Mocks   int       `json:"mocks"`
	Rate    float64   `json:"rate_p_below_0_01"`
	Lo68    float64   `json:"rate_p_below_0_01_lo68"`
	Hi68    float64   `json:"rate_p_below_0_01_hi68"`
	Rate05  float64   `json:"rate_p_below_0_05"`
	Lo68_05 float64   `json:"rate_p_below_0_05_lo68"`
	Hi68_05 float64   `json:"rate_p_below_0_05_hi68"`
	PValues []float64 `json:"p_values"`
}

// InjectCell is one injected (age, fraction) and what became of it.
type InjectCell struct {
	AgeGyr           float64   `json:"injected_age_gyr"`
	Fraction         float64   `json:"injected_fraction"`
	Detected         int       `json:"detected"`
	DetectionRate    float64   `json:"detection_rate"`
	DetLo68          float64   `json:"detection_rate_lo68"`
	DetHi68          float64   `json:"detection_rate_hi68"`
	MedianAgeGyr     float64   `json:"recovered_age_median_gyr"`
	AgeQ16Gyr        float64   `json:"recovered_age_q16_gyr"`
	AgeQ84Gyr        float64   `json:"recovered_age_q84_gyr"`
	AgeBiasMedianGyr float64   `json:"age_bias_median_gyr"`
	AgeBiasQ16Gyr    float64   `json:"age_bias_q16_gyr"`
	AgeBiasQ84Gyr    float64   `json:"age_bias_q84_gyr"`
	Coverage68       float64   `json:"coverage_of_68_interval"`
	PValues          []float64 `json:"p_values"`
	LRs              []float64 `json:"likelihood_ratios"`
	RecoveredAgesGyr []float64 `json:"recovered_ages_gyr"`
}

func newInjectReport(c *Comparison, sw compare.InjectionSweep, ir *compare.InjectionResult, likeYours bool) (*InjectReport, error) {
	rep := &InjectReport{
		ReportHead: c.reportHead(), Method: ir.Method, Seed: sw.Seed, Threads: c.Workers, StarsPerMock: sw.NStars,
		LikeYours: likeYours, Replicates: sw.Replicates, Bootstrap: sw.Bootstrap, DetectionP: DetectionP,
		AgeParam: sw.AgeParam, FractionParam: sw.FractionParam, AgesGyr: sw.BurstAgesGyr, Fractions: sw.BurstFractions,
		NullLRs:        finiteOnly(ir.NullLRs),
		FalseAlarmNote: "share of smooth-history mocks in which the burst test reaches the p-value named; a well-calibrated test gives about that share",
	}
	if sw.Bootstrap == 0 {
		rep.NullMocks = len(ir.NullLRs)
	}
	fa := FalseAlarms{Mocks: len(ir.FalseAlarmP), PValues: ir.FalseAlarmP}
	var k01, k05 int
	for _, p := range ir.FalseAlarmP {
		if p < DetectionP {
			k01++
		}
		if p < 0.05 {
			k05++
		}
	}
	var err error
	if fa.Mocks > 0 {
		fa.Rate, fa.Rate05 = float64(k01)/float64(fa.Mocks), float64(k05)/float64(fa.Mocks)
		if fa.Lo68, fa.Hi68, err = stats.WilsonInterval(k01, fa.Mocks, 0.6827); err != nil {
			return nil, err
		}
		if fa.Lo68_05, fa.Hi68_05, err = stats.WilsonInterval(k05, fa.Mocks, 0.6827); err != nil {
			return nil, err
		}
	}
	rep.FalseAlarm = fa
	for _, cell := range ir.Cells {
		ages := slices.Sorted(slices.Values(cell.RecoveredAgesGyr))
		bias := make([]float64, len(ages))
		for i, a := range ages {
			bias[i] = a - cell.AgeGyr
		}
		q := stats.QuantileSorted
		rep.Cells = append(rep.Cells, InjectCell{
			AgeGyr: cell.AgeGyr, Fraction: cell.Fraction, Detected: cell.Detected, DetectionRate: cell.DetectionRate,
			DetLo68: cell.DetLo68, DetHi68: cell.DetHi68,
			MedianAgeGyr: q(ages, 0.5), AgeQ16Gyr: q(ages, 0.16), AgeQ84Gyr: q(ages, 0.84),
			AgeBiasMedianGyr: q(bias, 0.5), AgeBiasQ16Gyr: q(bias, 0.16), AgeBiasQ84Gyr: q(bias, 0.84),
			Coverage68: cell.Coverage68, PValues: cell.PValues, LRs: finiteOnly(cell.LRs), RecoveredAgesGyr: cell.RecoveredAgesGyr,
		})
	}
	return rep, nil
}
