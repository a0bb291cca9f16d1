package scenarios

import (
	"fmt"
	"math"
	"reflect"
	"slices"

	"spinpop/model/spin"
)

// Allowed values of the enumerated keys, in the order messages list them.
var (
	imfForms        = []string{"kroupa2001", "chabrier2003"}
	dustModels      = []string{"none", "exponential"}
	relationsTables = []string{"mean-dwarf-sequence"}
	turnovers       = []string{"cranmer-saar2011", "wright2018"}
	bands           = []string{"V", "Ks"}
	fieldKinds      = []string{"cone", "sphere", "cones"}
)

// Keys of a survey field by kind, and which of them have no default.
var (
	fieldKeys = map[string][]string{
		"cone":   {"b_deg", "distance_max_pc", "distance_min_pc", "l_deg", "radius_deg"},
		"sphere": {"distance_max_pc", "distance_min_pc"},
		"cones":  {"cones"},
	}
	fieldRequired = map[string][]string{
		"cone":   {"b_deg", "distance_max_pc", "l_deg", "radius_deg"},
		"sphere": {"distance_max_pc"},
		"cones":  {"cones"},
	}
)

// Physical and practical limits. Every speed, density and length of a
// scenario has a range, so that a typo of a few orders of magnitude is
// caught by check rather than met as a crawl, a panic or an empty run.
const (
	// MaxStars bounds run.stars_generated and compare.template_stars. At
	// the generator's ≈ 10⁶ stars/s per core, 10¹⁴ stars is three years of
	// one core; what one machine can do is judged at run time from a
	// measured cost (pipeline.Estimate), this only keeps counts far from
	// int64 overflow.
	MaxStars = 1e14
	// MinChunkStars and MaxChunkStars bound run.chunk_stars. Each worker
	// holds two chunks of about 250 bytes per star, so 2²⁰ stars is
	// ≈ 0.5 GB per worker; below 256 stars per chunk the per-chunk cost
	// (a new random stream, a hand-over between goroutines) dominates.
	MinChunkStars = 256
	MaxChunkStars = 1 << 20

	// Velocity dispersions: above the escape speed from the Galaxy near
	// the Sun, about 530 km/s (Piffl et al. 2014, A&A 562, A91; from
	// memory), a population is not a disk; the speed of light,
	// 299 792.458 km/s (exact, SI definition of the metre), is far beyond.
	// Below 1 km/s, colder than the gas stars form from (common practice),
	// the disk is too thin to sample.
	minSigmaKms = 1
	maxSigmaKms = 500
	sigmaWhy    = "a disk population's dispersion lies between that of the gas stars form from, a few km/s, and the Galaxy's escape speed near the Sun, about 530 km/s (Piffl et al. 2014, A&A 562, A91); nothing moves faster than light, 299792.458 km/s"

	// maxLengthPc bounds distances and heights: the stellar disk ends
	// within about 15-20 kpc of the Galactic centre (from memory), so a
	// field or dust layer reaching 50 kpc from the Sun is beyond it.
	maxLengthPc = 50_000
	lengthWhy   = "the Galaxy's stellar disk ends within about 25 kpc of the Sun; 50000 pc is beyond any field the model describes"
	maxStarsWhy = "10^14 stars is years of computing; spinpop check and simulate estimate the run time of a count"
	chunkWhy    = "each worker holds two chunks of about 250 bytes per star in memory; 65536 is the default"
)

// validate checks ranges and relations between keys. Keys that already
// failed to decode are skipped, so each problem is reported once.
func (v *decoder) validate(s *Scenario) {
	v.inRange("run.stars_generated", float64(s.Run.StarsGenerated), 1, true, MaxStars, true, maxStarsWhy)
	v.inRange("run.chunk_stars", float64(s.Run.ChunkStars), MinChunkStars, true, MaxChunkStars, true, chunkWhy)

	v.oneOf("imf.form", s.IMF.Form, imfForms)
	v.inRange("imf.mass_min_msun", s.IMF.MassMinMsun, 0.08, true, 120, true, "0.08 Msun is the hydrogen-burning limit")
	v.inRange("imf.mass_max_msun", s.IMF.MassMaxMsun, 0.08, true, 120, true, "")
	v.less("imf.mass_min_msun", s.IMF.MassMinMsun, "imf.mass_max_msun", s.IMF.MassMaxMsun, "empty mass range")

	v.validateHistory(&s.History)
	v.validateDisk(&s.Disk, s.History.MaxAgeGyr)

	v.oneOf("dust.model", s.Dust.Model, dustModels)
	v.inRange("dust.scale_height_pc", s.Dust.ScaleHeightPc, 0, false, maxLengthPc, true, lengthWhy)
	v.inRange("dust.midplane_av_per_kpc", s.Dust.MidplaneAvPerKpc, 0, true, 100, true,
		"about 0.7-1 mag/kpc in the solar neighbourhood (common practice); 100 mag/kpc would hide every star beyond a few tens of pc")

	st := &s.Stars
	v.oneOf("stars.relations", st.Relations, relationsTables)
	v.inRange("stars.binary_fraction_scale", st.BinaryFractionScale, 0, true, 2, true,
		"the binary fraction itself peaks near 0.5, so larger scales would exceed 1")
	v.inRange("stars.binary_mass_ratio_min", st.BinaryMassRatioMin, 0, true, 1, false, "")
	v.inRange("stars.tidal_lock_fraction", st.TidalLockFraction, 0, true, 1, true, "")
	v.atLeast("stars.tidal_lock_period_max_d", st.TidalLockPeriodMaxD, 1, "locked periods are log-uniform from 1 d to this value")
	v.atLeast("stars.metallicity_sigma_dex", st.MetallicitySigmaDex, 0, "")
	v.inRange("stars.color_scatter_mag", st.ColorScatterMag, 0, true, 0.3, true,
		"a B-V scatter of a few hundredths of a magnitude is typical; 0 switches it off")
	v.sequenceShift(st)

	v.validateSpin(&s.Spin)
	v.validateSurvey(&s.Survey)
	v.validateCuts(&s.Cuts)

	v.atLeast("output.catalog_max_stars", float64(s.Output.CatalogMaxStars), 0, "")
	for i, a := range s.Output.GyrochroneAgesGyr {
		if !(a > 0) {
			v.errAt("output.gyrochrone_ages_gyr", "output.gyrochrone_ages_gyr element %d is %s; ages must be > 0", i+1, formatFloat(a))
			break
		}
	}

	v.validateData(&s.Data)
	v.validateCompare(s)
}

func (v *decoder) validateDisk(dk *Disk, maxAgeGyr float64) {
	v.inRange("disk.sigma_10gyr_kms", dk.Sigma10GyrKms, minSigmaKms, true, maxSigmaKms, true, sigmaWhy)
	v.inRange("disk.heating_tau1_gyr", dk.HeatingTau1Gyr, 0, false, 14, true,
		"a zero offset would give stars born today zero velocity dispersion")
	v.inRange("disk.heating_beta", dk.HeatingBeta, 0, true, 1, true, "published thin-disk values lie near 0.3-0.55")
	v.inRange("disk.sheet_sigma_kms", dk.SheetSigmaKms, minSigmaKms, true, maxSigmaKms, true, sigmaWhy)
	v.inRange("disk.surface_density_msun_pc2", dk.SurfaceDensityMsunPc2, 1, true, 1000, true,
		"the disk's surface density near the Sun is about 70 Msun/pc^2 within 1.1 kpc of the plane (Bovy & Rix 2013, ApJ 779, 115; from memory); a hundredth to ten times that spans every disk the model is meant for")
	v.inRange("disk.scale_length_kpc", dk.ScaleLengthKpc, 0.5, true, 20, true,
		"published thin-disk scale lengths lie near 2-3.5 kpc (Bland-Hawthorn & Gerhard 2016, ARA&A 54, 529; from memory)")
	v.inRange("disk.sun_radius_kpc", dk.SunRadiusKpc, 4, true, 12, true,
		"the Sun's distance from the Galactic centre is measured at 8.1-8.3 kpc (Bland-Hawthorn & Gerhard 2016; from memory)")
	v.inRange("disk.sun_height_pc", dk.SunHeightPc, -1000, true, 1000, true, "")
	if !v.errs.isBad("history.max_age_gyr") {
		v.binEdges("disk.age_bin_edges_gyr", dk.AgeBinEdgesGyr, maxAgeGyr, true)
	}
}

func (v *decoder) validateSpin(sp *Spin) {
	v.oneOf("spin.law", sp.Law, spin.Names())
	v.oneOf("spin.turnover", sp.Turnover, turnovers)
	v.inRange("spin.period_scatter_dex", sp.PeriodScatterDex, 0, true, 0.5, true, "intrinsic period scatter")
	v.inRange("spin.period_scale", sp.PeriodScale, 0.5, true, 2, true, "a shift of the law's zero point")
	v.validateLawOptions(sp.Options)

	sk := &sp.Spots
	v.positive("spin.spots.ro_sat", sk.RoSat)
	v.positive("spin.spots.amp_sat_ppm", sk.AmpSatPpm)
	v.atLeast("spin.spots.slope", sk.Slope, 0, "amplitude falls with Rossby number")
	v.atLeast("spin.spots.scatter_dex", sk.ScatterDex, 0, "")
}

func (v *decoder) validateSurvey(sv *Survey) {
	v.oneOf("survey.band", sv.Band, bands)
	v.less("survey.bright_limit_mag", sv.BrightLimitMag, "survey.faint_limit_mag", sv.FaintLimitMag, "no magnitude range left")
	v.atLeast("survey.noise_floor_ppm", sv.NoiseFloorPpm, 0, "")
	v.positive("survey.noise_ppm_at_ref_mag", sv.NoisePpmAtRefMag)
	v.positive("survey.cadence_d", sv.CadenceD)
	v.less("survey.cadence_d", sv.CadenceD, "survey.baseline_d", sv.BaselineD, "a baseline must hold many cadences")
	v.atLeast("survey.min_cycles", sv.MinCycles, 1, "")
	v.positive("survey.detection_snr", sv.DetectionSNR)
	v.inRange("survey.detection_sharpness", sv.DetectionSharp, 0, false, 50, true, "logistic slope in ln SNR")
	v.atLeast("survey.search_half_period_d", sv.SearchHalfD, 0, "0 = the search loses no periods")
	v.inRange("survey.search_turnover_power", sv.SearchTauPower, 0, true, 3, true, "0: a loss at a fixed period, 1: at a fixed Rossby number")
	v.inRange("survey.search_steepness", sv.SearchSteepness, 0, false, 50, true, "logistic slope in ln P")
	for i, e := range sv.SearchByRossby.Values() {
		v.inRange(fmt.Sprintf("survey.search_by_rossby.%s", searchByRossbyKeys[i]), e, 0, true, 1, true, "1 keeps every period there")
	}
	for i, e := range sv.SearchFalloff.Values() {
		hint := "the share of the periods found at the node before still found here; 1 loses none"
		if i == 0 {
			hint = "the share of the periods found at 3 d; 1 loses none"
		}
		v.inRange(fmt.Sprintf("survey.search_falloff.%s", searchFalloffKeys[i]), e, 0, true, 1, true, hint)
	}
	v.inRange("survey.color_offset_mag", sv.ColorOffsetMag, -0.3, true, 0.3, true, "a zero-point difference, not a new color scale")
	v.inRange("survey.color_scale", sv.ColorScale, 0.7, true, 1.3, true, "a small stretch of the color scale")
	v.inRange("survey.period_scatter_rel", sv.PeriodScatterRel, 0, true, 1, false, "")
	v.inRange("survey.half_alias_prob", sv.HalfAliasProb, 0, true, 1, true, "")
	v.inRange("survey.double_alias_prob", sv.DoubleAliasProb, 0, true, 1, true, "")
	if sum := sv.HalfAliasProb + sv.DoubleAliasProb; sum > 1 && !v.errs.isBad("survey.half_alias_prob") && !v.errs.isBad("survey.double_alias_prob") {
		v.errAt("survey.double_alias_prob", "survey.half_alias_prob + survey.double_alias_prob = %.6g; as probabilities of exclusive outcomes they must add up to at most 1", sum)
	}
	v.validateField(&sv.Field)
}

func (v *decoder) validateField(f *Field) {
	const p = "survey.field"
	if !v.oneOf(p+".kind", f.Kind, fieldKinds) {
		return
	}
	keys := fieldKeys[f.Kind]
	for _, k := range fieldsOf(reflect.TypeFor[Field]()).names {
		kp := joinKey(p, k)
		if k != "kind" && v.present(kp) && !slices.Contains(keys, k) {
			v.errAt(kp, "%s does not apply to a field of kind %q; its keys are: kind, %s", kp, f.Kind, listWords(keys))
		}
	}
	v.required(p, fieldRequired[f.Kind], v.present, fmt.Sprintf("a field of kind %q", f.Kind))
	switch f.Kind {
	case "cone":
		v.cone(p, Cone{LDeg: f.LDeg, BDeg: f.BDeg, RadiusDeg: f.RadiusDeg, DistanceMinPc: f.DistanceMinPc, DistanceMaxPc: f.DistanceMaxPc})
	case "sphere":
		v.distances(p, f.DistanceMinPc, f.DistanceMaxPc)
	case "cones":
		if v.present(p+".cones") && len(f.Cones) == 0 && !v.errs.isBad(p+".cones") {
			v.errAt(p+".cones", "%s.cones is empty; give at least one [[survey.field.cones]] section", p)
		}
		for i, c := range f.Cones {
			cp := elemKey(p+".cones", i)
			v.required(cp, fieldRequired["cone"], v.present, "each cone")
			v.cone(cp, c)
		}
	}
}

func (v *decoder) cone(p string, c Cone) {
	v.inRange(joinKey(p, "l_deg"), c.LDeg, 0, true, 360, true, "Galactic longitude")
	v.inRange(joinKey(p, "b_deg"), c.BDeg, -90, true, 90, true, "Galactic latitude")
	v.inRange(joinKey(p, "radius_deg"), c.RadiusDeg, 0, false, 180, true, "180 is the whole sky")
	v.distances(p, c.DistanceMinPc, c.DistanceMaxPc)
}

func (v *decoder) distances(p string, lo, hi float64) {
	v.inRange(joinKey(p, "distance_min_pc"), lo, 0, true, maxLengthPc, true, lengthWhy)
	v.inRange(joinKey(p, "distance_max_pc"), hi, 0, false, maxLengthPc, true, lengthWhy)
	v.less(joinKey(p, "distance_min_pc"), lo, joinKey(p, "distance_max_pc"), hi, "empty distance range")
}

func (v *decoder) validateCuts(c *Cuts) {
	v.less("cuts.b_v_min", c.BVMin, "cuts.b_v_max", c.BVMax, "empty color range")
	v.atLeast("cuts.ms_band_bright_mag", c.MSBandBrightMag, 0, "")
	v.atLeast("cuts.ms_band_faint_mag", c.MSBandFaintMag, 0, "")
	v.positive("cuts.period_min_d", c.PeriodMinD)
	v.less("cuts.period_min_d", c.PeriodMinD, "cuts.period_max_d", c.PeriodMaxD, "empty period range")
	v.inRange("cuts.height_max_pc", c.HeightMaxPc, 0, true, maxLengthPc, true, "0 means no cut; "+lengthWhy)
}

// required reports the keys of table p that are missing, in one message,
// and marks them so that their zero values raise no further errors.
func (v *decoder) required(p string, keys []string, present func(string) bool, who string) {
	var missing []string
	for _, k := range keys {
		if kp := joinKey(p, k); !present(kp) {
			v.errs.markBad(kp)
			if !v.suggested[kp] {
				missing = append(missing, k)
			}
		}
	}
	switch len(missing) {
	case 0:
	case 1:
		kp := joinKey(p, missing[0])
		v.errAt(kp, "%s is missing; %s needs %s", kp, who, listWords(keys))
	default:
		v.errAt(p, "%s lacks %s; %s needs %s", p, listWords(missing), who, listWords(keys))
	}
}

// binEdges checks age-bin edges: at least two, strictly increasing, within
// [0, maxAgeGyr]; when span is set, exactly from 0 to maxAgeGyr.
func (v *decoder) binEdges(p string, edges []float64, maxAgeGyr float64, span bool) {
	if v.errs.isBad(p) {
		return
	}
	if len(edges) < 2 {
		v.errAt(p, "%s has %d edges; at least 2 are needed to make a bin", p, len(edges))
		return
	}
	for i := 1; i < len(edges); i++ {
		if !(edges[i] > edges[i-1]) {
			v.errAt(p, "%s must be strictly increasing, but element %d (%s) is not above element %d (%s)",
				p, i+1, formatFloat(edges[i]), i, formatFloat(edges[i-1]))
			return
		}
	}
	first, last := edges[0], edges[len(edges)-1]
	switch {
	case span && (first != 0 || last != maxAgeGyr):
		v.errAt(p, "%s runs from %s to %s Gyr; it must run from 0 to history.max_age_gyr = %s so that every star falls in a bin",
			p, formatFloat(first), formatFloat(last), formatFloat(maxAgeGyr))
	case first < 0 || last > maxAgeGyr:
		v.errAt(p, "%s runs from %s to %s Gyr; it must lie within [0, history.max_age_gyr = %s]",
			p, formatFloat(first), formatFloat(last), formatFloat(maxAgeGyr))
	}
}

// MaxSequenceShiftMag bounds stars.sequence_shift_mag: a shift this large
// moves the sequence by more than metallicity spreads it (a few tenths of
// a magnitude), so the table would no longer describe the stars.
const MaxSequenceShiftMag = 1.0

// sequenceShift checks the sequence's shift in M_V: as many shifts as
// colors, colors strictly increasing, shifts within ±MaxSequenceShiftMag.
func (v *decoder) sequenceShift(st *Stars) {
	const pb, pm = "stars.sequence_shift_b_v", "stars.sequence_shift_mag"
	if v.errs.isBad(pb) || v.errs.isBad(pm) {
		return
	}
	bv, mag := st.SequenceShiftBV, st.SequenceShiftMag
	if len(bv) != len(mag) {
		v.errAt(pm, "%s has %d values but %s has %d colors: give one shift per color", pm, len(mag), pb, len(bv))
		return
	}
	for i, x := range bv {
		if math.IsNaN(x) || math.IsInf(x, 0) || (i > 0 && !(x > bv[i-1])) {
			v.errAt(pb, "%s must be finite and strictly increasing, but element %d is %s", pb, i+1, formatFloat(x))
			return
		}
	}
	for i, m := range mag {
		if !(math.Abs(m) <= MaxSequenceShiftMag) {
			v.errAt(pm, "%s element %d is %s; a shift must lie within ±%s mag (more moves the sequence further than metallicity spreads it)",
				pm, i+1, formatFloat(m), formatFloat(MaxSequenceShiftMag))
			return
		}
	}
}

// positive checks x > 0.
func (v *decoder) positive(p string, x float64) {
	if !v.errs.isBad(p) && !(x > 0) {
		v.errAt(p, "%s = %s must be > 0", p, formatFloat(x))
	}
}

// atLeast checks x ≥ lo.
func (v *decoder) atLeast(p string, x, lo float64, why string) {
	if !v.errs.isBad(p) && !(x >= lo) {
		v.errAt(p, "%s = %s must be ≥ %s%s", p, formatFloat(x), formatFloat(lo), because(why))
	}
}

// inRange checks x against an interval whose ends may be open or closed.
func (v *decoder) inRange(p string, x, lo float64, loClosed bool, hi float64, hiClosed bool, why string) {
	if v.errs.isBad(p) {
		return
	}
	okLo := x > lo || loClosed && x == lo
	okHi := x < hi || hiClosed && x == hi
	if okLo && okHi {
		return
	}
	l, r := "(", ")"
	if loClosed {
		l = "["
	}
	if hiClosed {
		r = "]"
	}
	v.errAt(p, "%s = %s is out of range; it must be in %s%s, %s%s%s", p, formatFloat(x), l, formatFloat(lo), formatFloat(hi), r, because(why))
}

// less checks a < b. It blames the line of the key set in the later layer
// (the user's change, not the file it extends, which was fine alone), the
// second key (usually the maximum) when both come from the same layer.
func (v *decoder) less(pa string, a float64, pb string, b float64, what string) {
	if v.errs.isBad(pa) || v.errs.isBad(pb) || a < b {
		return
	}
	format, args := "%s = %s must be greater than %s = %s (%s)", []any{pb, formatFloat(b), pa, formatFloat(a), what}
	if v.rankOf(pa) > v.rankOf(pb) {
		if o, own := v.origins[pb]; own && o.file == "" && o.note != "" {
			format += " (" + o.note + "; set it explicitly)"
		}
		v.errVia(pb, pa, format, args...)
		return
	}
	v.errAt(pb, format, args...)
}

// rankOf is the merge rank of the layer that set p (see origin.rank).
func (v *decoder) rankOf(p string) int {
	if o, ok := v.origins[p]; ok {
		return o.rank
	}
	return v.locate(p).rank
}

// oneOf checks an enumerated value and reports whether it is valid.
func (v *decoder) oneOf(p, s string, allowed []string) bool {
	if v.errs.isBad(p) {
		return false
	}
	if slices.Contains(allowed, s) {
		return true
	}
	msg := fmt.Sprintf("%s = %s is not allowed; use one of: %s", p, quoteString(s), listWords(allowed))
	if n := nearest(s, allowed); n != "" && levenshtein(s, n) <= max(2, len(n)/3) {
		msg += fmt.Sprintf(" (did you mean %q?)", n)
	}
	v.errAt(p, "%s", msg)
	return false
}

func because(why string) string {
	if why == "" {
		return ""
	}
	return " (" + why + ")"
}
