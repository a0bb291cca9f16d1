package compare

// ParamInterval is the profile-likelihood interval of any free parameter
// of the burst model, made exactly as BurstTest makes the burst age's
// (AgeIntervalProfile): ln L profiled around the fit best, nuisance parameters
// refitted at every point on best's expansion, and the Δln L levels
// multiplied by the dispersion when it exceeds 1 (the quasi-likelihood
// interval). A sweep reports the burst's mass fraction with it, so that
// age and fraction intervals mean the same thing.
func ParamInterval(like *Likelihood, m HistoryModel, param string, best FitResult, nu *Nuisance, dispersion float64) (Interval, error) {
	if err := useTemplates(like, best, nil); err != nil {
		return Interval{}, err
	}
	return profileAutoScaled(like, m, param, best, nu, dispersion)
}
