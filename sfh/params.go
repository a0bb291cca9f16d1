package sfh

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
)

// Param is one named, continuous parameter of a History, for fits. Name is
// "<part>.<key>"; Min and Max are the limits New accepts. A limit that New
// rejects itself (a width or timescale of exactly 0) is exclusive; all others
// are inclusive. Unbounded sides are ±Inf.
//
// Keys by component:
//
//	Constant     weight
//	Exponential  weight, timescale_gyr
//	Piecewise    weight, rate_0 … rate_{n−1} (bin indices from 0)
//	Burst        age_gyr, width_gyr, mass_fraction
//	Dip          age_gyr, width_gyr, depth
//
// Piecewise edges are structure, not parameters. An Exponential timescale
// cannot change sign through WithParams' box: its range is the side of zero
// that the current value is on.
type Param struct {
	Name     string
	Value    float64
	Min, Max float64
}

// Params returns the history's parameters in part order.
func (h *History) Params() []Param {
	var out []Param
	inf := math.Inf(1)
	for _, p := range h.parts {
		add := func(key string, v, lo, hi float64) {
			out = append(out, Param{Name: p.Name + "." + key, Value: v, Min: lo, Max: hi})
		}
		if isSmooth(p.Component) {
			add("weight", p.Weight, 0, inf)
		}
		p.Component.params(add, h.maxAge)
	}
	return out
}

// WithParams returns a copy of the history with the named parameters set to
// new values; parameters not named keep theirs. Unknown names are an error
// that lists the valid ones, and the new values are validated as in New.
func (h *History) WithParams(values map[string]float64) (*History, error) {
	parts := h.Parts()
	index := make(map[string]int, len(parts))
	for i, p := range parts {
		index[p.Name] = i
	}
	var unknown []string
	for name, v := range values {
		part, key, _ := strings.Cut(name, ".")
		i, ok := index[part]
		if !ok || !setParam(&parts[i], key, v) {
			unknown = append(unknown, strconv.Quote(name))
		}
	}
	if len(unknown) > 0 {
		slices.Sort(unknown)
		var valid []string
		for _, p := range h.Params() {
			valid = append(valid, p.Name)
		}
		return nil, fmt.Errorf("sfh: unknown parameter(s) %s; valid names are %s",
			strings.Join(unknown, ", "), strings.Join(valid, ", "))
	}
	return New(h.maxAge, parts)
}

// setParam sets key on p and reports whether the key exists for p's type.
func setParam(p *Part, key string, v float64) bool {
	if key == "weight" && isSmooth(p.Component) {
		p.Weight = v
		return true
	}
	c, ok := p.Component.with(key, v)
	if ok {
		p.Component = c
	}
	return ok
}
