package scenarios

import (
	"math"
	"reflect"
	"slices"

	"spinpop/model/spin"
)

// The spin-down laws' option tables come from the law registry
// (spin.Register): which tables exist, their keys, types, defaults and
// ranges. This file decodes, checks and writes them; it names no law.

// LawOptions holds the option tables of the registered spin-down laws:
// table → key → value (float64, bool or string), every key present. It
// satisfies spin.Options.
type LawOptions map[string]map[string]any

// Float returns a number option (NaN if the table or key is unknown).
func (o LawOptions) Float(table, key string) float64 {
	if v, ok := o[table][key].(float64); ok {
		return v
	}
	return math.NaN()
}

// Bool returns a switch option.
func (o LawOptions) Bool(table, key string) bool { v, _ := o[table][key].(bool); return v }

// String returns a word option.
func (o LawOptions) String(table, key string) string { v, _ := o[table][key].(string); return v }

// Set sets one option, for programs that vary a scenario (the laws
// comparison, tests). A scenario copied by value shares its options with
// the original: Clone them first.
func (o LawOptions) Set(table, key string, v any) {
	if o[table] == nil {
		o[table] = make(map[string]any)
	}
	o[table][key] = v
}

// Clone is a deep copy.
func (o LawOptions) Clone() LawOptions {
	c := make(LawOptions, len(o))
	for name, t := range o {
		c[name] = make(map[string]any, len(t))
		for k, v := range t {
			c[name][k] = v
		}
	}
	return c
}

var spinType = reflect.TypeFor[Spin]()

// lawDefaults adds every registered law option table, with its defaults,
// to the defaults layer's [spin] table.
func lawDefaults(def map[string]any) {
	sp, _ := def["spin"].(map[string]any)
	if sp == nil {
		sp = make(map[string]any)
		def["spin"] = sp
	}
	tables, _ := spin.OptionTables()
	for _, t := range tables {
		m := make(map[string]any, len(t.Keys))
		for _, k := range t.Keys {
			m[k.Name] = k.Default
		}
		sp[t.Name] = m
	}
}

// spinTable decodes [spin]: its own keys, then one law option table per
// registered table.
func (d *decoder) spinTable(path string, v any, sp *Spin) {
	m, ok := v.(map[string]any)
	if !ok {
		d.wrongType(path, "a table", v)
		return
	}
	tables, _ := spin.OptionTables()
	fi := fieldsOf(spinType)
	rv := reflect.ValueOf(sp).Elem()
	valid := slices.Clone(fi.names)
	for _, t := range tables {
		valid = append(valid, t.Name)
	}
	slices.Sort(valid)
	sp.Options = make(LawOptions, len(tables))
	for _, k := range sortedKeys(m) {
		p := joinKey(path, k)
		if i, own := fi.index[k]; own {
			d.value(p, m[k], rv.Field(i))
			continue
		}
		ti := slices.IndexFunc(tables, func(t spin.OptionTable) bool { return t.Name == k })
		if ti < 0 {
			d.unknown(path, k, valid, "")
			continue
		}
		sub, ok := m[k].(map[string]any)
		if !ok {
			d.wrongType(p, "a table", m[k])
			continue
		}
		sp.Options[k] = d.optionTable(p, sub, tables[ti])
	}
}

// optionTable decodes one law option table by its keys' types.
func (d *decoder) optionTable(path string, m map[string]any, t spin.OptionTable) map[string]any {
	out := make(map[string]any, len(t.Keys))
	names := make([]string, len(t.Keys))
	for i, k := range t.Keys {
		names[i] = k.Name
	}
	slices.Sort(names)
	for _, k := range sortedKeys(m) {
		p := joinKey(path, k)
		i := slices.IndexFunc(t.Keys, func(key spin.Key) bool { return key.Name == k })
		if why, gone := t.Retired[k]; i < 0 && gone {
			d.errAt(p, "key %q in [%s] is no longer read: %s", k, path, why)
			continue
		}
		if i < 0 {
			d.unknown(path, k, names, "")
			continue
		}
		switch t.Keys[i].Default.(type) {
		case float64:
			if x, ok := d.number(p, m[k]); ok {
				out[k] = x
			}
		case bool:
			if b, ok := m[k].(bool); ok {
				out[k] = b
			} else {
				d.wrongType(p, "true or false", m[k])
			}
		case string:
			if s, ok := m[k].(string); ok {
				out[k] = s
			} else {
				d.wrongType(p, "a string", m[k])
			}
		}
	}
	return out
}

// validateLawOptions checks every law option table against its keys'
// ranges, as the law registry declares them.
func (v *decoder) validateLawOptions(o LawOptions) {
	tables, _ := spin.OptionTables()
	for _, t := range tables {
		p := "spin." + t.Name
		if t.Switch != "" && t.SkipWhenOff {
			if on, _ := o[t.Name][t.Switch].(bool); !on {
				continue
			}
		}
		for _, k := range t.Keys {
			kp := joinKey(p, k.Name)
			switch val := o[t.Name][k.Name].(type) {
			case string:
				if len(k.OneOf) > 0 {
					v.oneOf(kp, val, k.OneOf)
				}
			case float64:
				v.keyRange(kp, val, k)
				if k.Above != "" {
					lo, _ := o[t.Name][k.Above].(float64)
					v.less(joinKey(p, k.Above), lo, kp, val, k.AboveWhy)
				}
			}
		}
	}
}

// keyRange checks a number against a registered key's range, in the words
// the hand-written checks use: "must be > 0", "must be ≥ x", or "is out of
// range; it must be in [a, b)".
func (v *decoder) keyRange(p string, x float64, k spin.Key) {
	switch {
	case math.IsInf(k.Min, -1) && math.IsInf(k.Max, 1):
	case math.IsInf(k.Max, 1) && k.Min == 0 && k.MinOpen:
		v.positive(p, x)
	case math.IsInf(k.Max, 1) && !k.MinOpen:
		v.atLeast(p, x, k.Min, k.Why)
	default:
		v.inRange(p, x, k.Min, !k.MinOpen, k.Max, !k.MaxOpen, k.Why)
	}
}

// lawOptionsTree is the law option tables for the canonical form.
func lawOptionsTree(o LawOptions, out map[string]any) {
	for name, t := range o {
		m := make(map[string]any, len(t))
		for k, v := range t {
			m[k] = v
		}
		out[name] = m
	}
}

// SwitchedOnElsewhere lists the switched-on option tables
// ("spin.weakened_braking") that belong to laws other than s.Spin.Law and
// that it does not borrow, and the laws they belong to: options the
// scenario's law cannot use.
func SwitchedOnElsewhere(s *Scenario) (tables []string, owners []string) {
	all, own := spin.OptionTables()
	spec, _ := spin.Lookup(s.Spin.Law)
	for i, t := range all {
		if own[i] == s.Spin.Law || t.Switch == "" || slices.Contains(spec.Borrows, t.Name) {
			continue
		}
		if on, _ := s.Spin.Options[t.Name][t.Switch].(bool); on {
			tables = append(tables, "spin."+t.Name)
			if !slices.Contains(owners, own[i]) {
				owners = append(owners, own[i])
			}
		}
	}
	return tables, owners
}
