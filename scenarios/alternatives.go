package scenarios

import (
	"fmt"
	"slices"
	"strings"
)

// Alternatives inside one scenario. [[compare.alternatives]] names other
// explanations of the same catalog as changes to the scenario that holds
// them, so that "burst", "stall" and "burst and stall" can live in one file
// a collaborator runs as it is:
//
//	[[compare.alternatives]]
//	name = "stall"
//	set = ["spin.law=torque", "spin.stall.enabled=true"]
//	drop = ["burst"]
//
// Each alternative resolves as a scenario of its own: the same files and
// command-line overrides, then its settings (AlternativeOverrides). Its
// settings are checked here for form; the scenario they make is checked
// when it is resolved, by the same code as any scenario.

// validateAlternatives checks each alternative's name, settings and
// dropped parts.
func (v *decoder) validateAlternatives(s *Scenario) {
	seen := make(map[string]int)
	for i, a := range s.Compare.Alternatives {
		p := elemKey("compare.alternatives", i)
		v.required(p, []string{"name"}, v.present, "each [[compare.alternatives]] entry")
		np := joinKey(p, "name")
		switch {
		case v.errs.isBad(np):
		case !isBareKey(a.Name):
			v.errAt(np, "%s = %s must be a short name of letters, digits, '-' and '_' (it labels the explanation in reports), e.g. \"stall\"", np, quoteString(a.Name))
		case a.Name == s.Name:
			v.errAt(np, "%s = %s is the scenario's own name; the scenario itself is always one of the explanations, so name the alternative after what it changes", np, quoteString(a.Name))
		default:
			if j, dup := seen[a.Name]; dup {
				v.errAt(np, "%s = %s repeats compare.alternatives[%d]; each alternative needs a name of its own", np, quoteString(a.Name), j)
			}
			seen[a.Name] = i
		}
		if len(a.Set) == 0 && len(a.Drop) == 0 {
			v.errAt(p, "%s changes nothing (no set, no drop): it would be the scenario itself; give it settings such as set = [\"spin.law=torque\"] or drop = [\"burst\"]", p)
		}
		sp := joinKey(p, "set")
		for j, text := range a.Set {
			o, err := ParseOverride(text)
			if err != nil {
				v.errAt(sp, "%s element %d (%s): %s", sp, j+1, quoteString(text), errorMessage(err))
				continue
			}
			if o.Key == "compare.alternatives" || strings.HasPrefix(o.Key, "compare.alternatives.") {
				v.errAt(sp, "%s element %d sets %s; an alternative cannot hold alternatives of its own", sp, j+1, o.Key)
			}
		}
		dp := joinKey(p, "drop")
		for j, part := range a.Drop {
			if _, ok := s.History.Parts[part]; !ok {
				msg := fmt.Sprintf("%s element %d is %s, which is not a part of this scenario's history", dp, j+1, quoteString(part))
				if names := sortedParts(s.History.Parts); len(names) > 0 {
					msg += "; its parts are: " + listWords(names)
				}
				v.errAt(dp, "%s", msg)
			} else if slices.Index(a.Drop, part) < j {
				v.errAt(dp, "%s names %s twice", dp, quoteString(part))
			}
		}
	}
}

// errorMessage is an error's message without the "file:" prefix a
// scenario error carries, for errors quoted inside another.
func errorMessage(err error) string {
	if e, ok := err.(*Error); ok {
		return e.Msg
	}
	return err.Error()
}

// AlternativeOverrides returns the overrides that turn scenario s into its
// alternative i, to be applied after the scenario's own overrides:
// the dropped parts removed (kind = "none") with the free parameters that
// belong to them, no alternatives of its own, the alternative's name as
// the scenario's, then its settings in order (so a setting of compare.free
// replaces the list derived from the drops).
func AlternativeOverrides(s *Scenario, i int) ([]Override, error) {
	if i < 0 || i >= len(s.Compare.Alternatives) {
		return nil, fmt.Errorf("scenarios: no alternative %d (the scenario has %d)", i, len(s.Compare.Alternatives))
	}
	a := s.Compare.Alternatives[i]
	label := fmt.Sprintf("compare.alternatives %q", a.Name)
	var out []Override
	add := func(key string, value any) error {
		o, err := NewOverride(label+": "+key, key, value)
		if err != nil {
			return err
		}
		out = append(out, o)
		return nil
	}
	if err := add("name", a.Name); err != nil {
		return nil, err
	}
	if err := add("compare.alternatives", []any{}); err != nil {
		return nil, err
	}
	if len(a.Drop) > 0 {
		for _, part := range a.Drop {
			if err := add("history."+part, map[string]any{"kind": "none"}); err != nil {
				return nil, err
			}
		}
		var free []any
		for _, f := range s.Compare.Free {
			pieces := strings.Split(f.Path, ".")
			if len(pieces) == 3 && pieces[0] == "history" && slices.Contains(a.Drop, pieces[1]) {
				continue
			}
			free = append(free, freeItem(f))
		}
		if err := add("compare.free", free); err != nil {
			return nil, err
		}
	}
	for _, text := range a.Set {
		o, err := ParseOverride(text)
		if err != nil {
			return nil, err
		}
		if o, err = NewOverride(label+": "+text, o.Key, o.Value); err != nil {
			return nil, err
		}
		out = append(out, o)
	}
	return out, nil
}

// freeItem is a free parameter as an override's value: the keys a user
// writes in [[compare.free]].
func freeItem(f FreeParam) map[string]any {
	item := map[string]any{"path": f.Path, "min": f.Min, "max": f.Max, "prior": f.Prior, "sigma": f.Sigma}
	if len(f.Starts) > 0 {
		starts := make([]any, len(f.Starts))
		for i, x := range f.Starts {
			starts[i] = x
		}
		item["starts"] = starts
	}
	return item
}
