package scenarios

import (
	"fmt"
	"math"
	"reflect"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"
	"unicode/utf8"
)

// The decoder walks the merged tree against the Scenario struct, guided by
// its toml tags. Doing this by hand rather than through the TOML package's
// decoder lets every problem name the file and line its value came from,
// lets unknown keys get a suggestion, and lets all problems be collected.

type decoder struct {
	*merged
	errs errorList
	// suggested holds the key paths offered as "did you mean": such a key
	// is then not also reported missing, since the typo is the one fault.
	suggested map[string]bool
}

// errAt records a problem with key path p, blamed on where p (or its
// nearest ancestor) was set.
func (d *decoder) errAt(p, format string, args ...any) {
	msg := fmt.Sprintf(format, args...)
	o, own := d.origins[p]
	if !own {
		o = d.locate(p)
	}
	if o.file == "" {
		if own && o.note != "" {
			msg += " (" + o.note + "; set it explicitly)"
		} else {
			o = origin{file: d.top}
		}
	}
	d.errs.add(&Error{File: o.file, Line: o.line, Key: p, Msg: msg})
}

// unknown reports key k, not valid in table path, with the nearest valid
// key as a suggestion when it is close enough to be a plausible typo, and
// the list of valid keys otherwise.
func (d *decoder) unknown(path, k string, valid []string, hint string) {
	if d.errs.full() {
		d.errs.dropped++
		d.errs.markBad(joinKey(path, k))
		return
	}
	where := "at the top level"
	if path != "" {
		where = "in [" + path + "]"
	}
	msg := fmt.Sprintf("unknown key %s %s", quoteString(k), where)
	if s := nearest(k, valid); s != "" && levenshtein(k, s) <= max(2, max(len(k), len(s))/2) {
		msg += fmt.Sprintf("; did you mean %q?", s)
		if d.suggested == nil {
			d.suggested = make(map[string]bool)
		}
		d.suggested[joinKey(path, s)] = true
	} else if len(valid) > 0 {
		msg += "; the keys here are: " + listWords(valid)
	}
	d.errAt(joinKey(path, k), "%s%s", msg, hint)
}

// fieldInfo is the toml view of a struct type.
type fieldInfo struct {
	index map[string]int // tag → field index
	names []string       // tags, sorted
}

var fieldCache sync.Map // reflect.Type → *fieldInfo

func fieldsOf(t reflect.Type) *fieldInfo {
	if fi, ok := fieldCache.Load(t); ok {
		return fi.(*fieldInfo)
	}
	fi := &fieldInfo{index: make(map[string]int)}
	for i := 0; i < t.NumField(); i++ {
		tag := t.Field(i).Tag.Get("toml")
		if tag == "" || tag == "-" {
			continue
		}
		fi.index[tag] = i
		fi.names = append(fi.names, tag)
	}
	sort.Strings(fi.names)
	fieldCache.Store(t, fi)
	return fi
}

// decodeStruct fills the struct pointed to by out from table m at path.
func (d *decoder) decodeStruct(path string, m map[string]any, out any) {
	d.structValue(path, m, reflect.ValueOf(out).Elem())
}

func (d *decoder) structValue(path string, m map[string]any, rv reflect.Value) {
	fi := fieldsOf(rv.Type())
	for _, k := range sortedKeys(m) {
		p := joinKey(path, k)
		i, ok := fi.index[k]
		if !ok {
			d.unknown(path, k, fi.names, "")
			continue
		}
		d.value(p, m[k], rv.Field(i))
	}
}

var historyType = reflect.TypeFor[History]()

// value decodes v into rv, reporting a type mismatch at p.
func (d *decoder) value(p string, v any, rv reflect.Value) {
	switch rv.Type() {
	case historyType:
		d.history(p, v, rv.Addr().Interface().(*History))
		return
	case spinType:
		d.spinTable(p, v, rv.Addr().Interface().(*Spin))
		return
	}
	switch rv.Kind() {
	case reflect.Struct:
		m, ok := v.(map[string]any)
		if !ok {
			d.wrongType(p, "a table", v)
			return
		}
		d.structValue(p, m, rv)
	case reflect.String:
		if n, isInt := v.(int64); isInt && p == "data.extension" {
			v = strconv.FormatInt(n, 10) // an extension may be given by number
		}
		s, ok := v.(string)
		if !ok {
			d.wrongType(p, "a string", v)
			return
		}
		rv.SetString(s)
	case reflect.Bool:
		b, ok := v.(bool)
		if !ok {
			d.wrongType(p, "true or false", v)
			return
		}
		rv.SetBool(b)
	case reflect.Float64:
		if x, ok := d.number(p, v); ok {
			rv.SetFloat(x)
		}
	case reflect.Int, reflect.Int64:
		if n, ok := d.integer(p, v, math.MinInt64, int64(math.MaxInt)); ok {
			rv.SetInt(n)
		}
	case reflect.Uint64:
		if n, ok := d.integer(p, v, 0, math.MaxInt64); ok {
			rv.SetUint(uint64(n))
		}
	case reflect.Slice:
		d.slice(p, v, rv)
	default:
		// Only reachable if schema.go gains a field of a new Go type.
		d.errAt(p, "%s has a type the loader does not know (%s); this is a bug in the scenarios package", p, rv.Type())
	}
}

func (d *decoder) slice(p string, v any, rv reflect.Value) {
	et := rv.Type().Elem()
	if et.Kind() == reflect.Struct {
		var elems []map[string]any
		switch t := v.(type) {
		case []map[string]any:
			elems = t
		case []any:
			for _, e := range t {
				m, ok := e.(map[string]any)
				if !ok {
					d.wrongType(p, "an array of tables", v)
					return
				}
				elems = append(elems, m)
			}
		default:
			d.wrongType(p, "an array of tables ([[...]] sections)", v)
			return
		}
		out := reflect.MakeSlice(rv.Type(), len(elems), len(elems))
		for i, m := range elems {
			d.structValue(elemKey(p, i), m, out.Index(i))
		}
		rv.Set(out)
		return
	}
	if et.Kind() == reflect.String {
		d.stringSlice(p, v, rv)
		return
	}
	arr, ok := v.([]any)
	if !ok {
		d.wrongType(p, "an array of numbers", v)
		return
	}
	out := make([]float64, len(arr))
	for i, e := range arr {
		x, ok := toFloat(e)
		if !ok {
			d.errAt(p, "%s must be an array of numbers, but element %d is %s", p, i+1, describe(e))
			return
		}
		if math.IsNaN(x) || math.IsInf(x, 0) {
			d.errAt(p, "%s element %d is %s; it must be a finite number", p, i+1, formatFloat(x))
			return
		}
		out[i] = x
	}
	rv.Set(reflect.ValueOf(out))
}

// stringSlice decodes an array of strings. An empty array is nil: one
// spelling of "none", whether written or left out.
func (d *decoder) stringSlice(p string, v any, rv reflect.Value) {
	arr, ok := v.([]any)
	if !ok {
		d.wrongType(p, "an array of strings", v)
		return
	}
	var out []string
	for i, e := range arr {
		s, ok := e.(string)
		if !ok {
			d.errAt(p, "%s must be an array of strings, but element %d is %s", p, i+1, describe(e))
			return
		}
		out = append(out, s)
	}
	rv.Set(reflect.ValueOf(out))
}

func (d *decoder) wrongType(p, want string, v any) {
	d.errAt(p, "%s must be %s, not %s", p, want, describe(v))
}

func (d *decoder) number(p string, v any) (float64, bool) {
	x, ok := toFloat(v)
	if !ok {
		d.wrongType(p, "a number", v)
		return 0, false
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		d.errAt(p, "%s = %s; it must be a finite number", p, formatFloat(x))
		return 0, false
	}
	return x, true
}

// integer accepts TOML integers and floats with an integral value (so
// that 2e6 reads as two million).
func (d *decoder) integer(p string, v any, lo, hi int64) (int64, bool) {
	var n int64
	switch t := v.(type) {
	case int64:
		n = t
	case float64:
		if t != math.Trunc(t) {
			d.errAt(p, "%s = %s must be a whole number", p, formatFloat(t))
			return 0, false
		}
		if t < -(1<<63) || t >= 1<<63 {
			d.errAt(p, "%s = %s is out of range; it must be in [%d, %d]", p, formatFloat(t), lo, hi)
			return 0, false
		}
		n = int64(t)
	default:
		d.wrongType(p, "a whole number", v)
		return 0, false
	}
	if n < lo || n > hi {
		d.errAt(p, "%s = %d is out of range; it must be in [%d, %d]", p, n, lo, hi)
		return 0, false
	}
	return n, true
}

func toFloat(v any) (float64, bool) {
	switch t := v.(type) {
	case float64:
		return t, true
	case int64:
		return float64(t), true
	}
	return 0, false
}

// describe names a TOML value's type, with the value when short, for
// messages like "must be a number, not a string ("0.6")".
func describe(v any) string {
	switch t := v.(type) {
	case string:
		if utf8.RuneCountInString(t) > 40 {
			t = string([]rune(t)[:40]) + "..."
		}
		return "a string (" + quoteString(t) + ")"
	case bool:
		return "a boolean (" + strconv.FormatBool(t) + ")"
	case int64:
		return "an integer (" + strconv.FormatInt(t, 10) + ")"
	case float64:
		return "a number (" + formatFloat(t) + ")"
	case time.Time:
		return "a date/time"
	case map[string]any:
		return "a table"
	case []map[string]any:
		return "an array of tables"
	case []any:
		return "an array"
	}
	return fmt.Sprintf("a value of type %T", v)
}

func sortedKeys(m map[string]any) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// listWords formats choices for messages: "a, b, c".
func listWords(words []string) string { return strings.Join(words, ", ") }
