// Package othermodel is an independent, deliberately different catalog
// generator for testing spinpop's comparison and burst test on catalogs
// spinpop did not make. It shares no code or tables with spinpop (its code
// imports no spinpop package, only the standard library) and is imported
// only by tests. Every ingredient differs from spinpop's main generator:
//
// Stars. Salpeter-type IMF dN/dM ∝ M^−2.35 on 0.4–1.4 M☉ (spinpop: Kroupa
// 2001 or Chabrier 2003). No binaries, no metallicity spread, no evolved
// stars: a star older than its main-sequence lifetime 10 Gyr · M/L (the
// nuclear timescale scaled to the Sun; common practice) is removed
// (spinpop: 10 Gyr · M^−2.5 with a subgiant brightening).
//
// Relations (spinpop: a smoothed mean-dwarf table). Mass → L by the textbook
// piecewise power law (Duric 2004: 0.23 M^2.3 / M^4 / 1.4 M^3.5); R = M^0.8
// (common textbook approximation); T_eff from L = 4πR²σT⁴ with T☉ = 5772 K
// (IAU 2015 B3); B−V from T_eff by inverting Ballesteros (2012), EPL 97,
// 34008; M_V = 4.74 − 2.5 log L − BC_V with BC_V the Flower (1996)
// polynomial as corrected by Torres (2010), AJ 140, 1158. In the
// observable plane this sequence lies within ≈ 0.25 mag of the published
// mean dwarf sequence for B−V 0.45–1.42 and diverges redward (Ballesteros'
// blackbody-based relation overshoots for M dwarfs), so the few stars there
// fall outside spinpop's main-sequence band and are cut by the reader.
// Config.Relations (nil by default) lets a test hand it other relations —
// the check's diagnostic variant relations=spinpop gives it spinpop's —
// as functions, so this package still imports nothing of spinpop's.
//
// Spin-down. An empirical law P = a (B−V − c)^b t^n (t in Myr) on the
// intrinsic color, with coefficients chosen by the caller: Barnes (2007)
// or Mamajek & Hillenbrand (2008); a star bluer than c gets no period.
// On top, an intrinsic lognormal scatter (default 0.08 dex); spinpop's
// empirical laws have none.
//
// Detection (spinpop: spot amplitude from the Rossby number, noise by
// magnitude, a S/N threshold, a minimum number of cycles). Efficiency =
// 0.95 × logistic in ln P about P50(B−V) = 20 d · exp(1.5 (B−V − 0.65)),
// width 0.25, × logistic magnitude completeness about V = 15.3, width
// 0.25 mag. Invented, smooth and monotone: slow and faint stars are lost.
//
// Measurement. Gaussian period error 2 %, 1 % of detected periods reported
// at half their value (no double aliases), Gaussian errors of 0.01 mag in
// B−V and V and 0.02 mas in parallax (spinpop: lognormal period scatter,
// half and double aliases, no color error).
//
// Disk and dust (spinpop: isothermal-sheet profiles from an age–velocity-
// dispersion relation, exponential dust layer). Stars of age τ have an
// exponential vertical profile with scale height h(τ) = 70 pc (1 + τ/1 Gyr)^0.7
// (an invented shape spanning the commonly quoted thin-disk range,
// ≈ 70–380 pc) and a radial exponential of scale length 3.0 kpc; the Sun
// at R = 8.2 kpc and z☉ of the example scenario (the catalog reader adds
// the scenario's z☉ to d sin b). Age and position are drawn together by
// rejection from the survey cone's volume, so the age mix changes with
// height. Config.Vertical (nil by default) replaces the layers by any
// acceptance in age and height, as Relations replaces the relations (the
// check's variant disk=spinpop hands it spinpop's sheet). Dust: uniform
// 0.25 mag kpc⁻¹ in V along the line of sight,
// E(B−V) = A_V / 3.1.
//
// History (spinpop: constant, exponential, Gaussian bursts, bins, dips).
// Smooth: a rate linear in lookback age, 1 + s τ/T (s = 0 is constant)
// over T = 11 Gyr. Burst: a top-hat box of given centre and full width
// holding a given share of all mass formed.
//
// Survey. A cone (centre, radius), distances up to a limit, apparent-V
// limits, an observed-B−V range and a measured-period window, all in
// Config; ExampleSurvey returns the numbers of the example scenario
// (scenarios/examples/base.toml, extended by example:fit), and a test
// holds the two together.
//
// Output. WriteCatalog draws until Config.Stars stars pass every cut and
// writes the columns example:fit's [data.columns] maps (prot_d, bv_mag,
// vmag, plx_mas, ra_deg, dec_deg; RA/Dec from the Galactic coordinates by
// the IAU-adopted rotation of ESA 1997, vol. 1, §1.5.3) plus true_age_gyr,
// true_mass_msun, true_dist_pc, true_z_pc and true_period_d for
// diagnostics, which spinpop's reader ignores. One math/rand/v2 PCG stream
// seeded by the caller: the same Config and seed give the same bytes.
//
// The baseline of spinpop's burst test on these catalogs is in
// baseline_test.go (build tag othermodel_baseline).
package othermodel
