package assemble

import (
	"fmt"
	"strings"

	"spinpop/compare"
	"spinpop/compare/catalog"
	"spinpop/scenarios"
)

// templateSections are the parts of a scenario the templates depend on:
// everything that changes which stars exist, where they are, how they spin
// and how the survey sees them, plus the comparison space and the template
// run itself. The history is not among them — that is the point of
// templates — nor are the data, the statistics settings or the outputs.
var templateSections = []string{
	"run.seed", "run.chunk_stars", "imf", "history.max_age_gyr", "disk", "dust", "stars", "spin", "survey", "cuts",
	"compare.color_bins", "compare.log_period_bins", "compare.period_min_d", "compare.period_max_d",
	"compare.height_edges_pc", "compare.template_stars",
}

// TemplateKey is the hash of the scenario parts the templates depend on: a
// cached template set with this key can be reused.
func TemplateKey(r *scenarios.Resolved) (string, error) { return r.PartHash(templateSections...) }

// Space is the comparison space of a scenario: B−V between the
// catalogue's color cut, log period within the compare range, |z| bins.
func Space(s *scenarios.Scenario) (compare.Space, error) {
	c := s.Compare
	sp, err := compare.NewSpace(s.Cuts.BVMin, s.Cuts.BVMax, c.ColorBins, c.PeriodMinD, c.PeriodMaxD, c.LogPeriodBins, c.HeightEdgesPc)
	if err != nil {
		return compare.Space{}, fmt.Errorf("compare: %w", err)
	}
	return sp, nil
}

// Mapping turns [data.columns] into the catalog reader's column mapping.
func Mapping(s *scenarios.Scenario) catalog.Mapping {
	c := s.Data.Columns
	return catalog.Mapping{Period: c.PeriodD, Color: c.BV, AbsMag: c.AbsMagV, Height: c.HeightPc, AppMag: c.AppMagV,
		Parallax: c.ParallaxMas, RA: c.RADeg, Dec: c.DecDeg, L: c.LDeg, B: c.BDeg}
}

// LikeOptions are the likelihood settings of [compare].
func LikeOptions(s *scenarios.Scenario) compare.LikeOptions {
	return compare.LikeOptions{Normalisation: s.Compare.Normalisation, TemplateNoise: s.Compare.TemplateNoise}
}

// Hypotheses are the two star-formation-history families of the
// burst-versus-smooth test, built from the scenario: the burst model is the
// scenario's history with compare.free varied; the smooth model is the same
// history without the burst part, with the free parameters that do not
// belong to the burst. A scenario without the burst part gets one (a
// Gaussian burst at 0.6 Gyr, width 0.05 Gyr, 10 % of the mass) and, when
// compare.free names none of its keys, the default burst parameters.
func Hypotheses(s *scenarios.Scenario, ageEdgesGyr []float64) (smooth, burst compare.HistoryModel, err error) {
	name := s.Compare.BurstPart
	withBurst := *s
	withBurst.History.Parts = make(map[string]scenarios.Part, len(s.History.Parts)+1)
	for k, v := range s.History.Parts {
		withBurst.History.Parts[k] = v
	}
	free := s.Compare.Free
	if _, ok := withBurst.History.Parts[name]; !ok {
		withBurst.History.Parts[name] = scenarios.Part{Kind: "burst", Values: map[string]float64{"age_gyr": min(0.6, s.History.MaxAgeGyr/2), "width_gyr": 0.05, "mass_fraction": 0.1}}
	}
	prefix := "history." + name + "."
	hasBurstFree := false
	for _, f := range free {
		if strings.HasPrefix(f.Path, prefix) {
			hasBurstFree = true
		}
	}
	if !hasBurstFree {
		free = append(append([]scenarios.FreeParam(nil), free...), scenarios.DefaultFree(name, s.History.MaxAgeGyr)...)
	}
	withoutBurst := withBurst
	withoutBurst.History.Parts = make(map[string]scenarios.Part, len(withBurst.History.Parts))
	for k, v := range withBurst.History.Parts {
		if k != name {
			withoutBurst.History.Parts[k] = v
		}
	}
	hb, err := History(&withBurst)
	if err != nil {
		return smooth, burst, err
	}
	hs, err := History(&withoutBurst)
	if err != nil {
		return smooth, burst, fmt.Errorf("the history without part %q: %w", name, err)
	}
	var fb, fs []compare.FreeParam
	for _, f := range free {
		p := compare.FreeParam{Name: strings.TrimPrefix(f.Path, "history."), Min: f.Min, Max: f.Max, LogPrior: f.Prior == "log-uniform"}
		fb = append(fb, p)
		if !strings.HasPrefix(f.Path, prefix) {
			fs = append(fs, p)
		}
	}
	burst = compare.HistoryModel{Base: hb, Free: fb, AgeEdgesGyr: ageEdgesGyr}
	smooth = compare.HistoryModel{Base: hs, Free: fs, AgeEdgesGyr: ageEdgesGyr}
	if err := burst.Validate(); err != nil {
		return smooth, burst, fmt.Errorf("compare.free: %w", err)
	}
	if err := smooth.Validate(); err != nil {
		return smooth, burst, fmt.Errorf("compare.free: %w", err)
	}
	return smooth, burst, nil
}
