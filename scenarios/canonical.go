package scenarios

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"
)

// The canonical form is the identity of a scenario: every value written
// out, defaults included, keys sorted, numbers in one format, comments and
// extends gone. Two files that mean the same run have the same canonical
// form and so the same hash, whatever their layout.

// Canonical returns the scenario as canonical TOML. Loading it back gives
// the same scenario and the same hash.
func (r *Resolved) Canonical() []byte {
	var b bytes.Buffer
	writeTable(&b, "", toTree(reflect.ValueOf(r.Scenario)))
	return b.Bytes()
}

// Hash is the hex SHA-256 of the canonical form: it changes exactly when
// the run the scenario describes changes.
func (r *Resolved) Hash() string {
	sum := sha256.Sum256(r.Canonical())
	return hex.EncodeToString(sum[:])
}

// PartHash hashes only the named sections, given as dotted key paths such
// as "disk", "spin.torque", "history.burst" or "run.seed". Products that
// depend on part of a scenario (templates do not depend on the history, for
// example) can so be reused across scenarios that differ elsewhere. The
// order of sections does not matter; a section name is part of what is
// hashed, so equal content under different sections hashes differently.
func (r *Resolved) PartHash(sections ...string) (string, error) {
	if len(sections) == 0 {
		return "", errors.New("scenarios: PartHash needs at least one section, e.g. \"disk\"")
	}
	full := toTree(reflect.ValueOf(r.Scenario))
	sel := make(map[string]any)
	secs := slices.Clone(sections)
	slices.Sort(secs)
	for _, sec := range slices.Compact(secs) {
		pieces := strings.Split(sec, ".")
		var node any = full
		for _, k := range pieces {
			t, ok := node.(map[string]any)
			if !ok {
				node = nil
				break
			}
			node = t[k]
		}
		if node == nil {
			return "", fmt.Errorf("scenarios: PartHash: no section %q in the scenario; top-level sections are %s", sec, listWords(sortedKeys(full)))
		}
		dst := sel
		for _, k := range pieces[:len(pieces)-1] {
			next, ok := dst[k].(map[string]any)
			if !ok {
				next = make(map[string]any)
				dst[k] = next
			}
			dst = next
		}
		dst[pieces[len(pieces)-1]] = node
	}
	var b bytes.Buffer
	writeTable(&b, "", sel)
	sum := sha256.Sum256(b.Bytes())
	return hex.EncodeToString(sum[:]), nil
}

var compareType = reflect.TypeFor[Compare]()

// toTree turns a struct into a generic tree following its toml tags. Leaves
// keep their Go types (string, bool, int64, uint64, float64, []float64)
// so that integers and floats print differently.
func toTree(rv reflect.Value) map[string]any {
	t := rv.Type()
	fi := fieldsOf(t)
	out := make(map[string]any, len(fi.names))
	for _, k := range fi.names {
		out[k] = leaf(rv.Field(fi.index[k]))
	}
	switch t {
	case historyType:
		h := rv.Interface().(History)
		for name, p := range h.Parts {
			out[name] = partTree(p)
		}
	case spinType:
		lawOptionsTree(rv.Interface().(Spin).Options, out)
	case compareType:
		// A scenario without alternatives hashes as it did before the key
		// existed: they change what test-alternatives compares, not the run.
		if len(rv.Interface().(Compare).Alternatives) == 0 {
			delete(out, "alternatives")
		}
	case reflect.TypeFor[Survey]():
		// A search without a free-form loss hashes as it did before the
		// table existed: all 1 is no loss at all.
		if rv.Interface().(Survey).SearchByRossby.Lossless() {
			delete(out, "search_by_rossby")
		}
		if rv.Interface().(Survey).SearchFalloff.Lossless() {
			delete(out, "search_falloff")
		}
	case reflect.TypeFor[FreeParam]():
		// Likewise a free parameter without starting values: they change
		// where a fit starts, and so the run only when given.
		if len(rv.Interface().(FreeParam).Starts) == 0 {
			delete(out, "starts")
		}
	case reflect.TypeFor[Field]():
		f := rv.Interface().(Field)
		if keys, ok := fieldKeys[f.Kind]; ok {
			for k := range out {
				if k != "kind" && !slices.Contains(keys, k) {
					delete(out, k)
				}
			}
		}
	}
	return out
}

// partTree writes a history part with the keys its kind takes.
func partTree(p Part) map[string]any {
	out := map[string]any{"kind": p.Kind}
	for k, x := range p.Values {
		out[k] = x
	}
	for k, xs := range p.Arrays {
		out[k] = slices.Clone(xs)
	}
	return out
}

func leaf(v reflect.Value) any {
	switch v.Kind() {
	case reflect.Struct:
		return toTree(v)
	case reflect.String:
		return v.String()
	case reflect.Bool:
		return v.Bool()
	case reflect.Float64:
		return v.Float()
	case reflect.Int, reflect.Int64:
		return v.Int()
	case reflect.Uint64:
		return v.Uint()
	case reflect.Slice:
		if v.Type().Elem().Kind() == reflect.Struct {
			elems := make([]map[string]any, v.Len())
			for i := range elems {
				elems[i] = toTree(v.Index(i))
			}
			return elems
		}
		if v.Type().Elem().Kind() == reflect.String {
			return slices.Clone(v.Interface().([]string))
		}
		return slices.Clone(v.Interface().([]float64))
	}
	return fmt.Sprint(v.Interface())
}

// writeTable writes table t at path: its plain keys sorted, then its
// sub-tables and arrays of tables sorted, each under a full header.
func writeTable(b *bytes.Buffer, path string, t map[string]any) {
	keys := sortedKeys(t)
	if path != "" {
		if b.Len() > 0 {
			b.WriteByte('\n')
		}
		b.WriteString("[" + path + "]\n")
	}
	for _, k := range keys {
		switch c := t[k].(type) {
		case map[string]any:
		case []map[string]any:
			if len(c) == 0 {
				// An empty array of tables has no [[...]] header to
				// write; "k = []" keeps it distinct from a missing key,
				// which would take the default.
				b.WriteString(quoteKey(k) + " = []\n")
			}
		default:
			b.WriteString(quoteKey(k) + " = " + tomlValue(t[k]) + "\n")
		}
	}
	for _, k := range keys {
		p := joinKey(path, k)
		switch c := t[k].(type) {
		case map[string]any:
			writeTable(b, p, c)
		case []map[string]any:
			for _, e := range c {
				b.WriteString("\n[[" + p + "]]\n")
				for _, ek := range sortedKeys(e) {
					b.WriteString(quoteKey(ek) + " = " + tomlValue(e[ek]) + "\n")
				}
			}
		}
	}
}

func tomlValue(v any) string {
	switch t := v.(type) {
	case string:
		return quoteString(t)
	case bool:
		return strconv.FormatBool(t)
	case int64:
		return strconv.FormatInt(t, 10)
	case uint64:
		return strconv.FormatUint(t, 10)
	case float64:
		return tomlFloat(t)
	case []float64:
		parts := make([]string, len(t))
		for i, x := range t {
			parts[i] = tomlFloat(x)
		}
		return "[" + strings.Join(parts, ", ") + "]"
	case []string:
		parts := make([]string, len(t))
		for i, x := range t {
			parts[i] = quoteString(x)
		}
		return "[" + strings.Join(parts, ", ") + "]"
	}
	return quoteString(fmt.Sprint(v))
}

// formatFloat is the shortest decimal that reads back as x, for messages:
// whole numbers up to 1e15 without an exponent.
func formatFloat(x float64) string {
	if x == 0 {
		return "0" // not "-0"
	}
	if x == math.Trunc(x) && math.Abs(x) < 1e15 {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// tomlFloat is the shortest decimal that reads back as x ('g' format),
// made a TOML float: "1" becomes "1.0", and the non-finite values get
// TOML's spelling. -0 is written as 0.0 so that it hashes like 0.
func tomlFloat(x float64) string {
	switch {
	case math.IsNaN(x):
		return "nan"
	case math.IsInf(x, 1):
		return "inf"
	case math.IsInf(x, -1):
		return "-inf"
	}
	if x == 0 {
		return "0.0"
	}
	s := strconv.FormatFloat(x, 'g', -1, 64)
	if !strings.ContainsAny(s, ".e") {
		s += ".0"
	}
	return s
}

// quoteString writes s as a TOML basic string.
func quoteString(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		i += size
		switch {
		case r == '"':
			b.WriteString(`\"`)
		case r == '\\':
			b.WriteString(`\\`)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\t':
			b.WriteString(`\t`)
		case r == '\r':
			b.WriteString(`\r`)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, `\u%04X`, r)
		default:
			b.WriteRune(r) // invalid bytes become U+FFFD
		}
	}
	b.WriteByte('"')
	return b.String()
}
