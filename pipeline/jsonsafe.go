package pipeline

import (
	"encoding/json"
	"fmt"
	"math"
	"reflect"
	"strings"
)

// Finite maps NaN and ±Inf to JSON-safe values (null is not a float64, so
// NaN becomes 0 only where it means "nothing"): infinite values are capped.
func Finite(x float64) float64 {
	switch {
	case math.IsNaN(x):
		return 0
	case math.IsInf(x, 1):
		return math.MaxFloat64
	case math.IsInf(x, -1):
		return -math.MaxFloat64
	}
	return x
}

// FiniteAll maps NaN and ±Inf to null.
func FiniteAll(x []float64) []any {
	out := make([]any, len(x))
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			out[i] = nil
		} else {
			out[i] = v
		}
	}
	return out
}

// finiteOnly replaces values JSON cannot hold (NaN, ±Inf) by −1, which no
// likelihood ratio (≥ 0) takes.
func finiteOnly(x []float64) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			v = -1
		}
		out[i] = v
	}
	return out
}

// JSONSafe returns v in a form encoding/json can always write: every NaN
// and ±Inf float (JSON has none) becomes null, wherever it sits — struct
// fields, maps, slices, pointers. Structs become maps under their JSON
// names (tags, omitempty, "-" and embedded structs honoured); values with
// their own MarshalJSON are kept as they are. Reports go through it before
// they are written, so a number that does not exist (the median of no
// stars, a p-value of no replicates) reads null instead of failing the
// write or reading 0.
func JSONSafe(v any) any {
	return safeValue(reflect.ValueOf(v))
}

var marshalerType = reflect.TypeFor[json.Marshaler]()

func safeValue(v reflect.Value) any {
	if !v.IsValid() {
		return nil
	}
	if v.Type().Implements(marshalerType) && !(v.Kind() == reflect.Pointer && v.IsNil()) {
		return v.Interface()
	}
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		f := v.Float()
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return nil
		}
		return f
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return nil
		}
		return safeValue(v.Elem())
	case reflect.Slice:
		if v.IsNil() {
			return nil
		}
		if v.Type().Elem().Kind() == reflect.Uint8 {
			return v.Interface() // []byte: base64, as encoding/json writes it
		}
		fallthrough
	case reflect.Array:
		out := make([]any, v.Len())
		for i := range out {
			out[i] = safeValue(v.Index(i))
		}
		return out
	case reflect.Map:
		if v.IsNil() {
			return nil
		}
		out := make(map[string]any, v.Len())
		it := v.MapRange()
		for it.Next() {
			out[fmt.Sprint(it.Key().Interface())] = safeValue(it.Value())
		}
		return out
	case reflect.Struct:
		out := &object{vals: map[string]any{}}
		safeStruct(v, out)
		return out
	}
	return v.Interface()
}

// object is a struct as JSONSafe returns it: its fields under their JSON
// names, written in the struct's order as encoding/json writes them.
type object struct {
	keys []string
	vals map[string]any
}

func (o *object) set(k string, v any) {
	if _, ok := o.vals[k]; !ok {
		o.keys = append(o.keys, k)
	}
	o.vals[k] = v
}

// MarshalJSON writes the fields in order.
func (o *object) MarshalJSON() ([]byte, error) {
	b := []byte{'{'}
	for i, k := range o.keys {
		if i > 0 {
			b = append(b, ',')
		}
		kb, err := json.Marshal(k)
		if err != nil {
			return nil, err
		}
		vb, err := json.Marshal(o.vals[k])
		if err != nil {
			return nil, err
		}
		b = append(append(append(b, kb...), ':'), vb...)
	}
	return append(b, '}'), nil
}

// safeStruct adds v's exported fields to out under their JSON names.
func safeStruct(v reflect.Value, out *object) {
	t := v.Type()
	for i := range t.NumField() {
		f := t.Field(i)
		tag := f.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		fv := v.Field(i)
		if f.Anonymous && name == "" {
			ft := f.Type
			if ft.Kind() == reflect.Pointer {
				if fv.IsNil() {
					continue
				}
				fv, ft = fv.Elem(), ft.Elem()
			}
			if ft.Kind() == reflect.Struct {
				safeStruct(fv, out) // embedded: its fields are the outer struct's
				continue
			}
		}
		if !f.IsExported() {
			continue
		}
		if name == "" {
			name = f.Name
		}
		if strings.Contains(","+opts+",", ",omitempty,") && isEmpty(fv) {
			continue
		}
		out.set(name, safeValue(fv))
	}
}

// isEmpty is encoding/json's notion of an empty value for omitempty.
func isEmpty(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Array, reflect.Map, reflect.Slice, reflect.String:
		return v.Len() == 0
	case reflect.Bool, reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr,
		reflect.Float32, reflect.Float64, reflect.Interface, reflect.Pointer:
		return v.IsZero()
	}
	return false
}
