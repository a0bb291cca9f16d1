package assemble

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"strings"

	"spinpop/compare"
	"spinpop/compare/catalog"
	"spinpop/model"
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
	"compare.height_edges_pc", "compare.template_stars", "compare.color_axis",
}

// modelRevision names the state of the physics in code that the templates
// depend on beyond the scenario's keys (relation table, laws, stall
// shape). Change it whenever such code changes what stars a scenario
// makes, so that templates cached by an older program are not reused.
const modelRevision = "2: published mean dwarf sequence, smoothed; stall of issue 9"

// TemplateKey is the hash of the scenario parts the templates depend on,
// and of modelRevision: a cached template set with this key can be reused.
func TemplateKey(r *scenarios.Resolved) (string, error) {
	h, err := r.PartHash(templateSections...)
	if err != nil {
		return "", err
	}
	sum := sha256.Sum256([]byte(h + "\n" + modelRevision))
	return hex.EncodeToString(sum[:]), nil
}

// Space is the comparison space of a scenario: B−V between the
// catalog's color cut, log period within the compare range, |z| bins.
func Space(s *scenarios.Scenario) (compare.Space, error) {
	c := s.Compare
	sp, err := compare.NewSpace(s.Cuts.BVMin, s.Cuts.BVMax, c.ColorBins, c.PeriodMinD, c.PeriodMaxD, c.LogPeriodBins, c.HeightEdgesPc)
	if err != nil {
		return compare.Space{}, fmt.Errorf("compare: %w", err)
	}
	sp.Dereddened = c.ColorAxis == "dereddened"
	return sp, nil
}

// Mapping turns [data.columns] into the catalog reader's column mapping.
func Mapping(s *scenarios.Scenario) catalog.Mapping {
	c := s.Data.Columns
	return catalog.Mapping{Period: c.PeriodD, Color: c.BV, AbsMag: c.AbsMagV, Height: c.HeightPc, AppMag: c.AppMagV,
		Parallax: c.ParallaxMas, RA: c.RADeg, Dec: c.DecDeg, L: c.LDeg, B: c.BDeg}
}

// LikeOptions are the likelihood settings of [compare].
// AsWritten is the scenario's own history, nothing added, with the free
// history parameters of compare.free that name its parts: what `compare`
// scores. (Hypotheses adds a burst part when the scenario has none; a
// history as written must not get one.)
func AsWritten(s *scenarios.Scenario, ageEdgesGyr []float64) (compare.HistoryModel, error) {
	h, err := History(s)
	if err != nil {
		return compare.HistoryModel{}, err
	}
	var free []compare.FreeParam
	for _, f := range s.Compare.Free {
		if scenarios.IsNuisancePath(s, f.Path) {
			continue
		}
		pieces := strings.SplitN(f.Path, ".", 3)
		if len(pieces) != 3 {
			continue
		}
		if _, ok := s.History.Parts[pieces[1]]; !ok {
			continue
		}
		free = append(free, compare.FreeParam{Name: strings.TrimPrefix(f.Path, "history."), Min: f.Min, Max: f.Max, LogPrior: f.Prior == "log-uniform"})
	}
	m := compare.HistoryModel{Base: h, Free: free, AgeEdgesGyr: ageEdgesGyr}
	if err := m.Validate(); err != nil {
		return m, fmt.Errorf("compare.free: %w", err)
	}
	return m, nil
}

// NuisanceParams returns the nuisance parameters of compare.free (the
// non-history paths), each centred on the scenario's value, with its
// gaussian prior's width (the published uncertainty where sigma is 0) or
// a flat prior.
func NuisanceParams(s *scenarios.Scenario) ([]compare.NuisanceParam, error) {
	var out []compare.NuisanceParam
	for _, f := range s.Compare.Free {
		if !scenarios.IsNuisancePath(s, f.Path) || !scenarios.ActiveNuisance(s, f.Path) {
			continue // a history parameter, or another law's option
		}
		nom, err := scenarios.NuisanceNominal(s, f.Path)
		if err != nil {
			return nil, err
		}
		p := compare.NuisanceParam{Name: f.Path, Nominal: nom, Min: f.Min, Max: f.Max, Starts: f.Starts, Linear: scenarios.IsLinearPath(f.Path)}
		if f.Prior == "gaussian" {
			p.Sigma = f.Sigma
			if p.Sigma == 0 {
				p.Sigma, _ = scenarios.DefaultSigma(s, f.Path)
			}
			// Steps of a prior width, but never beyond a quarter of the
			// range: a wide prior on a short range still gets an
			// expansion that resolves the range.
			p.Step = math.Min(p.Sigma, (f.Max-f.Min)/4)
		}
		out = append(out, p)
	}
	return out, nil
}

// WeightParamOf returns the model's parameter that a nuisance path sets
// when that parameter only re-weights stored stars and the path's value is
// the parameter's own (observing sets them one to one): the templates'
// derivatives in it then come with the templates (model.WeightParam).
// The spots' saturation is not one: see model's weightslopes.go.
func WeightParamOf(path string) (model.WeightParam, bool) {
	switch path {
	case "stars.binary_fraction_scale":
		return model.BinaryShare, true
	case "spin.spots.slope":
		return model.SpotSlope, true
	case "survey.detection_snr":
		return model.DetectionThreshold, true
	case "spin.spots.amp_sat_ppm":
		return model.SpotAmplitude, true
	case "survey.detection_sharpness":
		return model.DetectionSharpness, true
	case "spin.spots.scatter_dex":
		return model.SpotScatter, true
	}
	return 0, false
}

// BankMargin returns the margins the template bank needs for the color
// calibration to move within its free range: the largest color shift the
// bounds of survey.color_offset_mag and survey.color_scale allow over the
// color cut, plus 0.01 mag.
func BankMargin(s *scenarios.Scenario) model.BankMargin {
	off, scale := s.Survey.ColorOffsetMag, s.Survey.ColorScale
	offLo, offHi, scLo, scHi := off, off, scale, scale
	for _, f := range s.Compare.Free {
		switch f.Path {
		case "survey.color_offset_mag":
			offLo, offHi = f.Min, f.Max
		case "survey.color_scale":
			scLo, scHi = f.Min, f.Max
		}
	}
	if offLo == off && offHi == off && scLo == scale && scHi == scale {
		return model.BankMargin{}
	}
	shift := 0.0
	for _, o := range []float64{offLo, offHi} {
		for _, sc := range []float64{scLo, scHi} {
			for _, bv := range []float64{s.Cuts.BVMin, s.Cuts.BVMax} {
				c := model.ColorCalibration{OffsetMag: o, Scale: sc}
				nom := model.ColorCalibration{OffsetMag: off, Scale: scale}
				shift = math.Max(shift, math.Abs(c.Apply(nom.Invert(bv))-bv))
			}
		}
	}
	return model.BankMargin{ColorMag: shift + 0.01}
}

func LikeOptions(s *scenarios.Scenario) compare.LikeOptions {
	// Within each color × height cell needs the heights compared: the
	// 3-D comparison. The other normalisations compare the (color,
	// period) plane; heights enter the height check only.
	return compare.LikeOptions{Normalisation: s.Compare.Normalisation, TemplateNoise: s.Compare.TemplateNoise,
		Use3D: s.Compare.Normalisation == compare.NormPerColorHeight}
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
		if scenarios.IsNuisancePath(s, f.Path) {
			continue // fitted with both hypotheses: see NuisanceParams
		}
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
