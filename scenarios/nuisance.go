package scenarios

import (
	"fmt"
	"math"
	"reflect"
	"slices"
	"sort"
	"strings"

	"spinpop/model/spin"
)

// Nuisance parameters. A [[compare.free]] path outside [history] names a
// parameter of the physics or the selection that a fit moves together with
// the history. Only keys that change how a star is observed — its rotation,
// the detection and measurement of its period, its color on the
// catalogue's scale, the share of binaries — qualify: the comparison then
// re-observes the stars it stored when it built the templates instead of
// making new ones. Keys that change which stars exist (the IMF, the disk,
// the dust, the survey's magnitude limits, the field) cannot be nuisance
// parameters; a sweep varies them instead.

// nuisanceKeys are the paths a nuisance parameter may name, with the
// values each can take (as validate checks the key itself).
var nuisanceKeys = map[string]domain{
	"spin.period_scatter_dex":              {lo: 0, hi: 0.5},
	"spin.gyro.a":                          {lo: 0, hi: 10, loOpen: true},
	"spin.gyro.b":                          {lo: 0, hi: 2, loOpen: true},
	"spin.gyro.c":                          {lo: 0, hi: 1, loOpen: true},
	"spin.gyro.n":                          {lo: 0, hi: 1.5, loOpen: true},
	"spin.torque.solar_period_d":           {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.torque.saturation_chi":           {lo: 1, hi: math.Inf(1)},
	"spin.torque.initial_period_median_d":  {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.torque.initial_period_sigma_dex": {lo: 0, hi: math.Inf(1)},
	"spin.stall.start_gyr_at_0p8msun":      {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.stall.duration_gyr_at_0p8msun":   {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.stall.catch_up_fraction":         {lo: 0, hi: 10},
	"spin.spots.ro_sat":                    {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.spots.amp_sat_ppm":               {lo: 0, hi: math.Inf(1), loOpen: true},
	"spin.spots.slope":                     {lo: 0, hi: math.Inf(1)},
	"spin.spots.scatter_dex":               {lo: 0, hi: math.Inf(1)},
	"survey.detection_snr":                 {lo: 0, hi: math.Inf(1), loOpen: true},
	"survey.detection_sharpness":           {lo: 0, hi: 50, loOpen: true},
	"survey.noise_floor_ppm":               {lo: 0, hi: math.Inf(1)},
	"survey.noise_ppm_at_ref_mag":          {lo: 0, hi: math.Inf(1), loOpen: true},
	"survey.period_scatter_rel":            {lo: 0, hi: 0.999},
	"survey.half_alias_prob":               {lo: 0, hi: 1},
	"survey.double_alias_prob":             {lo: 0, hi: 1},
	"survey.color_offset_mag":              {lo: -0.3, hi: 0.3},
	"survey.color_scale":                   {lo: 0.7, hi: 1.3},
	"stars.binary_fraction_scale":          {lo: 0, hi: 2},
	"stars.tidal_lock_fraction":            {lo: 0, hi: 1},
}

// NuisancePaths lists, sorted, the paths a nuisance parameter may name.
func NuisancePaths() []string {
	out := make([]string, 0, len(nuisanceKeys))
	for k := range nuisanceKeys {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// IsNuisancePath reports whether path names a nuisance parameter.
func IsNuisancePath(path string) bool {
	_, ok := nuisanceKeys[path]
	return ok
}

// ValueAt returns the scenario's value of a numeric key by its dotted
// path (struct fields found by their toml tags); ok is false for a path
// that names no numeric key.
func ValueAt(s *Scenario, path string) (float64, bool) {
	v := reflect.ValueOf(s).Elem()
	for _, piece := range strings.Split(path, ".") {
		if v.Kind() != reflect.Struct {
			return 0, false
		}
		found := false
		for i := range v.NumField() {
			if strings.Split(v.Type().Field(i).Tag.Get("toml"), ",")[0] == piece {
				v, found = v.Field(i), true
				break
			}
		}
		if !found {
			return 0, false
		}
	}
	switch v.Kind() {
	case reflect.Float64:
		return v.Float(), true
	case reflect.Int, reflect.Int64:
		return float64(v.Int()), true
	}
	return 0, false
}

// SetAt sets a numeric key of s by its dotted path; ok is false for a
// path that names no numeric key. The scenario is not validated again:
// callers keep values inside the ranges validation checked.
func SetAt(s *Scenario, path string, x float64) bool {
	v := reflect.ValueOf(s).Elem()
	for _, piece := range strings.Split(path, ".") {
		if v.Kind() != reflect.Struct {
			return false
		}
		found := false
		for i := range v.NumField() {
			if strings.Split(v.Type().Field(i).Tag.Get("toml"), ",")[0] == piece {
				v, found = v.Field(i), true
				break
			}
		}
		if !found {
			return false
		}
	}
	if v.Kind() != reflect.Float64 || !v.CanSet() {
		return false
	}
	v.SetFloat(x)
	return true
}

// NuisanceNominal returns the value a nuisance path has in the scenario:
// its key's value, or for spin.gyro.* left at 0 the law's published
// coefficient.
func NuisanceNominal(s *Scenario, path string) (float64, error) {
	v, ok := ValueAt(s, path)
	if !ok {
		return 0, fmt.Errorf("%s is not a numeric scenario key", path)
	}
	if strings.HasPrefix(path, "spin.gyro.") && v == 0 {
		g, err := gyroLaw(s.Spin.Law)
		if err != nil {
			return 0, fmt.Errorf("%s: %w", path, err)
		}
		switch path {
		case "spin.gyro.a":
			v = g.A
		case "spin.gyro.b":
			v = g.B
		case "spin.gyro.c":
			v = g.C
		case "spin.gyro.n":
			v = g.N
		}
	}
	return v, nil
}

// gyroLaw returns the empirical law named, or an error for the torque law.
func gyroLaw(name string) (spin.GyroLaw, error) {
	l, err := spin.ByName(name)
	if err != nil {
		return spin.GyroLaw{}, err
	}
	g, ok := l.(spin.GyroLaw)
	if !ok {
		return spin.GyroLaw{}, fmt.Errorf("spin.law = %q is not an empirical law; spin.gyro applies to barnes2007, mamajek2008 and angus2015", name)
	}
	return g, nil
}

// defaultSigma is the width of a gaussian prior left at sigma = 0: the
// published uncertainty of an empirical law's coefficient; ok is false for
// a path without one.
func defaultSigma(s *Scenario, path string) (float64, bool) {
	if !strings.HasPrefix(path, "spin.gyro.") {
		return 0, false
	}
	g, err := gyroLaw(s.Spin.Law)
	if err != nil {
		return 0, false
	}
	u := g.Uncertainty
	return map[string]float64{"spin.gyro.a": u.A, "spin.gyro.b": u.B, "spin.gyro.c": u.C, "spin.gyro.n": u.N}[path], true
}

// validateNuisance checks the parts of a free parameter that only nuisance
// paths have: a gaussian prior's width and the value its centre takes.
func (v *decoder) validateNuisance(s *Scenario, p string, f FreeParam) {
	key := func(k string) string { return joinKey(p, k) }
	if f.Prior == "gaussian" {
		if !IsNuisancePath(f.Path) {
			v.errAt(key("prior"), "%s = \"gaussian\" applies to nuisance parameters (%s); a history parameter takes \"uniform\" or \"log-uniform\"", key("prior"), listWords(NuisancePaths()))
			return
		}
		if !(f.Sigma >= 0) || math.IsInf(f.Sigma, 0) {
			v.errAt(key("sigma"), "%s = %s must be ≥ 0 (0 = the published uncertainty where one is known)", key("sigma"), formatFloat(f.Sigma))
		} else if f.Sigma == 0 {
			if _, ok := defaultSigma(s, f.Path); !ok {
				v.errAt(key("sigma"), "%s: a gaussian prior on %s needs a width; give sigma (only the empirical laws' coefficients spin.gyro.* have a published uncertainty to default to)", p, f.Path)
			}
		}
	} else if f.Sigma != 0 {
		v.errAt(key("sigma"), "%s is the width of a gaussian prior; with prior = %s leave it out", key("sigma"), quoteString(f.Prior))
	}
	if !IsNuisancePath(f.Path) {
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
	if slices.Contains([]string{"survey.color_offset_mag", "survey.color_scale"}, f.Path) && s.Compare.Normalisation == "absolute" {
		return
	}
}
