package scenarios

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"spinpop/sfh"
)

// The [compare] section: the binned space model and data are compared in,
// the templates, the statistics, and the parameters a fit may move.

// Allowed values of the enumerated [compare] keys.
var (
	normalisations = []string{"free", "absolute", "per-color", "per-color-height"}
	colorAxes      = []string{"measured", "dereddened"}
	templateNoises = []string{"barlow-beeston-lite", "ignore"}
	priors         = []string{"uniform", "log-uniform", "gaussian"}
)

// Limits of [compare] keys. Fewer than two bins compare nothing; more than
// 500 per axis leave almost every bin of a catalog of tens of thousands of
// stars empty. Templates from fewer than 1e5 drawn stars are noisier than
// the catalogs they are meant to describe.
const (
	minCompareBins     = 2
	maxCompareBins     = 500
	minTemplateStars   = 1e5
	maxBootstrap       = 1e6
	comparePeriodFloor = 0.5 // d: below, periods are mostly not rotation (default lower end)
	comparePeriodCeil  = 100 // d: above, few spotted dwarfs rotate (default upper end)

	defaultBurstAgeMinGyr = 0.1 // lower end of the default burst-age range
)

// DefaultFree is the default list of free parameters when the history has
// a part of kind "burst" named burstPart: the burst's age in
// [0.1, min(3, maxAgeGyr)] Gyr, width in [0.02, 0.5] Gyr and mass fraction
// in [0, 0.6], all with uniform priors. The ranges are broad on purpose: a
// burst younger than 0.1 Gyr holds too few stars with measured periods to
// be fitted, one older than about 3 Gyr sits where gyrochrones crowd
// together, and no star-formation history worth testing puts more than
// 60% of all stars in one burst. The loader fills it in (see
// Compare.Free) for histories older than 0.1 Gyr, where the age range is
// not empty; it is exported for callers that add a burst part to a
// scenario without one. burstPart must be a valid part name (letters,
// digits, '_' and '-').
func DefaultFree(burstPart string, maxAgeGyr float64) []FreeParam {
	p := "history." + burstPart + "."
	return []FreeParam{
		{Path: p + "age_gyr", Min: defaultBurstAgeMinGyr, Max: min(3, maxAgeGyr), Prior: "uniform"},
		{Path: p + "width_gyr", Min: 0.02, Max: 0.5, Prior: "uniform"},
		{Path: p + "mass_fraction", Min: 0, Max: 0.6, Prior: "uniform"},
	}
}

// fillCompare sets the [compare] defaults that depend on other keys.
func (d *decoder) fillCompare(s *Scenario) {
	c := &s.Compare
	defMin, defMax := !d.present("compare.period_min_d"), !d.present("compare.period_max_d")
	if defMin {
		c.PeriodMinD = max(s.Cuts.PeriodMinD, comparePeriodFloor)
		d.origins["compare.period_min_d"] = origin{note: "default: max(cuts.period_min_d, 0.5)"}
	}
	if defMax {
		c.PeriodMaxD = min(s.Cuts.PeriodMaxD, comparePeriodCeil)
		d.origins["compare.period_max_d"] = origin{note: "default: min(cuts.period_max_d, 100)"}
	}
	if defMin && defMax && !(c.PeriodMinD < c.PeriodMaxD) {
		// Cuts that lie wholly below 0.5 d or above 100 d: compare
		// within the cuts rather than make a simulation-only scenario
		// invalid over a section it does not use.
		c.PeriodMinD, c.PeriodMaxD = s.Cuts.PeriodMinD, s.Cuts.PeriodMaxD
	}
	if !d.present("compare.free") && !d.errs.isBad("compare.burst_part") && !d.errs.isBad("history.max_age_gyr") && s.History.MaxAgeGyr > defaultBurstAgeMinGyr {
		if part, ok := s.History.Parts[c.BurstPart]; ok && part.Kind == "burst" {
			c.Free = DefaultFree(c.BurstPart, s.History.MaxAgeGyr)
			const note = "default: the age, width and mass fraction of the part compare.burst_part names"
			d.origins["compare.free"] = origin{note: note}
			for i := range c.Free {
				for _, k := range []string{"", ".max", ".min", ".path", ".prior"} {
					d.origins[elemKey("compare.free", i)+k] = origin{note: note}
				}
			}
		}
	}
	for i := range c.Free {
		if !d.present(elemKey("compare.free", i) + ".prior") {
			c.Free[i].Prior = "uniform"
		}
	}
	if len(c.Free) == 0 {
		c.Free = nil // one spelling of "nothing is free", whether written or defaulted
	}
	if len(c.Alternatives) == 0 {
		c.Alternatives = nil
	}
}

// validateCompare checks [compare]; the cuts and the history are checked
// before it.
func (v *decoder) validateCompare(s *Scenario) {
	c := &s.Compare
	// A default derived from a bad cut is bad too, and not reported twice.
	for _, k := range []string{"period_min_d", "period_max_d"} {
		if v.origins["compare."+k].file == "" && (v.errs.isBad("cuts.period_min_d") || v.errs.isBad("cuts.period_max_d")) {
			v.errs.markBad("compare." + k)
		}
	}
	v.inRange("compare.color_bins", float64(c.ColorBins), minCompareBins, true, maxCompareBins, true, "")
	v.inRange("compare.log_period_bins", float64(c.LogPeriodBins), minCompareBins, true, maxCompareBins, true, "")

	v.positive("compare.period_min_d", c.PeriodMinD)
	v.less("compare.period_min_d", c.PeriodMinD, "compare.period_max_d", c.PeriodMaxD, "empty period range")
	const why = "the comparison range must lie inside the cuts, where model and data are cut alike"
	if !v.errs.isBad("compare.period_min_d") && !v.errs.isBad("cuts.period_min_d") && c.PeriodMinD < s.Cuts.PeriodMinD {
		v.errAt("compare.period_min_d", "compare.period_min_d = %s lies below cuts.period_min_d = %s (%s)",
			formatFloat(c.PeriodMinD), formatFloat(s.Cuts.PeriodMinD), why)
	}
	if !v.errs.isBad("compare.period_max_d") && !v.errs.isBad("cuts.period_max_d") && c.PeriodMaxD > s.Cuts.PeriodMaxD {
		v.errAt("compare.period_max_d", "compare.period_max_d = %s lies above cuts.period_max_d = %s (%s)",
			formatFloat(c.PeriodMaxD), formatFloat(s.Cuts.PeriodMaxD), why)
	}

	v.heightEdges("compare.height_edges_pc", c.HeightEdgesPc)
	v.inRange("compare.template_stars", float64(c.TemplateStars), minTemplateStars, true, MaxStars, true, "fewer stars make templates noisier than the data; "+maxStarsWhy)
	v.oneOf("compare.normalisation", c.Normalisation, normalisations)
	v.oneOf("compare.template_noise", c.TemplateNoise, templateNoises)
	v.oneOf("compare.color_axis", c.ColorAxis, colorAxes)
	if c.MeasureSequence && len(s.Stars.SequenceShiftBV) > 0 {
		v.errAt("compare.measure_sequence", "compare.measure_sequence = true measures the sequence's shift, and stars.sequence_shift_b_v gives one: keep one of the two (set measure_sequence = false to use the shift as written)")
	}
	v.inRange("compare.bootstrap", float64(c.Bootstrap), 0, true, maxBootstrap, true, "0 means no bootstrap")
	if !v.errs.isBad("history.max_age_gyr") {
		v.inRange("compare.split_age_gyr", c.SplitAgeGyr, 0, true, s.History.MaxAgeGyr, true,
			"0 means the fitted burst age; otherwise a lookback age within the history")
	}
	v.inRange("compare.mask_below_age_gyr", c.MaskAgeGyr, 0, true, s.History.MaxAgeGyr, true, "0 = no mask")
	v.inRange("compare.mask_margin_dex", c.MaskMarginDex, 0, true, 1, true, "")
	v.burstPart(s)
	v.validateFree(s)
	v.validateAlternatives(s)
}

// burstPart checks compare.burst_part: a part of that name must be a
// burst. It may name no part at all: the default, "burst", must not make a
// smooth scenario (the null hypothesis, or a run that never compares)
// invalid, and the rule must not depend on whether a key was written out,
// or the canonical form would not load like its source. A name that
// matches no part leaves the default free list empty; the comparison
// reports it when it needs the burst.
func (v *decoder) burstPart(s *Scenario) {
	const p = "compare.burst_part"
	if v.errs.isBad(p) || v.errs.isBad("history") {
		return
	}
	name := s.Compare.BurstPart
	part, ok := s.History.Parts[name]
	if !ok || part.Kind == "burst" || part.Kind == "" || v.errs.isBad(joinKey("history", name)) {
		return
	}
	var bursts []string
	for _, n := range sortedParts(s.History.Parts) {
		if s.History.Parts[n].Kind == "burst" {
			bursts = append(bursts, n)
		}
	}
	msg := fmt.Sprintf("%s = %s names a part of kind %q; it must name a part of kind \"burst\" (the part a burst-versus-smooth test frees)", p, quoteString(name), part.Kind)
	if len(bursts) > 0 {
		msg += "; the history's bursts are: " + listWords(bursts)
	} else {
		msg += "; set it to the name of a burst part you add, or to a name no part has"
	}
	v.errAt(p, "%s", msg)
}

// heightEdges checks |z| bin edges: at least two, from 0, strictly
// increasing.
func (v *decoder) heightEdges(p string, edges []float64) {
	if v.errs.isBad(p) {
		return
	}
	if len(edges) < 2 {
		v.errAt(p, "%s has %d edges; at least 2 are needed to make a bin, e.g. [0.0, 300.0, 1500.0]", p, len(edges))
		return
	}
	if edges[0] != 0 {
		v.errAt(p, "%s starts at %s pc; it must start at 0 so that stars near the plane fall in a bin", p, formatFloat(edges[0]))
		return
	}
	for i := 1; i < len(edges); i++ {
		if !(edges[i] > edges[i-1]) {
			v.errAt(p, "%s must be strictly increasing, but element %d (%s) is not above element %d (%s)",
				p, i+1, formatFloat(edges[i]), i, formatFloat(edges[i-1]))
			return
		}
	}
	if last := edges[len(edges)-1]; last > maxLengthPc {
		v.errAt(p, "%s ends at %s pc, beyond %s pc (%s)", p, formatFloat(last), formatFloat(maxLengthPc), lengthWhy)
	}
}

// MaxStartGrid bounds the joint fit's starting grid: the product of the
// free parameters' numbers of starting values.
const MaxStartGrid = 64

// validateFree checks the free parameters: each names a scalar key of an
// existing history part, once, with a non-empty range inside the values
// that key can take and a prior that suits the range.
func (v *decoder) validateFree(s *Scenario) {
	valid := freePaths(s)
	seen := make(map[string]int)
	grid := 1
	for i, f := range s.Compare.Free {
		p := elemKey("compare.free", i)
		key := func(k string) string { return joinKey(p, k) }
		if n := len(f.Starts); n > 0 && grid <= MaxStartGrid {
			grid *= n
			if grid > MaxStartGrid {
				v.errAt(key("starts"), "the starting values of compare.free up to %s make a grid of more than %d points, each a re-observation of the stored stars and a fit; give fewer values", p, MaxStartGrid)
			}
		}
		v.required(p, []string{"max", "min", "path"}, v.present, "each [[compare.free]] parameter")
		dom, pathOK := v.freePath(key("path"), f.Path, s.History, s.Spin.Law, valid)
		if pathOK {
			if j, dup := seen[f.Path]; dup {
				v.errAt(key("path"), "%s = %s repeats compare.free[%d]; a parameter can be free only once", key("path"), quoteString(f.Path), j)
			} else {
				seen[f.Path] = i
			}
		}
		priorOK := v.oneOf(key("prior"), f.Prior, priors)
		v.less(key("min"), f.Min, key("max"), f.Max, "empty range")
		if priorOK && f.Prior == "log-uniform" && !v.errs.isBad(key("min")) && !(f.Min > 0) {
			v.errAt(key("min"), "%s = %s must be > 0 for a log-uniform prior (the logarithm of 0 is -infinity); use a positive lower bound or prior = \"uniform\"", key("min"), formatFloat(f.Min))
		}
		if pathOK {
			v.inDomain(key("min"), f.Min, f.Path, dom)
			v.inDomain(key("max"), f.Max, f.Path, dom)
		}
		if priorOK && pathOK {
			v.validateNuisance(s, p, f)
		}
	}
}

// domain is the set of values a history key can take.
type domain struct {
	lo, hi float64
	loOpen bool
}

// keyDomain is the domain of a fittable part key, as its kind declares
// it (a bins part's rate_<i> are rates: ≥ 0).
func keyDomain(kind, key string, maxAgeGyr float64) domain {
	spec, _ := sfh.LookupKind(kind)
	k, ok := spec.Key(key)
	if !ok {
		return domain{lo: 0, hi: math.Inf(1)}
	}
	lo, hi, loOpen, _ := k.Range(maxAgeGyr)
	return domain{lo: lo, hi: hi, loOpen: loOpen}
}

// inDomain checks that a bound of a free parameter is a value its key can
// take.
func (v *decoder) inDomain(p string, x float64, path string, d domain) {
	if v.errs.isBad(p) {
		return
	}
	switch {
	case d.loOpen && !(x > d.lo):
		v.errAt(p, "%s = %s must be > %s: %s takes values in (%s, %s)", p, formatFloat(x), formatFloat(d.lo), path, formatFloat(d.lo), boundText(d.hi))
	case !d.loOpen && !(x >= d.lo):
		v.errAt(p, "%s = %s must be ≥ %s: %s takes values in [%s, %s]", p, formatFloat(x), formatFloat(d.lo), path, formatFloat(d.lo), boundText(d.hi))
	case x > d.hi:
		v.errAt(p, "%s = %s must be ≤ %s: %s takes values in [%s, %s]", p, formatFloat(x), formatFloat(d.hi), path, formatFloat(d.lo), boundText(d.hi))
	}
}

func boundText(hi float64) string {
	if math.IsInf(hi, 1) {
		return "∞"
	}
	return formatFloat(hi)
}

// freePath checks one path and returns the domain of the key it names.
func (v *decoder) freePath(p, path string, h History, law string, valid []string) (domain, bool) {
	if v.errs.isBad(p) {
		return domain{}, false
	}
	if d, ok := nuisanceDomain(law, path); ok {
		return d, true
	}
	pieces := strings.Split(path, ".")
	if len(pieces) == 3 && pieces[0] == "history" {
		if v.errs.isBad(joinKey("history", pieces[1])) || v.errs.isBad("history.max_age_gyr") {
			return domain{}, false // the part itself is broken; that error says enough
		}
		if part, ok := h.Parts[pieces[1]]; ok && slices.Contains(freeKeysOf(part), pieces[2]) {
			return keyDomain(part.Kind, pieces[2], h.MaxAgeGyr), true
		}
	}
	if v.errs.isBad("history") {
		return domain{}, false
	}
	msg := fmt.Sprintf("%s = %s does not name a parameter a fit can move; a free parameter is \"history.<part>.<key>\" with a key its part's kind takes, or a nuisance parameter of the physics or selection", p, quoteString(path))
	if n := nearest(path, valid); n != "" && levenshtein(path, n) <= max(2, len(n)/4) {
		msg += fmt.Sprintf(" (did you mean %q?)", n)
	}
	if len(valid) > 0 {
		msg += "; the valid paths are: " + listWords(valid)
	}
	v.errAt(p, "%s", msg)
	return domain{}, false
}

// freePaths lists every path a free parameter may name: the history's,
// sorted, then the nuisance paths.
func freePaths(s *Scenario) []string {
	h := s.History
	var out []string
	for _, name := range sortedParts(h.Parts) {
		for _, k := range freeKeysOf(h.Parts[name]) {
			out = append(out, "history."+name+"."+k)
		}
	}
	return append(out, NuisancePaths(s.Spin.Law)...)
}

// freeKeysOf lists the keys of a part a fit may move, as its kind
// declares them (sfh.KindSpec.FreeKeys).
func freeKeysOf(p Part) []string {
	spec, ok := sfh.LookupKind(p.Kind)
	if !ok {
		return nil
	}
	return spec.FreeKeys(p)
}
