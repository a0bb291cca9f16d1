// Package sfh describes star-formation histories over lookback age τ, in Gyr:
// the rate at which the stars seen today were born τ Gyr ago, on the range
// [0, MaxAgeGyr].
//
// A History is a sum of components, each named by a Part:
//
//   - smooth components (Constant, Exponential, Piecewise) share the mass that
//     bursts leave, in proportion to their Part.Weight;
//   - bursts (Burst) take their MassFraction of the total mass formed;
//   - dips (Dip) multiply the whole rate by a Gaussian-shaped suppression,
//     after which the history is renormalised to unit total mass. Burst
//     fractions and smooth weights are therefore defined before suppression.
//
// Every History is normalised so that ∫_0^MaxAgeGyr Rate(τ) dτ = 1, which makes
// CumulativeMass, MassInRange and BinWeights mass fractions. Without dips these
// are closed forms (error functions, exponentials, sums of rectangles); with
// dips they come from adaptive Gauss–Legendre quadrature whose panel table is
// built once, in New.
//
// Sampling is exact rather than tabulated: a component is chosen in proportion
// to its mass, drawn through its analytic inverse CDF (the truncated Gaussian
// included, computed tail-first so that narrow bins far from a burst stay
// accurate), and accepted with probability proportional to the dip factor.
// RangeSampler precomputes the per-range constants so that drawing inside one
// age bin, the generator's hot path, costs a few transcendental calls and
// allocates nothing.
//
// Params and WithParams expose a History as a named parameter vector
// ("<part>.<key>", for example "burst.age_gyr") for fits.
package sfh
