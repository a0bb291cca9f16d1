// Package pipeline is spinpop as a library: the end-to-end jobs a user
// runs, from a resolved scenario to results in memory. Simulate makes and
// observes a scenario's population (tally, gyrochrones, manifest numbers,
// warnings and, if asked, the catalog); Mock draws a mock observed
// catalog; SetupComparison builds or reuses the templates, reads the
// scenario's observed catalog and prepares the likelihood and the two
// hypotheses, on which the tests run: Score (the likelihood and the
// marginal tests), BurstTest, Heights, Inject and Posterior. Files,
// figures, flags and progress bars are the caller's business (see
// cmd/spinpop); nothing here writes outside the writers it is handed.
//
// Reading a scenario is package scenarios; turning it into run objects is
// package assemble.
package pipeline
