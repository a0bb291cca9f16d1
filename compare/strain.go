package compare

import (
	"fmt"
	"math"
	"strings"
)

// Strain is a nuisance parameter a fit moved further than what was known
// of it allows: beyond strainPull σ of its gaussian prior, or onto a hard
// bound of its range where the scenario did not put it. A fit that strains
// a nuisance parameter is bending the physics or the selection to absorb
// something the model lacks; answers that depend on that parameter (a
// burst's age on the law's coefficients and the color zero point) can be
// biased by it beyond what their intervals show. On the independent
// model's catalogs (internal/othermodel) every fit moved the color zero
// point by +0.06–0.08 mag (2–2.7σ) and the claimed burst ages were
// 0–0.25 Gyr too old.
type Strain struct {
	Name     string
	Value    float64
	Nominal  float64 // the scenario's value
	Sigma    float64 // the gaussian prior's width (0: flat prior)
	Pull     float64 // (Value − Nominal)/Sigma (0 for a flat prior)
	Bound    string  // "min" or "max" when Value is on that bound, else ""
	Min, Max float64 // the range of the fit
}

const (
	// strainPull: a fitted value outside its prior's central 95 %
	// (|pull| > 1.96, quoted as 2σ: common practice for a "tension").
	strainPull = 1.96
	// strainAtBound: a value within this share of the range from a bound
	// is on it (the fits stop at bounds, not near them).
	strainAtBound = 0.005
)

// Strains lists the nuisance parameters fit f strains, in nu's order.
func Strains(f FitResult, nu *Nuisance) []Strain {
	if nu == nil {
		return nil
	}
	var out []Strain
	for i, name := range f.NuisanceNames {
		j := indexOfParam(nu.Params, name)
		if j < 0 || i >= len(f.Nuisance) {
			continue
		}
		p, v := nu.Params[j], f.Nuisance[i]
		s := Strain{Name: name, Value: v, Nominal: p.Nominal, Sigma: p.Sigma, Min: p.Min, Max: p.Max}
		if p.Sigma > 0 {
			s.Pull = (v - p.Nominal) / p.Sigma
		}
		tol := strainAtBound * (p.Max - p.Min)
		switch {
		case math.IsNaN(v) || math.IsInf(v, 0):
			s.Bound = "not finite"
		case v <= p.Min+tol && p.Nominal > p.Min:
			s.Bound = "min"
		case v >= p.Max-tol && p.Nominal < p.Max:
			s.Bound = "max"
		}
		if s.Bound != "" || math.Abs(s.Pull) > strainPull {
			out = append(out, s)
		}
	}
	return out
}

func indexOfParam(ps []NuisanceParam, name string) int {
	for j, p := range ps {
		if p.Name == name {
			return j
		}
	}
	return -1
}

// Describe says in a few words how s is strained.
func (s Strain) Describe() string {
	var why []string
	if math.Abs(s.Pull) > strainPull {
		why = append(why, fmt.Sprintf("%.1fσ from its prior %.4g ± %.4g", math.Abs(s.Pull), s.Nominal, s.Sigma))
	}
	switch s.Bound {
	case "not finite":
		return fmt.Sprintf("%s = %g (not a finite value: the fit failed in it)", s.Name, s.Value)
	case "min":
		why = append(why, fmt.Sprintf("at the bottom of its range %.4g–%.4g", s.Min, s.Max))
	case "max":
		why = append(why, fmt.Sprintf("at the top of its range %.4g–%.4g", s.Min, s.Max))
	}
	if s.Bound != "" && s.Sigma <= 0 {
		why = append(why, fmt.Sprintf("scenario value %.4g", s.Nominal))
	}
	return fmt.Sprintf("%s = %.4g (%s)", s.Name, s.Value, strings.Join(why, ", "))
}

// GaussianPriors counts nu's parameters with a gaussian prior: those a
// pull is checked for.
func GaussianPriors(nu *Nuisance) int {
	if nu == nil {
		return 0
	}
	k := 0
	for _, p := range nu.Params {
		if p.Sigma > 0 {
			k++
		}
	}
	return k
}

// StrainWarning is the sentence a report gives first when a fit strains
// nuisance parameters ("" if none): which, and what it may mean for the
// answer. fit names the fit as the sentence should begin ("the
// with-burst fit", "The fit"); gaussian is how many parameters have a
// gaussian prior (GaussianPriors), so that a pull is weighed against how
// often one of them lands beyond 1.96σ by chance alone.
func StrainWarning(fit string, ss []Strain, gaussian int) string {
	if len(ss) == 0 {
		return ""
	}
	parts := make([]string, len(ss))
	pulls := false
	for i, s := range ss {
		parts[i] = s.Describe()
		pulls = pulls || math.Abs(s.Pull) > strainPull
	}
	chance := ""
	if pulls && gaussian > 0 {
		chance = fmt.Sprintf(" (of %d gaussian priors, one or more beyond 1.96σ by chance alone has probability %.0f %%)",
			gaussian, 100*(1-math.Pow(0.95, float64(gaussian))))
	}
	return fmt.Sprintf("%s strains its nuisance parameters: %s. The model may be bending them to absorb something it lacks%s, and answers that depend on them (a burst's age moves with the law's coefficients and the color zero point) can then be biased beyond their intervals",
		fit, strings.Join(parts, "; "), chance)
}
