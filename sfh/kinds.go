package sfh

import (
	"fmt"
	"math"
	"slices"
	"strconv"

	"spinpop/internal/registry"
)

// A kind of history part makes itself known to the scenario format in one
// place: a KindSpec handed to RegisterKind. The scenario format learns from
// the registry which kinds [history.<part>] takes, their keys with units,
// defaults and ranges, which keys a fit may move, and how to build the
// Component; nothing outside this package names a kind.

// Role says how a part enters a history.
type Role int

const (
	// Smooth parts share the mass that episodes leave, by their weight.
	Smooth Role = iota
	// Episode parts take their own share of all mass formed (a burst).
	Episode
	// Modulation parts multiply the whole rate (a dip).
	Modulation
)

// KindSpec describes one kind of history part.
type KindSpec struct {
	Name  string // the value of kind, e.g. "burst"
	Label string // in a few words, e.g. "Gaussian burst"
	Role  Role
	// Keys are the part's keys besides kind (a Smooth kind lists weight
	// too). Their names carry their units.
	Keys []KindKey
	// New builds the component and its weight (0 unless Smooth) from the
	// part's values, which have passed the keys' checks.
	New func(v Values) (Component, float64)
	// Check, if set, checks rules between the part's keys (e.g. one rate
	// per bin); maxAgeGyr is the history's. It names the key at fault.
	Check func(v Values, maxAgeGyr float64) *KeyError
	// Caveats say what to keep in mind when using the kind.
	Caveats []string
}

// KindKey is one key of a kind of part.
type KindKey struct {
	Name, Doc string
	Required  bool    // no default: the part must give it
	Default   float64 // for a scalar key that is not Required
	Array     bool    // an array of numbers rather than one number
	// Scalar range: Min and Max, each inclusive unless MinOpen / MaxOpen;
	// MaxIsAge makes Max the history's maximum age. NonZero excludes 0.
	Min, Max         float64
	MinOpen, MaxOpen bool
	MaxIsAge         bool
	NonZero          bool
	Why              string
	// Free says a fit may move the key (see History.Params).
	Free bool
}

// Values are a part's key values as a scenario gives them.
type Values interface {
	Float(key string) float64
	Array(key string) []float64
}

// KeyError is a bad value of one key of a part.
type KeyError struct {
	Key string
	Msg string // follows the key's path: "has 1 values but ..."
}

func (e *KeyError) Error() string { return e.Key + " " + e.Msg }

var kinds = registry.New(func(k KindSpec) string { return k.Name })

// RegisterKind adds a kind of part; its name must be new.
func RegisterKind(k KindSpec) error {
	if k.New == nil {
		return fmt.Errorf("sfh: kind %q needs a constructor", k.Name)
	}
	if err := kinds.Add(k, nil); err != nil {
		return fmt.Errorf("sfh: kind: %w", err)
	}
	return nil
}

// Kinds returns the registered kinds in registration order.
func Kinds() []KindSpec { return kinds.All() }

// LookupKind returns the kind registered under name.
func LookupKind(name string) (KindSpec, bool) { return kinds.Lookup(name) }

// KeyNames lists the kind's keys, sorted.
func (k KindSpec) KeyNames() []string {
	out := make([]string, len(k.Keys))
	for i, key := range k.Keys {
		out[i] = key.Name
	}
	slices.Sort(out)
	return out
}

// Key returns the kind's key of that name.
func (k KindSpec) Key(name string) (KindKey, bool) {
	for _, key := range k.Keys {
		if key.Name == name {
			return key, true
		}
	}
	return KindKey{}, false
}

// FreeKeys lists the keys a fit may move, sorted, for a part with v's
// values (a bins part frees one rate per bin).
func (k KindSpec) FreeKeys(v Values) []string {
	var out []string
	for _, key := range k.Keys {
		if key.Free {
			out = append(out, key.Name)
		}
	}
	if k.Name == "bins" {
		for i := range v.Array("rates") {
			out = append(out, fmt.Sprintf("rate_%d", i))
		}
	}
	slices.Sort(out)
	return out
}

// Range returns the interval a scalar key takes in a history of maximum
// age maxAgeGyr.
func (key KindKey) Range(maxAgeGyr float64) (lo, hi float64, loOpen, hiOpen bool) {
	hi = key.Max
	if key.MaxIsAge {
		hi = maxAgeGyr
	}
	return key.Min, hi, key.MinOpen, key.MaxOpen
}

var inf = math.Inf(1)

// The built-in kinds, in the order messages list them.
func init() {
	weight := KindKey{Name: "weight", Doc: "relative share of the mass that bursts leave", Default: 1, Min: 0, Max: inf, Free: true}
	age := KindKey{Name: "age_gyr", Doc: "centre in lookback age", Required: true, Min: 0, MaxIsAge: true, Free: true,
		Why: "the centre must lie within the history, up to history.max_age_gyr"}
	width := KindKey{Name: "width_gyr", Doc: "Gaussian sigma", Required: true, Min: 0, MinOpen: true, Max: inf, Free: true}
	for _, k := range []KindSpec{
		{Name: "constant", Label: "constant rate", Role: Smooth, Keys: []KindKey{weight},
			New: func(v Values) (Component, float64) { return Constant{}, v.Float("weight") }},
		{Name: "exponential", Label: "exponential in cosmic time", Role: Smooth, Keys: []KindKey{
			{Name: "timescale_gyr", Doc: "e-folding time in cosmic time; positive declines toward the present, negative rises", Required: true,
				Min: -inf, Max: inf, NonZero: true, Free: true, Why: "positive declines toward the present, negative rises"},
			weight},
			New: func(v Values) (Component, float64) {
				return Exponential{TimescaleGyr: v.Float("timescale_gyr")}, v.Float("weight")
			}},
		{Name: "burst", Label: "Gaussian burst", Role: Episode, Keys: []KindKey{age, width,
			{Name: "mass_fraction", Doc: "share of all mass formed", Required: true, Min: 0, Max: 1, Free: true}},
			New: func(v Values) (Component, float64) {
				return Burst{AgeGyr: v.Float("age_gyr"), WidthGyr: v.Float("width_gyr"), MassFraction: v.Float("mass_fraction")}, 0
			}},
		{Name: "dip", Label: "suppression", Role: Modulation, Keys: []KindKey{age, width,
			{Name: "depth", Doc: "fractional suppression at the centre", Required: true, Min: 0, Max: 1, Free: true}},
			New: func(v Values) (Component, float64) {
				return Dip{AgeGyr: v.Float("age_gyr"), WidthGyr: v.Float("width_gyr"), Depth: v.Float("depth")}, 0
			}},
		{Name: "bins", Label: "piecewise-constant rate", Role: Smooth, Keys: []KindKey{
			{Name: "edges_gyr", Doc: "increasing lookback-age edges", Required: true, Array: true},
			{Name: "rates", Doc: "relative rate per bin", Required: true, Array: true},
			weight},
			New: func(v Values) (Component, float64) {
				return Piecewise{EdgesGyr: v.Array("edges_gyr"), Rates: v.Array("rates")}, v.Float("weight")
			},
			Check: checkBins},
	} {
		if err := RegisterKind(k); err != nil {
			panic(err)
		}
	}
}

// checkBins checks a bins part: edges strictly increasing within the
// history, one non-negative rate per bin, not all zero.
func checkBins(v Values, maxAgeGyr float64) *KeyError {
	edges, rates := v.Array("edges_gyr"), v.Array("rates")
	if len(edges) < 2 {
		return &KeyError{"edges_gyr", fmt.Sprintf("has %d edges; at least 2 are needed to make a bin", len(edges))}
	}
	for i := 1; i < len(edges); i++ {
		if !(edges[i] > edges[i-1]) {
			return &KeyError{"edges_gyr", fmt.Sprintf("must be strictly increasing, but element %d (%s) is not above element %d (%s)",
				i+1, formatNumber(edges[i]), i, formatNumber(edges[i-1]))}
		}
	}
	if first, last := edges[0], edges[len(edges)-1]; first < 0 || last > maxAgeGyr {
		return &KeyError{"edges_gyr", fmt.Sprintf("runs from %s to %s Gyr; it must lie within [0, history.max_age_gyr = %s]",
			formatNumber(first), formatNumber(last), formatNumber(maxAgeGyr))}
	}
	if len(rates) != len(edges)-1 {
		return &KeyError{"rates", fmt.Sprintf("has %d values but edges_gyr defines %d bins; give one rate per bin", len(rates), len(edges)-1)}
	}
	sum := 0.0
	for i, r := range rates {
		if r < 0 {
			return &KeyError{"rates", fmt.Sprintf("element %d is %s; rates must be ≥ 0", i+1, formatNumber(r))}
		}
		sum += r
	}
	if sum <= 0 {
		return &KeyError{"rates", "are all zero; at least one rate must be positive"}
	}
	return nil
}

// formatNumber is the shortest decimal that reads back as x, whole numbers
// without an exponent.
func formatNumber(x float64) string {
	if x == 0 {
		return "0"
	}
	if x == math.Trunc(x) && math.Abs(x) < 1e15 {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}
