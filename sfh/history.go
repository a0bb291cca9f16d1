package sfh

import (
	"fmt"
	"math"
	"strings"
)

// Part names one component of a History. Name is used in parameter names
// ("<Name>.<key>") and messages, so it must be unique, non-empty and made of
// letters, digits, '_' or '-'. Weight is the relative share of a smooth
// component (Constant, Exponential, Piecewise) in the mass that bursts leave;
// it must be zero for Burst and Dip, whose strengths are their own fields.
type Part struct {
	Name      string
	Component Component
	Weight    float64
}

// History is a normalised star-formation history over lookback age. It is
// immutable after New, so one History may be shared by many goroutines; the
// *rand.Rand passed to its samplers may not.
type History struct {
	maxAge float64
	parts  []Part
	comps  []comp
	dips   []Dip

	quad *panelTable // nil without dips
	norm float64     // ∫ undipped·dip factor; 1 without dips

	full *RangeSampler // sampler over [0, maxAge]
}

// comp is a burst or smooth component with its share of the mass before dips.
type comp struct {
	name  string
	share float64
	shape shape
}

// burstSumSlack absorbs rounding in burst fractions that are meant to sum to
// one (0.1 + 0.2 + 0.7 exceeds 1 in floating point).
const burstSumSlack = 1e-9

// minDippedMass is the smallest fraction of the undipped mass that dips may
// leave. Below it the dips, not the components, define the history and
// rejection sampling would waste more than 999 draws in 1000.
const minDippedMass = 1e-3

// New builds a History on [0, maxAgeGyr] from parts. Bursts take their
// MassFraction of the total; smooth components share the rest in proportion to
// Weight; dips then multiply the rate, and the result is renormalised to unit
// mass. The error names the offending part and parameter and the range that
// would be accepted.
func New(maxAgeGyr float64, parts []Part) (*History, error) {
	if !(maxAgeGyr > 0) || !finite(maxAgeGyr) {
		return nil, fmt.Errorf("sfh: maxAgeGyr = %g is outside the allowed range (0, +Inf): the oldest lookback age in Gyr", maxAgeGyr)
	}
	if len(parts) == 0 {
		return nil, fmt.Errorf("sfh: no parts; give at least one smooth component (Constant, Exponential, Piecewise) or bursts whose fractions sum to 1")
	}
	h := &History{maxAge: maxAgeGyr, parts: make([]Part, len(parts))}
	seen := make(map[string]int, len(parts))
	var burstSum, weightSum float64
	for i, p := range parts {
		if err := checkName(p.Name, i); err != nil {
			return nil, err
		}
		if j, dup := seen[p.Name]; dup {
			return nil, fmt.Errorf("sfh: parts %d and %d are both named %q; part names must be unique", j, i, p.Name)
		}
		seen[p.Name] = i
		c, ok := derefComponent(p.Component)
		if !ok {
			return nil, fmt.Errorf("sfh: part %q has no Component; set Constant{}, Exponential{...}, Burst{...}, Piecewise{...} or Dip{...}", p.Name)
		}
		if err := validateComponent(p.Name, c, maxAgeGyr); err != nil {
			return nil, err
		}
		if isSmooth(c) {
			if !(p.Weight >= 0) || !finite(p.Weight) {
				return nil, outOfRange(p.Name, c, "Weight", "weight", p.Weight, "[0, +Inf): a finite, non-negative relative weight")
			}
			weightSum += p.Weight
		} else if p.Weight != 0 {
			return nil, fmt.Errorf("sfh: part %q (%s): Weight = %g must be 0; Weight applies only to smooth components (Constant, Exponential, Piecewise)%s",
				p.Name, c.kind(), p.Weight, weightHint(c))
		}
		if e, isEpisode := c.(episode); isEpisode {
			burstSum += e.fraction()
		}
		h.parts[i] = Part{Name: p.Name, Component: copyComponent(c), Weight: p.Weight}
	}
	if burstSum > 1+burstSumSlack {
		return nil, fmt.Errorf("sfh: burst mass fractions sum to %.6g, above the allowed maximum 1; lower the bursts' MassFraction (mass_fraction)", burstSum)
	}
	rest := math.Max(1-burstSum, 0)
	if burstSum > 1-burstSumSlack {
		rest = 0
	}
	if rest > 0 && weightSum == 0 {
		return nil, fmt.Errorf("sfh: bursts take %.6g of the mass but no smooth component with Weight > 0 takes the remaining %.6g; add one (constant, exponential or bins) or raise the burst fractions to sum to 1",
			burstSum, rest)
	}
	for _, p := range h.parts {
		var share float64
		switch c := p.Component; c.role() {
		case Modulation:
			h.dips = append(h.dips, c.(Dip))
			continue
		case Episode:
			share = c.(episode).fraction()
			if rest == 0 {
				share /= burstSum // absorb the rounding slack
			}
		default:
			if weightSum > 0 {
				share = rest * p.Weight / weightSum
			}
		}
		h.comps = append(h.comps, comp{name: p.Name, share: share, shape: newShape(p.Component, maxAgeGyr)})
	}
	h.norm = 1
	if len(h.dips) > 0 {
		var brk []float64
		for _, c := range h.comps {
			if c.share > 0 {
				brk = c.shape.breaks(brk)
			}
		}
		for _, d := range h.dips {
			brk = append(brk, d.AgeGyr)
			for _, k := range []float64{0.5, 1, 1.5, 2, 3, 4, 6, 8} {
				brk = append(brk, d.AgeGyr-k*d.WidthGyr, d.AgeGyr+k*d.WidthGyr)
			}
		}
		h.quad = newPanelTable(h.dippedRate, maxAgeGyr, brk)
		h.norm = h.quad.total()
		if !(h.norm >= minDippedMass) {
			return nil, fmt.Errorf("sfh: dips remove %.4g%% of all star formation, more than the allowed %g%%; reduce their Depth or WidthGyr",
				100*(1-h.norm), 100*(1-minDippedMass))
		}
	}
	full, err := h.RangeSampler(0, maxAgeGyr)
	if err != nil {
		return nil, err
	}
	h.full = full
	return h, nil
}

func weightHint(c Component) string {
	return fmt.Sprintf("; a %s's strength is its %s", strings.ToLower(c.kind()), c.strength())
}

func checkName(name string, i int) error {
	if name == "" {
		return fmt.Errorf("sfh: part %d has an empty Name; give it a name such as \"smooth\", \"burst\" or \"dip\"", i)
	}
	for _, r := range name {
		ok := r == '_' || r == '-' || ('a' <= r && r <= 'z') || ('A' <= r && r <= 'Z') || ('0' <= r && r <= '9')
		if !ok {
			return fmt.Errorf("sfh: part %d Name %q contains %q; use only letters, digits, '_' and '-' (the name becomes a parameter prefix \"<name>.<key>\")",
				i, name, r)
		}
	}
	return nil
}

// MaxAgeGyr returns the oldest lookback age of the history.
func (h *History) MaxAgeGyr() float64 { return h.maxAge }

// Parts returns a copy of the parts the history was built from.
func (h *History) Parts() []Part {
	out := make([]Part, len(h.parts))
	for i, p := range h.parts {
		out[i] = Part{Name: p.Name, Component: copyComponent(p.Component), Weight: p.Weight}
	}
	return out
}

// undippedRate is the sum of the components, normalised before dips.
func (h *History) undippedRate(age float64) float64 {
	var s float64
	for i := range h.comps {
		c := &h.comps[i]
		if c.share > 0 {
			s += c.share * c.shape.pdf(age)
		}
	}
	return s
}

// dipFactor is the product of all dip suppressions at age.
func (h *History) dipFactor(age float64) float64 {
	f := 1.0
	for _, d := range h.dips {
		z := (age - d.AgeGyr) / d.WidthGyr
		f *= 1 - d.Depth*math.Exp(-0.5*z*z)
	}
	return f
}

// dipMax bounds the dip factor on [lo, hi] from above: each factor is largest
// where its Gaussian is smallest, at the end of the range farther from its
// centre, and a product of maxima bounds the maximum of the product.
func (h *History) dipMax(lo, hi float64) float64 {
	f := 1.0
	for _, d := range h.dips {
		far := lo
		if d.AgeGyr-lo < hi-d.AgeGyr {
			far = hi
		}
		z := (far - d.AgeGyr) / d.WidthGyr
		f *= 1 - d.Depth*math.Exp(-0.5*z*z)
	}
	return f
}

func (h *History) dippedRate(age float64) float64 {
	return h.undippedRate(age) * h.dipFactor(age)
}

// Rate returns the star-formation rate at lookback age ageGyr, per Gyr,
// normalised so that its integral over [0, MaxAgeGyr] is 1. It is zero outside
// that range.
func (h *History) Rate(ageGyr float64) float64 {
	if !(ageGyr >= 0 && ageGyr <= h.maxAge) {
		return 0
	}
	if h.quad == nil {
		return h.undippedRate(ageGyr)
	}
	return h.dippedRate(ageGyr) / h.norm
}

// String describes the history in one line.
func (h *History) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "star formation over lookback ages 0–%g Gyr: ", h.maxAge)
	k := 0
	for i, p := range h.parts {
		if i > 0 {
			b.WriteString("; ")
		}
		fmt.Fprintf(&b, "%s = %v", p.Name, p.Component)
		if p.Component.role() == Modulation {
			continue
		}
		if p.Component.role() != Episode {
			fmt.Fprintf(&b, ", %.3g of mass", h.comps[k].share)
		}
		k++
	}
	if len(h.dips) > 0 {
		fmt.Fprintf(&b, " (dips remove %.3g of the mass before renormalising)", 1-h.norm)
	}
	return b.String()
}
