package scenarios

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"slices"
	"strings"

	"spinpop/sfh"
)

// The kinds of history part, their keys, defaults and ranges come from the
// history registry (sfh.RegisterKind); the rules between parts are sfh.New's.
// This file decodes and checks [history]; it names no kind.

// partKinds is the order kinds are listed in messages.
func partKinds() []string {
	var out []string
	for _, k := range sfh.Kinds() {
		out = append(out, k.Name)
	}
	return out
}

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

// allPartKeys lists every key any kind takes, sorted, for suggestions
// when the kind is unknown.
func allPartKeys() []string {
	var out []string
	for _, k := range sfh.Kinds() {
		for _, n := range k.KeyNames() {
			if !slices.Contains(out, n) {
				out = append(out, n)
			}
		}
	}
	slices.Sort(out)
	return out
}

// part decodes one history part, checking keys against its kind.
func (d *decoder) part(p string, m map[string]any) Part {
	var part Part
	var spec sfh.KindSpec
	kindPath := joinKey(p, "kind")
	kv, ok := m["kind"]
	if !ok {
		d.errAt(kindPath, "%s is missing; every history part needs a kind: one of %s (or \"none\" to remove an inherited part)", kindPath, listWords(partKinds()))
	} else if s, isStr := kv.(string); !isStr {
		d.wrongType(kindPath, "a string", kv)
	} else if k, known := sfh.LookupKind(s); !known {
		d.errAt(kindPath, "%s = %s is not a kind of history part; use one of %s", kindPath, quoteString(s), listWords(partKinds()))
	} else {
		part.Kind, spec = s, k
	}

	valid := spec.KeyNames()
	all := allPartKeys()
	part.Values, part.Arrays = map[string]float64{}, map[string][]float64{}
	for _, k := range sortedKeys(m) {
		if k == "kind" {
			continue
		}
		kp := joinKey(p, k)
		switch key, inKind := spec.Key(k); {
		case !slices.Contains(all, k):
			cands := valid
			if part.Kind == "" {
				cands = all
			}
			d.unknown(p, k, cands, "")
		case part.Kind == "":
			// The kind is unknown: its keys cannot be judged.
		case !inKind:
			d.errAt(kp, "%s does not apply to a part of kind %q; its keys are: kind, %s", kp, part.Kind, listWords(valid))
		case key.Array:
			var xs []float64
			d.value(kp, m[k], reflect.ValueOf(&xs).Elem())
			part.Arrays[k] = xs
		default:
			if x, ok := d.number(kp, m[k]); ok {
				part.Values[k] = x
			}
		}
	}
	if part.Kind == "" {
		return part
	}
	has := func(kp string) bool { _, ok := m[kp[len(p)+1:]]; return ok }
	var required []string
	for _, key := range spec.Keys {
		if key.Required {
			required = append(required, key.Name)
		} else if _, given := m[key.Name]; !given && !key.Array {
			part.Values[key.Name] = key.Default
		}
	}
	slices.Sort(required)
	d.required(p, required, has, fmt.Sprintf("a part of kind %q", part.Kind))
	return part
}

// validateHistory checks each part's keys against the ranges its kind
// declares, then hands the parts to sfh.New, which owns the rules between
// them (how bursts and smooth parts share the mass, what dips may remove).
func (v *decoder) validateHistory(h *History) {
	maxAge := h.MaxAgeGyr
	v.inRange("history.max_age_gyr", maxAge, 0, false, 14, true,
		"lookback ages beyond the age of the Universe (about 13.8 Gyr) make no sense")
	if len(h.Parts) == 0 {
		v.errAt("history", "the history has no parts; add at least one, e.g. [history.smooth] kind = \"constant\"")
		return
	}
	before := len(v.errs.errs) + v.errs.dropped
	for _, name := range sortedParts(h.Parts) {
		part := h.Parts[name]
		spec, ok := sfh.LookupKind(part.Kind)
		p := joinKey("history", name)
		if !ok || v.errs.isBad(p) {
			continue
		}
		for _, key := range spec.Keys {
			kp := joinKey(p, key.Name)
			if key.Array || v.errs.isBad(kp) {
				continue
			}
			if _, given := part.Values[key.Name]; !given {
				continue // missing: reported already
			}
			lo, hi, loOpen, hiOpen := key.Range(maxAge)
			if key.MaxIsAge && v.errs.isBad("history.max_age_gyr") {
				continue
			}
			v.partKey(kp, part.Values[key.Name], key, lo, hi, loOpen, hiOpen)
		}
		if spec.Check != nil && !v.anyBad(p, spec) && !v.errs.isBad("history.max_age_gyr") {
			if ke := spec.Check(part, maxAge); ke != nil {
				kp := joinKey(p, ke.Key)
				v.errAt(kp, "%s %s", kp, ke.Msg)
			}
		}
	}
	if len(v.errs.errs)+v.errs.dropped > before || v.errs.isBad("history") || v.errs.isBad("history.max_age_gyr") {
		return // sfh.New would only repeat what is said
	}
	for n := range h.Parts {
		if v.errs.isBad(joinKey("history."+n, "kind")) {
			return // reported when decoded; building would call the kind ""
		}
	}
	if _, err := BuildHistory(h); err != nil {
		key := "history"
		var pe *sfh.ParamError
		if errors.As(err, &pe) && pe.Param != "" {
			key = "history." + pe.Param
		}
		v.errAt(key, "%s", strings.TrimPrefix(err.Error(), "sfh: "))
	}
}

// anyBad reports whether a key of part p already failed.
func (v *decoder) anyBad(p string, spec sfh.KindSpec) bool {
	for _, key := range spec.Keys {
		if v.errs.isBad(joinKey(p, key.Name)) {
			return true
		}
	}
	return false
}

// partKey checks one number key of a part against its kind's range, in the
// words of the other range checks.
func (v *decoder) partKey(p string, x float64, key sfh.KindKey, lo, hi float64, loOpen, hiOpen bool) {
	switch {
	case key.NonZero && x == 0:
		v.errAt(p, "%s = 0 must not be 0 (%s)", p, key.Why)
	case math.IsInf(lo, -1) && math.IsInf(hi, 1):
	case math.IsInf(hi, 1) && lo == 0 && loOpen:
		v.positive(p, x)
	case math.IsInf(hi, 1) && !loOpen:
		v.atLeast(p, x, lo, key.Why)
	default:
		v.inRange(p, x, lo, !loOpen, hi, !hiOpen, key.Why)
	}
}

// BuildHistory builds the star-formation history of a scenario's
// [history], parts in name order so the same file always builds the same
// history.
func BuildHistory(h *History) (*sfh.History, error) {
	names := sortedParts(h.Parts)
	parts := make([]sfh.Part, 0, len(names))
	for _, n := range names {
		p := h.Parts[n]
		spec, ok := sfh.LookupKind(p.Kind)
		if !ok {
			return nil, fmt.Errorf("history.%s.kind = %q: want one of %s", n, p.Kind, listWords(partKinds()))
		}
		c, w := spec.New(p)
		parts = append(parts, sfh.Part{Name: n, Component: c, Weight: w})
	}
	return sfh.New(h.MaxAgeGyr, parts)
}

func sortedParts(parts map[string]Part) []string {
	names := make([]string, 0, len(parts))
	for k := range parts {
		names = append(names, k)
	}
	slices.Sort(names)
	return names
}
