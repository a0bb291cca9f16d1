package sfh

import (
	"fmt"
	"math"
	"reflect"
)

// Component is one ingredient of a History. The implementations are Constant,
// Exponential, Burst, Piecewise and Dip, one file each (comp_*.go): a new one
// is one more such file and a KindSpec for the scenario format. The
// interface is closed so that New can check every parameter it will rely on.
type Component interface {
	fmt.Stringer
	// kind names the component type in error messages.
	kind() string
	// role says how the component enters a history.
	role() Role
	// strength names the field that sets an Episode's or Modulation's
	// size ("MassFraction"), for messages; "" for Smooth ones.
	strength() string
	// check validates the component's own parameters for part, in a
	// history reaching maxAge.
	check(part string, maxAge float64) error
	// newShape is the component's age distribution (nil for a
	// Modulation).
	newShape(maxAge float64) shape
	// params adds the component's fit parameters, key by key, with
	// their ranges (Part.Weight is added by History.Params).
	params(add func(key string, v, lo, hi float64), maxAge float64)
	// with returns the component with parameter key set to v, and false
	// if it has no such key.
	with(key string, v float64) (Component, bool)
	// clone returns a copy that shares no memory with c.
	clone() Component
}

// episode is an Episode component: its share of all mass formed.
type episode interface {
	Component
	fraction() float64
}

// isSmooth reports whether c shares the non-burst mass by Part.Weight.
func isSmooth(c Component) bool { return c.role() == Smooth }

// derefComponent accepts pointer forms (&Burst{...}) as a convenience and
// returns the value form, which the methods are defined on.
func derefComponent(c Component) (Component, bool) {
	if c == nil {
		return nil, false
	}
	if v := reflect.ValueOf(c); v.Kind() == reflect.Pointer {
		if v.IsNil() {
			return nil, false
		}
		if e, ok := v.Elem().Interface().(Component); ok {
			return e, true
		}
	}
	return c, true
}

// copyComponent returns c with its slices copied, so that a History never
// shares memory with its caller.
func copyComponent(c Component) Component { return c.clone() }

// outOfRange formats the common validation error: which part, which
// parameter, its value and the range that would be accepted.
func outOfRange(part string, c Component, field, key string, v float64, allowed string) error {
	return &ParamError{Param: part + "." + key, msg: fmt.Sprintf("sfh: part %q (%s): %s = %g is outside the allowed range %s (parameter %q)",
		part, c.kind(), field, v, allowed, part+"."+key)}
}

// ParamError is an error about one parameter of a history, named as in
// Params ("burst.age_gyr"), so that a caller can point at the key that
// set it.
type ParamError struct {
	Param string
	msg   string
}

func (e *ParamError) Error() string { return e.msg }

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// validateComponent checks c's own parameters against maxAge.
func validateComponent(part string, c Component, maxAge float64) error {
	return c.check(part, maxAge)
}
