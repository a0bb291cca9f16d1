// Package compare confronts a synthetic population with an observed
// rotation catalog: it bins both into one comparison space (B−V color ×
// log10 period × |z|), builds one histogram of observed synthetic stars per
// age bin (templates), scores any star-formation history against the data
// by a binned Poisson likelihood, fits histories, tests a burst against a
// smooth history by parametric bootstrap, samples posteriors, checks the
// young fraction against height above the plane, and measures by injection
// and recovery what the test can find.
//
// The package never re-simulates stars inside a fit: every history's
// expected histogram is Σ_k w_k T_k over the age-bin templates T_k (see
// BuildTemplates for why that is exact up to the age-bin resolution).
//
// It imports model, sfh and disk, and the sub-packages compare/stats and
// compare/catalog; it knows nothing of scenario files.
package compare
