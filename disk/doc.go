// Package disk says where stars are: how thick each age population of the
// Galactic thin disk is, how the disk thins out with Galactocentric radius,
// where the Sun sits, how Galactic coordinates map to Cartesian ones, which
// volume a survey field covers, and how much dust lies along a sight line.
//
// The central type is Sampler. Each age population keeps a surface density
// proportional to the mass the star-formation history formed at that age and
// spreads it vertically with its own velocity dispersion, so the age mix
// inside a field depends on height. A Sampler tabulates, once per scenario,
// how much of each age bin's unit surface density falls inside a field
// (BinIntegral) and draws exact positions from that bin's density inside the
// field (Draw). A JointSampler (Sampler.Joint) draws the age bin and the
// position together, which a population generator prefers: the same law as
// drawing a bin and then a position, without losing the points that the
// radial profile rejects.
//
// Conventions. Distances and heights are in pc, Galactocentric radii of the
// Sun and scale lengths in kpc, angles in degrees, velocity dispersions in
// km/s, surface densities in M☉ pc⁻². Heights above the midplane follow the
// common local approximation z = d sin b + z☉ (see ZPc), which treats the
// Galactic plane b = 0 as parallel to the midplane.
//
// Values recalled rather than read from a source are marked [memory].
package disk
