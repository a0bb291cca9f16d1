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
		switch c := p.Component.(type) {
		case Constant:
			add("weight", p.Weight, 0, inf)
		case Exponential:
			add("weight", p.Weight, 0, inf)
			if c.TimescaleGyr > 0 {
				add("timescale_gyr", c.TimescaleGyr, 0, inf)
			} else {
				add("timescale_gyr", c.TimescaleGyr, -inf, 0)
			}
		case Piecewise:
			add("weight", p.Weight, 0, inf)
			for i, r := range c.Rates {
				add("rate_"+strconv.Itoa(i), r, 0, inf)
			}
		case Burst:
			add("age_gyr", c.AgeGyr, 0, h.maxAge)
			add("width_gyr", c.WidthGyr, 0, inf)
			add("mass_fraction", c.MassFraction, 0, 1)
		case Dip:
			add("age_gyr", c.AgeGyr, 0, h.maxAge)
			add("width_gyr", c.WidthGyr, 0, inf)
			add("depth", c.Depth, 0, 1)
		}
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
	switch c := p.Component.(type) {
	case Constant:
		if key == "weight" {
			p.Weight = v
			return true
		}
	case Exponential:
		switch key {
		case "weight":
			p.Weight = v
		case "timescale_gyr":
			c.TimescaleGyr = v
		default:
			return false
		}
		p.Component = c
		return true
	case Piecewise:
		if key == "weight" {
			p.Weight = v
			return true
		}
		idx, ok := strings.CutPrefix(key, "rate_")
		if !ok {
			return false
		}
		i, err := strconv.Atoi(idx)
		if err != nil || i < 0 || i >= len(c.Rates) || strconv.Itoa(i) != idx {
			return false
		}
		c.Rates[i] = v // Parts() gave us our own copy of the slice
		return true
	case Burst:
		switch key {
		case "age_gyr":
			c.AgeGyr = v
		case "width_gyr":
			c.WidthGyr = v
		case "mass_fraction":
			c.MassFraction = v
		default:
			return false
		}
		p.Component = c
		return true
	case Dip:
		switch key {
		case "age_gyr":
			c.AgeGyr = v
		case "width_gyr":
			c.WidthGyr = v
		case "depth":
			c.Depth = v
		default:
			return false
		}
		p.Component = c
		return true
	}
	return false
}
