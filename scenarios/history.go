package scenarios

import (
	"fmt"
	"reflect"
	"slices"
	"strconv"
)

// Part kinds and the keys each one takes, "kind" aside.
var partKeys = map[string][]string{
	"constant":    {"weight"},
	"exponential": {"timescale_gyr", "weight"},
	"burst":       {"age_gyr", "mass_fraction", "width_gyr"},
	"dip":         {"age_gyr", "depth", "width_gyr"},
	"bins":        {"edges_gyr", "rates", "weight"},
}

// partRequired lists the keys without a default, per kind.
var partRequired = map[string][]string{
	"exponential": {"timescale_gyr"},
	"burst":       {"age_gyr", "mass_fraction", "width_gyr"},
	"dip":         {"age_gyr", "depth", "width_gyr"},
	"bins":        {"edges_gyr", "rates"},
}

// partKinds is the order kinds are listed in messages.
var partKinds = []string{"constant", "exponential", "burst", "dip", "bins"}

// isSmooth reports whether a kind carries a share of the non-burst mass.
func isSmooth(kind string) bool { return kind == "constant" || kind == "exponential" || kind == "bins" }

// history decodes [history]: max_age_gyr and one named part per sub-table.
func (d *decoder) history(path string, v any, h *History) {
	m, ok := v.(map[string]any)
	if !ok {
		d.wrongType(path, "a table", v)
		return
	}
	h.Parts = make(map[string]Part)
	for _, k := range sortedKeys(m) {
		p := joinKey(path, k)
		if k == "max_age_gyr" {
			d.value(p, m[k], reflect.ValueOf(&h.MaxAgeGyr).Elem())
			continue
		}
		sub, ok := m[k].(map[string]any)
		if !ok {
			d.unknown(path, k, []string{"max_age_gyr"},
				" (besides max_age_gyr, [history] holds only named parts as sub-tables, e.g. [history.smooth] kind = \"constant\")")
			continue
		}
		if !isBareKey(k) {
			d.errAt(p, "history part name %s must use only letters, digits, '_' and '-', so that its parameters have plain paths like history.burst.age_gyr", quoteString(k))
			continue
		}
		h.Parts[k] = d.part(p, sub)
	}
}

// part decodes one history part, checking keys against its kind.
func (d *decoder) part(p string, m map[string]any) Part {
	var part Part
	kindPath := joinKey(p, "kind")
	kv, ok := m["kind"]
	if !ok {
		d.errAt(kindPath, "%s is missing; every history part needs a kind: one of %s (or \"none\" to remove an inherited part)", kindPath, listWords(partKinds))
	} else if s, isStr := kv.(string); !isStr {
		d.wrongType(kindPath, "a string", kv)
	} else if _, known := partKeys[s]; !known {
		d.errAt(kindPath, "%s = %s is not a kind of history part; use one of %s", kindPath, quoteString(s), listWords(partKinds))
	} else {
		part.Kind = s
	}

	fi := fieldsOf(reflect.TypeFor[Part]())
	rv := reflect.ValueOf(&part).Elem()
	valid := partKeys[part.Kind]
	for _, k := range sortedKeys(m) {
		if k == "kind" {
			continue
		}
		kp := joinKey(p, k)
		i, known := fi.index[k]
		switch {
		case !known:
			cands := valid
			if part.Kind == "" {
				cands = fi.names
			}
			d.unknown(p, k, cands, "")
		case part.Kind != "" && !slices.Contains(valid, k):
			d.errAt(kp, "%s does not apply to a part of kind %q; its keys are: kind, %s", kp, part.Kind, listWords(valid))
		default:
			d.value(kp, m[k], rv.Field(i))
		}
	}
	if part.Kind == "" {
		return part
	}
	has := func(kp string) bool { _, ok := m[kp[len(p)+1:]]; return ok }
	d.required(p, partRequired[part.Kind], has, fmt.Sprintf("a part of kind %q", part.Kind))
	if _, ok := m["weight"]; !ok && slices.Contains(valid, "weight") {
		part.Weight = 1
	}
	return part
}

// validateHistory checks the parts against each other and the age range.
func (v *decoder) validateHistory(h *History) {
	maxAge := h.MaxAgeGyr
	v.inRange("history.max_age_gyr", maxAge, 0, false, 14, true,
		"lookback ages beyond the age of the Universe (about 13.8 Gyr) make no sense")
	if len(h.Parts) == 0 {
		v.errAt("history", "the history has no parts; add at least one, e.g. [history.smooth] kind = \"constant\"")
		return
	}
	var burstSum, weightSum float64
	var smooth, dips int
	sumsKnown := true // false when a fraction or weight already failed
	for _, name := range sortedParts(h.Parts) {
		part := h.Parts[name]
		p := joinKey("history", name)
		key := func(k string) string { return joinKey(p, k) }
		switch part.Kind {
		case "constant", "exponential", "bins":
			smooth++
			v.atLeast(key("weight"), part.Weight, 0, "")
			weightSum += part.Weight
			sumsKnown = sumsKnown && !v.errs.isBad(key("weight"))
		}
		switch part.Kind {
		case "exponential":
			v.positive(key("timescale_gyr"), part.TimescaleGyr)
		case "burst", "dip":
			v.inRange(key("age_gyr"), part.AgeGyr, 0, true, maxAge, true, "the centre must lie within the history, up to history.max_age_gyr")
			v.positive(key("width_gyr"), part.WidthGyr)
			if part.Kind == "burst" {
				v.inRange(key("mass_fraction"), part.MassFraction, 0, true, 1, true, "")
				burstSum += part.MassFraction
				sumsKnown = sumsKnown && !v.errs.isBad(key("mass_fraction"))
			} else {
				dips++
				v.inRange(key("depth"), part.Depth, 0, true, 1, true, "")
			}
		case "bins":
			v.binEdges(key("edges_gyr"), part.EdgesGyr, maxAge, false)
			if !v.errs.isBad(key("edges_gyr")) && !v.errs.isBad(key("rates")) {
				v.rates(key("rates"), part.Rates, len(part.EdgesGyr)-1)
			}
		}
	}
	switch {
	case !sumsKnown:
	case burstSum > 1+1e-12:
		v.errAt("history", "the bursts' mass_fraction values add up to %s; they are shares of all mass formed, so their sum must be at most 1", strconv.FormatFloat(burstSum, 'g', 6, 64))
	case smooth == 0 && burstSum < 1-1e-12:
		v.errAt("history", "the history has no smooth part (constant, exponential or bins) to hold the %s of mass the bursts leave; add one or make the bursts' mass_fraction values add up to 1", strconv.FormatFloat(1-burstSum, 'g', 6, 64))
	case smooth > 0 && weightSum <= 0:
		v.errAt("history", "the smooth parts' weights add up to 0; at least one weight must be positive")
	}
	if dips > 0 && smooth == 0 {
		v.errAt("history", "a dip suppresses the smooth history, but there is no smooth part (constant, exponential or bins)")
	}
}

// rates checks a bins part's rates against its number of bins.
func (v *decoder) rates(p string, rates []float64, bins int) {
	if len(rates) != bins {
		v.errAt(p, "%s has %d values but edges_gyr defines %d bins; give one rate per bin", p, len(rates), bins)
		return
	}
	sum := 0.0
	for i, r := range rates {
		if r < 0 {
			v.errAt(p, "%s element %d is %s; rates must be ≥ 0", p, i+1, formatFloat(r))
			return
		}
		sum += r
	}
	if sum <= 0 {
		v.errAt(p, "%s are all zero; at least one rate must be positive", p)
	}
}

func sortedParts(parts map[string]Part) []string {
	names := make([]string, 0, len(parts))
	for k := range parts {
		names = append(names, k)
	}
	slices.Sort(names)
	return names
}
