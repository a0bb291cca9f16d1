package scenarios

import (
	"fmt"
	"math"
	"reflect"
	"sort"
	"strings"

	"spinpop/model/spin"
)

// Nuisance parameters. A [[compare.free]] path outside [history] names a
// parameter of the physics or the selection that a fit moves together with
// the history. Only keys that change how a star is observed — its rotation,
// the detection and measurement of its period, its color on the
// catalog's scale, the share of binaries — qualify: the comparison then
// re-observes the stars it stored when it built the templates instead of
// making new ones. Keys that change which stars exist (the IMF, the disk,
// the dust, the survey's magnitude limits, the field) cannot be nuisance
// parameters; a sweep varies them instead. One exception: the disk's
// heating (placementKeys) moves stars in height without changing which
// stars form, so the stored stars are re-weighted by the ratio of vertical
// densities at their heights (an importance weight) instead.

// nuisanceKeys are the paths outside the spin-down laws' option tables a
// nuisance parameter may name, with the values each can take (as validate
// checks the key itself). Every number key of the scenario's law's option
// tables ([spin.<table>]) may be a nuisance parameter too: a law's options
// change only its periods.
var nuisanceKeys = map[string]domain{
	"spin.period_scatter_dex":                {lo: 0, hi: 0.5},
	"spin.period_scale":                      {lo: 0.5, hi: 2},
	"spin.spots.ro_sat":                      {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.spots.amp_sat_ppm":                 {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.spots.slope":                       {lo: 0, hi: math.Inf(1)},
	"spin.spots.scatter_dex":                 {lo: 0, hi: math.Inf(1)},
	"survey.detection_snr":                   {lo: 0, hi: math.Inf(1), loOpen: true},
	"survey.detection_sharpness":             {lo: 0, hi: 50, loOpen: true},
	"survey.search_half_period_d":            {lo: 0, hi: math.Inf(1)},
	"survey.search_turnover_power":           {lo: 0, hi: 3},
	"survey.search_steepness":                {lo: 0, hi: 50, loOpen: true},
	"survey.search_by_rossby.efficiency_3d":  {lo: 0, hi: 1},
	"survey.search_by_rossby.efficiency_6d":  {lo: 0, hi: 1},
	"survey.search_by_rossby.efficiency_12d": {lo: 0, hi: 1},
	"survey.search_by_rossby.efficiency_24d": {lo: 0, hi: 1},
	"survey.search_by_rossby.efficiency_48d": {lo: 0, hi: 1},
	"survey.search_by_rossby.efficiency_96d": {lo: 0, hi: 1},
	"survey.search_falloff.kept_3d":          {lo: 0, hi: 1},
	"survey.search_falloff.kept_6d":          {lo: 0, hi: 1},
	"survey.search_falloff.kept_12d":         {lo: 0, hi: 1},
	"survey.search_falloff.kept_24d":         {lo: 0, hi: 1},
	"survey.search_falloff.kept_48d":         {lo: 0, hi: 1},
	"survey.search_falloff.kept_96d":         {lo: 0, hi: 1},
	"survey.noise_floor_ppm":                 {lo: 0, hi: math.Inf(1)},
	"survey.noise_ppm_at_ref_mag":            {lo: 0, hi: math.Inf(1), loOpen: true},
	"survey.period_scatter_rel":              {lo: 0, hi: 0.999},
	"survey.half_alias_prob":                 {lo: 0, hi: 1},
	"survey.double_alias_prob":               {lo: 0, hi: 1},
	"survey.color_offset_mag":                {lo: -0.3, hi: 0.3},
	"survey.color_scale":                     {lo: 0.7, hi: 1.3},
	"stars.binary_fraction_scale":            {lo: 0, hi: 2},
	"stars.tidal_lock_fraction":              {lo: 0, hi: 1},
	// placementKeys: re-weighted, not re-observed.
	"disk.sigma_10gyr_kms":  {lo: minSigmaKms, hi: maxSigmaKms},
	"disk.heating_tau1_gyr": {lo: 0, hi: 14, loOpen: true},
	"disk.heating_beta":     {lo: 0, hi: 1},
}

// placementKeys are the nuisance paths that move stars rather than change
// how they are observed: the disk's heating.
var placementKeys = map[string]bool{"disk.sigma_10gyr_kms": true, "disk.heating_tau1_gyr": true, "disk.heating_beta": true}

// ObservationDepth ranks a nuisance path by how much of a stored star's
// observation a change of it makes again: 0 for the color calibration,
// the binary share, the period recovery, the heating and the search loss,
// which leave each star's period, spot amplitude and signal-to-noise
// detection alone (only its color column, its weight, the recovery kernel
// or the search's factor change); 1 for the spots, the detection and the
// noise, which leave its period alone; 2 for the rest (the spin-down law,
// the tidal lock). A fit's round
// makes its side points in this order, so that the model's memos of the
// centre's periods and detection probabilities (model.Bank) are still
// there when the side points that can use them come. It changes no
// number, only the time.
func ObservationDepth(path string) int {
	switch {
	case path == "survey.color_offset_mag", path == "survey.color_scale", path == "stars.binary_fraction_scale",
		path == "survey.period_scatter_rel", path == "survey.half_alias_prob", path == "survey.double_alias_prob",
		placementKeys[path], strings.HasPrefix(path, "survey.search_"):
		return 0
	case strings.HasPrefix(path, "spin.spots."), strings.HasPrefix(path, "survey.detection_"),
		strings.HasPrefix(path, "survey.noise_"):
		return 1
	}
	return 2
}

// IsLinearPath reports whether a catalog's expected counts are linear in
// a nuisance path: the free-form search loss's nodes and shares (a star
// counts with its detection probability, which is linear in the two nodes
// it lies between, and each node's efficiency is linear in each share),
// and the binary share (a star's weight is λf/(λ₀f) with a companion,
// (1 − λf)/(1 − λ₀f) without, linear in λ while λf < 1 — over λ's whole
// range [0, 2], as the binary fraction f never exceeds 0.5). A fit's
// template expansion then needs one re-observation of such a parameter,
// not two (compare.NuisanceParam.Linear), or none when the derivative
// comes with the templates (SearchGradient, model.WeightParam).
func IsLinearPath(path string) bool {
	return IsSearchNodePath(path) || path == "stars.binary_fraction_scale"
}

// IsSearchNodePath reports whether a nuisance path sets nodes of the
// free-form search loss (its efficiencies or shares; SearchGradient).
func IsSearchNodePath(path string) bool {
	_, _, ok := searchKey(path)
	return ok
}

// searchKey returns which table of the free-form search loss a path
// names (falloff: [survey.search_falloff]) and its node.
func searchKey(path string) (node int, falloff, ok bool) {
	if _, known := nuisanceKeys[path]; !known {
		return 0, false, false
	}
	for _, t := range []struct {
		prefix string
		keys   []string
	}{{"survey.search_by_rossby.", searchByRossbyKeys}, {"survey.search_falloff.", searchFalloffKeys}} {
		key, ok := strings.CutPrefix(path, t.prefix)
		if !ok {
			continue
		}
		for i, k := range t.keys {
			if k == key {
				return i, t.prefix == "survey.search_falloff.", true
			}
		}
	}
	return 0, false, false
}

// SearchGradient returns, for a path IsSearchNodePath accepts, the derivative
// of each node's efficiency (Survey.SearchBands, in node order) in the
// path's value at s, and false for any other path. The templates'
// derivative in the path is then Σ_k grad[k]·∂templates/∂(node k's
// efficiency), which the template bank gives from one pass.
func SearchGradient(s *Scenario, path string) ([]float64, bool) {
	node, falloff, ok := searchKey(path)
	if !ok {
		return nil, false
	}
	e, r := s.Survey.SearchByRossby.Values(), s.Survey.SearchFalloff.Values()
	grad := make([]float64, len(e))
	if !falloff {
		// ε_k = e_k·Π_{i≤k} r_i.
		grad[node] = 1
		for _, ri := range r[:node+1] {
			grad[node] *= ri
		}
		return grad, true
	}
	// ∂ε_k/∂r_j = e_k·Π_{i≤k, i≠j} r_i for k ≥ j: the product without
	// r_j, not ε_k/r_j, which r_j = 0 would leave undefined.
	kept := 1.0
	for k := range e {
		if k != node {
			kept *= r[k]
		}
		if k >= node {
			grad[k] = e[k] * kept
		}
	}
	return grad, true
}

// IsPlacementPath reports whether a nuisance path moves stars in height
// (the disk's heating), so that templates at its values need the stored
// stars re-weighted (assemble.HeatingWeight).
func IsPlacementPath(path string) bool { return placementKeys[path] }

// lawOptionKey returns the registry's entry for a path spin.<table>.<key>
// naming a number key of one of the law's option tables.
func lawOptionKey(law, path string) (spin.Key, bool) {
	pieces := strings.Split(path, ".")
	if len(pieces) != 3 || pieces[0] != "spin" {
		return spin.Key{}, false
	}
	spec, ok := spin.Lookup(law)
	if !ok {
		return spin.Key{}, false
	}
	for _, t := range spec.ReadTables() {
		if t.Name != pieces[1] {
			continue
		}
		for _, k := range t.Keys {
			if _, num := k.Default.(float64); num && k.Name == pieces[2] {
				return k, true
			}
		}
	}
	return spin.Key{}, false
}

// NuisancePaths lists, sorted, the paths a nuisance parameter may name for
// a scenario using spin-down law law (the other laws' option tables are
// accepted too, and do nothing; they are not listed).
func NuisancePaths(law string) []string {
	out := make([]string, 0, len(nuisanceKeys))
	for k := range nuisanceKeys {
		out = append(out, k)
	}
	if spec, ok := spin.Lookup(law); ok {
		for _, t := range spec.ReadTables() {
			for _, k := range t.Keys {
				if _, num := k.Default.(float64); num {
					out = append(out, "spin."+t.Name+"."+k.Name)
				}
			}
		}
	}
	sort.Strings(out)
	return out
}

// nuisanceDomain returns the values a nuisance path can take for a
// scenario using law, or ok false for a path that is not one. A number key
// of another registered law's option table is accepted too: it does
// nothing under this law (NuisanceParams leaves it out), so that one
// comparison scenario serves every law a sweep chooses.
func nuisanceDomain(law, path string) (domain, bool) {
	if d, ok := nuisanceKeys[path]; ok {
		return d, true
	}
	for _, l := range spin.Names() {
		if k, ok := lawOptionKey(l, path); ok {
			return domain{lo: k.Min, hi: k.Max, loOpen: k.MinOpen}, true
		}
	}
	return domain{}, false
}

// ActiveNuisance reports whether a nuisance path acts under the
// scenario's law: every path but the option tables of other laws.
func ActiveNuisance(s *Scenario, path string) bool {
	if _, ok := nuisanceKeys[path]; ok {
		return true
	}
	_, ok := lawOptionKey(s.Spin.Law, path)
	return ok
}

// IsNuisancePath reports whether path names a nuisance parameter of the
// scenario.
func IsNuisancePath(s *Scenario, path string) bool {
	_, ok := nuisanceDomain(s.Spin.Law, path)
	return ok
}

// ValueAt returns the scenario's value of a number key by its dotted path
// (struct fields found by their toml tags, or an option of a spin-down
// law's table); ok is false for a path that names no number key.
func ValueAt(s *Scenario, path string) (float64, bool) {
	if k, ok := lawOptionKey(s.Spin.Law, path); ok {
		pieces := strings.Split(path, ".")
		v := s.Spin.Options.Float(pieces[1], k.Name)
		return v, !math.IsNaN(v)
	}
	f, ok := fieldAt(s, path)
	if !ok {
		return 0, false
	}
	switch f.Kind() {
	case reflect.Float64:
		return f.Float(), true
	case reflect.Int, reflect.Int64:
		return float64(f.Int()), true
	}
	return 0, false
}

// SetAt sets a number key of s by its dotted path; ok is false for a path
// that names no number key. A law option is set in a copy of the options
// (a scenario copied by value shares them). The scenario is not validated
// again: callers keep values inside the ranges validation checked.
func SetAt(s *Scenario, path string, x float64) bool {
	if k, ok := lawOptionKey(s.Spin.Law, path); ok {
		pieces := strings.Split(path, ".")
		s.Spin.Options = s.Spin.Options.Clone()
		s.Spin.Options.Set(pieces[1], k.Name, x)
		return true
	}
	f, ok := fieldAt(s, path)
	if !ok || f.Kind() != reflect.Float64 || !f.CanSet() {
		return false
	}
	f.SetFloat(x)
	return true
}

// fieldAt finds the struct field of a dotted path by toml tags.
func fieldAt(s *Scenario, path string) (reflect.Value, bool) {
	v := reflect.ValueOf(s).Elem()
	for _, piece := range strings.Split(path, ".") {
		if v.Kind() != reflect.Struct {
			return reflect.Value{}, false
		}
		found := false
		for i := range v.NumField() {
			if strings.Split(v.Type().Field(i).Tag.Get("toml"), ",")[0] == piece {
				v, found = v.Field(i), true
				break
			}
		}
		if !found {
			return reflect.Value{}, false
		}
	}
	return v, true
}

// NuisanceNominal returns the value a nuisance path has in the scenario.
func NuisanceNominal(s *Scenario, path string) (float64, error) {
	v, ok := ValueAt(s, path)
	if !ok {
		return 0, fmt.Errorf("%s is not a number key of this scenario", path)
	}
	return v, nil
}

// DefaultSigma is the width of a gaussian prior left at sigma = 0: the
// published uncertainty of a law's option (the empirical laws'
// coefficients); ok is false for a path without one.
func DefaultSigma(s *Scenario, path string) (float64, bool) {
	pieces := strings.Split(path, ".")
	if len(pieces) != 3 || pieces[0] != "spin" {
		return 0, false
	}
	// An empirical law's coefficient table is named after the law.
	return spin.PublishedUncertainty(pieces[1], pieces[2])
}

// validateNuisance checks the parts of a free parameter that only nuisance
// paths have: a gaussian prior's width and the value its centre takes.
func (v *decoder) validateNuisance(s *Scenario, p string, f FreeParam) {
	key := func(k string) string { return joinKey(p, k) }
	if f.Prior == "gaussian" {
		if !IsNuisancePath(s, f.Path) {
			v.errAt(key("prior"), "%s = \"gaussian\" applies to nuisance parameters (%s); a history parameter takes \"uniform\" or \"log-uniform\"", key("prior"), listWords(NuisancePaths(s.Spin.Law)))
			return
		}
		if !(f.Sigma >= 0) || math.IsInf(f.Sigma, 0) {
			v.errAt(key("sigma"), "%s = %s must be ≥ 0 (0 = the published uncertainty where one is known)", key("sigma"), formatFloat(f.Sigma))
		} else if f.Sigma == 0 {
			if _, ok := DefaultSigma(s, f.Path); !ok {
				v.errAt(key("sigma"), "%s: a gaussian prior on %s needs a width; give sigma (only the empirical laws' coefficients spin.<law>.a, b, c, n have a published uncertainty to default to)", p, f.Path)
			}
		}
	} else if f.Sigma != 0 {
		v.errAt(key("sigma"), "%s is the width of a gaussian prior; with prior = %s leave it out", key("sigma"), quoteString(f.Prior))
	}
	if len(f.Starts) > 0 && !IsNuisancePath(s, f.Path) {
		v.errAt(key("starts"), "%s: starting values apply to nuisance parameters; a history parameter's fit already starts from a scan of the burst age and several points", key("starts"))
	}
	for i, x := range f.Starts {
		if !(x >= f.Min && x <= f.Max) {
			v.errAt(key("starts"), "%s[%d] = %s lies outside [%s, %s]; every starting value must be one the parameter can take", key("starts"), i, formatFloat(x), formatFloat(f.Min), formatFloat(f.Max))
			break
		}
	}
	if !IsNuisancePath(s, f.Path) || !ActiveNuisance(s, f.Path) {
		return
	}
	nom, err := NuisanceNominal(s, f.Path)
	if err != nil {
		v.errAt(key("path"), "%s: %v", key("path"), err)
		return
	}
	if !v.errs.isBad(key("min")) && !v.errs.isBad(key("max")) && !(nom >= f.Min && nom <= f.Max) {
		v.errAt(key("min"), "%s: the scenario's %s = %s lies outside [%s, %s]; the range must hold the scenario's value, where the fit starts", p, f.Path, formatFloat(nom), formatFloat(f.Min), formatFloat(f.Max))
	}
	if f.Path == "stars.binary_fraction_scale" && nom == 0 {
		v.errAt(key("path"), "%s: stars.binary_fraction_scale = 0 makes no binaries to re-weight; set a positive scale to free it", key("path"))
	}
}
