// Package stats holds the statistics that score a model against an observed
// rotation catalog: binned Poisson and multinomial likelihoods, template
// mixtures with their gradient, the Barlow–Beeston-lite treatment of
// template noise, two-sample tests for marginals (Kolmogorov–Smirnov,
// Anderson–Darling k-sample), the Chernoff boundary mixture, an
// affine-invariant ensemble sampler with autocorrelation times, binomial
// proportion intervals and information criteria.
//
// The package knows nothing of stars or files: it works on plain float64
// slices so that the same code scores histograms, bootstrap replicates and
// grid scans. Functions on the hot path of a fit (MixtureLogLGrad,
// Mixture.LogLGrad) allocate nothing per call.
//
// Slice-length mismatches are programming errors and panic, as in gonum;
// everything a user can cause through data (empty samples, bad values)
// comes back as an error or a documented NaN/−Inf.
package stats
