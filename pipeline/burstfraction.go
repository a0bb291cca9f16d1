package pipeline

import (
	"slices"
	"strings"

	"spinpop/compare"
)

// BurstFraction returns the burst's mass-fraction parameter (its name
// among the burst model's free parameters; "" when the fraction is not
// free) and its profile-likelihood interval at the test's burst fit, made
// as the test makes the age's (compare.ParamInterval). It costs a profile:
// tens of refits.
func (c *Comparison) BurstFraction(r *BurstOutcome) (string, compare.Interval, error) {
	param := ""
	for _, f := range c.Burst.Free {
		if strings.HasSuffix(f.Name, "mass_fraction") && !slices.Contains(c.Smooth.Names(), f.Name) {
			param = f.Name
			break
		}
	}
	if param == "" {
		return "", compare.Interval{}, nil
	}
	iv, err := compare.ParamInterval(c.Likelihood, c.Burst, param, r.Test.Burst, c.Nuisance, r.Test.Dispersion)
	return param, iv, err
}
