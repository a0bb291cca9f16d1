package scenarios

// This file is the scenario format: every key a scenario file may hold, its
// unit (in the key's name) and its default. The loader is strict: a key that
// is not declared here is an error, so the struct tags below are the format's
// single source of truth. The built-in defaults live in defaults.go as a TOML
// layer under every scenario; keep the comments here in step with it and with
// README.md's scenario reference.

// Scenario is one fully resolved run description.
type Scenario struct {
	Name        string `toml:"name"`        // default: the loaded file's name without ".toml"
	Description string `toml:"description"` // free text; default ""

	Run     Run     `toml:"run"`
	IMF     IMF     `toml:"imf"`
	History History `toml:"history"`
	Disk    Disk    `toml:"disk"`
	Dust    Dust    `toml:"dust"`
	Stars   Stars   `toml:"stars"`
	Spin    Spin    `toml:"spin"`
	Survey  Survey  `toml:"survey"`
	Cuts    Cuts    `toml:"cuts"`
	Output  Output  `toml:"output"`
	Data    Data    `toml:"data"`    // the observed catalog; optional
	Compare Compare `toml:"compare"` // how model and data are compared; optional
}

// Run fixes the random seed and the size of the synthetic population.
type Run struct {
	Seed           uint64 `toml:"seed"`            // default 1
	StarsGenerated int64  `toml:"stars_generated"` // stars drawn before any selection; default 2_000_000
	ChunkStars     int    `toml:"chunk_stars"`     // stars per chunk (one random stream each); default 65536
}

// IMF chooses the initial mass function and the mass range drawn.
type IMF struct {
	Form        string  `toml:"form"`          // "kroupa2001" (default) or "chabrier2003"
	MassMinMsun float64 `toml:"mass_min_msun"` // default 0.2
	MassMaxMsun float64 `toml:"mass_max_msun"` // default 1.4
}

// History is the star-formation history over lookback age. Besides
// max_age_gyr, every sub-table is a named part, e.g.
//
//	[history.smooth]
//	kind = "constant"
//	[history.burst]
//	kind = "burst"
//	age_gyr = 0.6
//
// so that fit parameters have paths like "history.burst.age_gyr". Part
// names are bare TOML keys (letters, digits, '_' and '-'). A scenario needs
// at least one part; there is no default history.
type History struct {
	MaxAgeGyr float64         `toml:"max_age_gyr"` // default 10
	Parts     map[string]Part `toml:"-"`           // decoded by hand from the sub-tables
}

// Part is one component of a star-formation history. Its kind is one the
// history registry knows (sfh.RegisterKind: constant, exponential, burst,
// dip, bins, ...), and its keys are that kind's, with their defaults
// filled in; a key that does not apply to the kind is an error:
//
//	constant     weight
//	exponential  weight, timescale_gyr (required; positive declines, negative rises)
//	burst        age_gyr, width_gyr, mass_fraction (all required)
//	dip          age_gyr, width_gyr, depth (all required)
//	bins         weight, edges_gyr, rates (both required)
//
// Smooth parts' weight is their relative share of the non-burst mass
// (default 1). In a file that extends another, kind = "none" removes an
// inherited part.
type Part struct {
	Kind   string
	Values map[string]float64   // the kind's number keys
	Arrays map[string][]float64 // the kind's array keys
}

// Float returns a number key of the part (0 if it has none).
func (p Part) Float(key string) float64 { return p.Values[key] }

// Array returns an array key of the part.
func (p Part) Array(key string) []float64 { return p.Arrays[key] }

// Disk places stars: heating with age, the vertical potential, the radial
// profile and the Sun.
type Disk struct {
	Sigma10GyrKms         float64   `toml:"sigma_10gyr_kms"`          // AVR: sigma_z at 10 Gyr; default 25
	HeatingTau1Gyr        float64   `toml:"heating_tau1_gyr"`         // AVR offset; default 0.5
	HeatingBeta           float64   `toml:"heating_beta"`             // AVR exponent; default 0.45
	SheetSigmaKms         float64   `toml:"sheet_sigma_kms"`          // dispersion of the self-gravitating sheet; default 20
	SurfaceDensityMsunPc2 float64   `toml:"surface_density_msun_pc2"` // sheet surface density; default 70
	ScaleLengthKpc        float64   `toml:"scale_length_kpc"`         // radial exponential; default 2.6
	SunRadiusKpc          float64   `toml:"sun_radius_kpc"`           // default 8.122
	SunHeightPc           float64   `toml:"sun_height_pc"`            // default 20.8
	AgeBinEdgesGyr        []float64 `toml:"age_bin_edges_gyr"`        // population age bins, from 0 to history.max_age_gyr; default DefaultAgeBinEdges
}

// Dust is the extinction model.
type Dust struct {
	Model            string  `toml:"model"`               // "none" (default) or "exponential"
	ScaleHeightPc    float64 `toml:"scale_height_pc"`     // default 110
	MidplaneAvPerKpc float64 `toml:"midplane_av_per_kpc"` // default 0.8
}

// Stars sets the stellar-population realism switches.
type Stars struct {
	Relations           string  `toml:"relations"`               // "mean-dwarf-sequence" (default, only choice for now)
	BinaryFractionScale float64 `toml:"binary_fraction_scale"`   // multiplies the mass-dependent binary fraction, in [0,2]; 0 = no binaries; default 1
	BinaryMassRatioMin  float64 `toml:"binary_mass_ratio_min"`   // flat q in [min,1]; default 0.1
	TidalLockFraction   float64 `toml:"tidal_lock_fraction"`     // share of binaries that are close, tidally locked; default 0
	TidalLockPeriodMaxD float64 `toml:"tidal_lock_period_max_d"` // their periods are log-uniform in [1, max] d; default 7
	Evolved             bool    `toml:"evolved"`                 // keep post-main-sequence stars (brightened); default true
	MetallicitySigmaDex float64 `toml:"metallicity_sigma_dex"`   // [Fe/H] scatter; default 0
	ColorPerDex         float64 `toml:"color_per_dex"`           // B-V shift per dex [Fe/H]; default 0.2
	AbsMagPerDex        float64 `toml:"abs_mag_per_dex"`         // M_V shift per dex [Fe/H]; default 1.0
	ColorScatterMag     float64 `toml:"color_scatter_mag"`       // Gaussian B-V scatter about the mean sequence, cosmic + photometric; 0 = none; default 0.02
	// SequenceShiftBV and SequenceShiftMag move the dwarf sequence in M_V
	// (> 0 fainter) by a shift linear in intrinsic B−V between these nodes
	// and flat beyond them: where a catalog's main sequence lies against
	// the table's (spinpop sequence-shift measures it). Empty: none.
	SequenceShiftBV  []float64 `toml:"sequence_shift_b_v"`
	SequenceShiftMag []float64 `toml:"sequence_shift_mag"`
}

// Spin chooses the spin-down law and its parameters. Besides law,
// turnover and [spin.spots], every sub-table is an option table of a
// registered spin-down law (model/spin: [spin.torque], [spin.stall],
// [spin.weakened_braking], ...), its keys, defaults and ranges declared
// where the law is; spinpop check prints them all.
type Spin struct {
	Law              string     `toml:"law"`                // a registered law: barnes2007 (default) | mamajek2008 | angus2015 | torque
	Turnover         string     `toml:"turnover"`           // wright2018 (default) | cranmer-saar2011
	PeriodScatterDex float64    `toml:"period_scatter_dex"` // intrinsic lognormal scatter of periods about the law, in [0, 0.5]; default 0
	PeriodScale      float64    `toml:"period_scale"`       // multiplies every law's periods (its zero point), in [0.5, 2]; default 1
	Spots            Spots      `toml:"spots"`
	Options          LawOptions `toml:"-"` // decoded by hand from the law option tables
}

// Spots sets photometric spot amplitude versus Rossby number.
type Spots struct {
	Enabled    bool    `toml:"enabled"`     // default true
	RoSat      float64 `toml:"ro_sat"`      // saturation Rossby number; default 0.15
	AmpSatPpm  float64 `toml:"amp_sat_ppm"` // saturated amplitude; default 10000
	Slope      float64 `toml:"slope"`       // amplitude ∝ Ro^-slope above RoSat; default 1
	ScatterDex float64 `toml:"scatter_dex"` // lognormal scatter; default 0.3
}

// Survey describes the invented survey: where it looks, how deep, how well
// it measures.
type Survey struct {
	Name             string         `toml:"name"`                  // default ""
	Band             string         `toml:"band"`                  // "V" (default) or "Ks"
	BrightLimitMag   float64        `toml:"bright_limit_mag"`      // default 10
	FaintLimitMag    float64        `toml:"faint_limit_mag"`       // default 16.5
	NoiseFloorPpm    float64        `toml:"noise_floor_ppm"`       // per cadence; default 70
	NoiseRefMag      float64        `toml:"noise_ref_mag"`         // default 13
	NoisePpmAtRefMag float64        `toml:"noise_ppm_at_ref_mag"`  // default 320
	CadenceD         float64        `toml:"cadence_d"`             // default 0.03125 (45 min)
	BaselineD        float64        `toml:"baseline_d"`            // default 1000
	MinCycles        float64        `toml:"min_cycles"`            // default 3
	DetectionSNR     float64        `toml:"detection_snr"`         // default 10
	DetectionSharp   float64        `toml:"detection_sharpness"`   // logistic slope of detection in ln SNR; default 4
	SearchHalfD      float64        `toml:"search_half_period_d"`  // period the search finds half of, at the Sun's turnover time; default 0 (no loss)
	SearchTauPower   float64        `toml:"search_turnover_power"` // that period ∝ τ_c^power (0: fixed period, 1: fixed Rossby number); default 1
	SearchSteepness  float64        `toml:"search_steepness"`      // logistic slope of that loss in ln P; default 6
	SearchByRossby   SearchByRossby `toml:"search_by_rossby"`      // a free-form loss against Rossby number; default none
	SearchFalloff    SearchFalloff  `toml:"search_falloff"`        // the same nodes as shares kept from node to node: a loss that only grows with period; default none
	ColorOffsetMag   float64        `toml:"color_offset_mag"`      // catalog B−V zero point relative to the model's; default 0
	ColorScale       float64        `toml:"color_scale"`           // catalog B−V scale about B−V = 1 relative to the model's; default 1
	PeriodScatterRel float64        `toml:"period_scatter_rel"`    // default 0.03
	HalfAliasProb    float64        `toml:"half_alias_prob"`       // default 0.02
	DoubleAliasProb  float64        `toml:"double_alias_prob"`     // default 0.01
	Field            Field          `toml:"field"`
}

// SearchByRossby is the period search's efficiency at six scaled periods
// x = P·(τ_c☉/τ_c)^search_turnover_power a factor of two apart
// (spots.RossbyNodesD; with the default power 1, Rossby numbers), linear
// in ln x between them and flat beyond: a loss of slow rotators whose
// shape is not known, for a fit to free node by node. All 1 (the
// default): no such loss. A table left at its defaults is not part of a
// scenario's identity.
type SearchByRossby struct {
	Efficiency3D  float64 `toml:"efficiency_3d"`  // default 1
	Efficiency6D  float64 `toml:"efficiency_6d"`  // default 1
	Efficiency12D float64 `toml:"efficiency_12d"` // default 1
	Efficiency24D float64 `toml:"efficiency_24d"` // default 1
	Efficiency48D float64 `toml:"efficiency_48d"` // default 1
	Efficiency96D float64 `toml:"efficiency_96d"` // default 1
}

// searchByRossbyKeys are SearchByRossby's keys in node order (as Values).
var searchByRossbyKeys = []string{"efficiency_3d", "efficiency_6d", "efficiency_12d", "efficiency_24d", "efficiency_48d", "efficiency_96d"}

// Values returns the six efficiencies in node order.
func (s SearchByRossby) Values() []float64 {
	return []float64{s.Efficiency3D, s.Efficiency6D, s.Efficiency12D, s.Efficiency24D, s.Efficiency48D, s.Efficiency96D}
}

// Lossless reports whether every node keeps every period.
func (s SearchByRossby) Lossless() bool { return allOne(s.Values()) }

// allOne reports whether every value is 1.
func allOne(v []float64) bool {
	for _, e := range v {
		if e != 1 {
			return false
		}
	}
	return true
}

// SearchFalloff is a free-form search loss at the nodes of SearchByRossby
// that can only grow with period (when SearchByRossby's efficiencies do
// not rise with period themselves; left at 1 they do not): KeptND is the
// share of the periods found at the node before (N/2 d) that are still
// found at N d, and Kept3D the share found at 3 d, so the efficiency at a
// node is the product of the shares up to it, times SearchByRossby's
// value there. It is the form for a survey whose spot-amplitude detection
// is trusted and whose period search's own loss, which grows with period
// [common practice: injection-and-recovery tests of period searches], is
// not known. Where the detection itself may be off, the free nodes of
// SearchByRossby can also rise with period and correct it (on catalogs of
// the independent model they do, and fit better). The templates are
// linear in each share, the others held. All 1 (the default): no such
// loss, and not part of a scenario's identity.
type SearchFalloff struct {
	Kept3D  float64 `toml:"kept_3d"`  // default 1
	Kept6D  float64 `toml:"kept_6d"`  // default 1
	Kept12D float64 `toml:"kept_12d"` // default 1
	Kept24D float64 `toml:"kept_24d"` // default 1
	Kept48D float64 `toml:"kept_48d"` // default 1
	Kept96D float64 `toml:"kept_96d"` // default 1
}

// searchFalloffKeys are SearchFalloff's keys in node order (as Values).
var searchFalloffKeys = []string{"kept_3d", "kept_6d", "kept_12d", "kept_24d", "kept_48d", "kept_96d"}

// Values returns the six shares in node order.
func (s SearchFalloff) Values() []float64 {
	return []float64{s.Kept3D, s.Kept6D, s.Kept12D, s.Kept24D, s.Kept48D, s.Kept96D}
}

// Lossless reports whether every share is 1.
func (s SearchFalloff) Lossless() bool { return allOne(s.Values()) }

// SearchBands returns the free-form search loss's efficiency at each node
// (spots.RossbyNodesD): SearchByRossby's value times the product of
// SearchFalloff's shares up to the node; nil when neither loses anything.
func (sv Survey) SearchBands() []float64 {
	if sv.SearchByRossby.Lossless() && sv.SearchFalloff.Lossless() {
		return nil
	}
	out := sv.SearchByRossby.Values()
	kept := 1.0
	for k, r := range sv.SearchFalloff.Values() {
		kept *= r
		out[k] *= kept
	}
	return out
}

// Field is the survey footprint: a cone, an all-sky sphere or a list of
// cones. Which keys apply depends on Kind:
//
//	cone    l_deg, b_deg, radius_deg, distance_max_pc (required), distance_min_pc (default 0)
//	sphere  distance_max_pc (required), distance_min_pc (default 0)
//	cones   cones (at least one; each cone as for kind "cone")
//
// There is no default footprint.
type Field struct {
	Kind          string  `toml:"kind"`  // "cone" (default) | "sphere" | "cones"
	LDeg          float64 `toml:"l_deg"` // cone centre, Galactic longitude in [0,360]
	BDeg          float64 `toml:"b_deg"` // Galactic latitude in [-90,90]
	RadiusDeg     float64 `toml:"radius_deg"`
	DistanceMinPc float64 `toml:"distance_min_pc"`
	DistanceMaxPc float64 `toml:"distance_max_pc"`
	Cones         []Cone  `toml:"cones"` // kind = "cones"
}

// Cone is one line of sight of a multi-cone field.
type Cone struct {
	LDeg          float64 `toml:"l_deg"`
	BDeg          float64 `toml:"b_deg"`
	RadiusDeg     float64 `toml:"radius_deg"`
	DistanceMinPc float64 `toml:"distance_min_pc"` // default 0
	DistanceMaxPc float64 `toml:"distance_max_pc"`
}

// Cuts are the catalog cuts; the same ones apply to model and data.
type Cuts struct {
	BVMin           float64 `toml:"b_v_min"`            // default 0.45
	BVMax           float64 `toml:"b_v_max"`            // default 1.6
	MSBandBrightMag float64 `toml:"ms_band_bright_mag"` // keep stars up to this much brighter than the single-star sequence; default 0.4
	MSBandFaintMag  float64 `toml:"ms_band_faint_mag"`  // and this much fainter; default 0.4
	// Place stars for the band after taking out the dust model's
	// reddening and extinction (model.Cuts.MSBandDereddened); default false.
	MSBandDereddened bool    `toml:"ms_band_dereddened"`
	PeriodMinD       float64 `toml:"period_min_d"`  // default 2 × survey.cadence_d (two samples per cycle)
	PeriodMaxD       float64 `toml:"period_max_d"`  // default survey.baseline_d / survey.min_cycles
	HeightMaxPc      float64 `toml:"height_max_pc"` // 0 = no cut (default)
}

// Output chooses what a run writes.
type Output struct {
	Catalog           bool      `toml:"catalog"`             // write catalog.csv; default true
	CatalogMaxStars   int64     `toml:"catalog_max_stars"`   // refuse bigger catalogs; default 5_000_000
	Plots             bool      `toml:"plots"`               // default true
	GyrochroneAgesGyr []float64 `toml:"gyrochrone_ages_gyr"` // default [0.3, 0.6, 1, 2, 4]
}

// Data names an observed rotation catalog and maps its columns. Besides
// the period and the color, each star needs an absolute magnitude (abs_mag_v,
// or app_mag_v and parallax_mas to derive it) and a height above the plane
// (z_pc, or parallax_mas and a sky position: ra/dec in ICRS degrees or l/b
// in Galactic degrees), the rule compare/catalog applies when it reads the
// file. Loading a scenario resolves the file's path (Resolved.DataPath)
// but does not open it.
type Data struct {
	File   string `toml:"file"`   // path relative to the scenario file that names it; default "" (no data)
	SHA256 string `toml:"sha256"` // optional: hex SHA-256 the file must have (64 digits); default ""
	Format string `toml:"format"` // "auto" (default: by content) | "csv" | "ecsv" | "fits" | "parquet"
	// FITS only: the binary-table extension to read, by EXTNAME ("STARS") or
	// by number (2 or "2"; 1 is the first extension after the primary HDU).
	Extension string      `toml:"extension"` // default "" (the first binary table)
	Columns   DataColumns `toml:"columns"`   // column names in the file
}

// DataColumns maps quantities to column names. Empty means not given.
type DataColumns struct {
	PeriodD     string `toml:"period_d"`     // rotation period (d); default "period_d"
	BV          string `toml:"b_v"`          // B−V color (mag); default "b_v"
	AbsMagV     string `toml:"abs_mag_v"`    // absolute V magnitude; default ""
	HeightPc    string `toml:"z_pc"`         // height above the Galactic plane (pc); default ""
	AppMagV     string `toml:"app_mag_v"`    // apparent V magnitude; default ""
	ParallaxMas string `toml:"parallax_mas"` // parallax (mas); default ""
	RADeg       string `toml:"ra_deg"`       // ICRS right ascension (deg); default ""
	DecDeg      string `toml:"dec_deg"`      // ICRS declination (deg); default ""
	LDeg        string `toml:"l_deg"`        // Galactic longitude (deg); default ""
	BDeg        string `toml:"b_deg"`        // Galactic latitude (deg); default ""
}

// Compare sets the comparison space, the templates and the statistics.
//
// The comparison's period range defaults to max(cuts.period_min_d, 0.5) to
// min(cuts.period_max_d, 100), or to the cuts' own range when that would
// leave none; given values must lie within the cuts.
//
// Free lists the parameters a fit moves. Left out, it defaults to
// DefaultFree: when the history has a part of kind "burst" named
// burst_part, that part's age_gyr in [0.1, min(3, history.max_age_gyr)],
// width_gyr in [0.02, 0.5] and mass_fraction in [0, 0.6], uniform priors;
// otherwise nothing. The resolved scenario holds the list filled in, so
// the canonical form shows it; "free = []" says explicitly that nothing is
// free.
type Compare struct {
	ColorBins     int       `toml:"color_bins"`         // B−V bins between cuts.b_v_min and b_v_max; default 23
	LogPeriodBins int       `toml:"log_period_bins"`    // log10-period bins; default 30
	PeriodMinD    float64   `toml:"period_min_d"`       // comparison range; default max(cuts.period_min_d, 0.5)
	PeriodMaxD    float64   `toml:"period_max_d"`       // default min(cuts.period_max_d, 100)
	HeightEdgesPc []float64 `toml:"height_edges_pc"`    // |z| edges for the height check; default [0, 100, 200, 300, 450, 700, 1000, 1500]
	TemplateStars int64     `toml:"template_stars"`     // stars drawn to build templates; default 20_000_000
	Normalisation string    `toml:"normalisation"`      // "free" (default: multinomial) | "absolute" | "per-color" (conditional on color) | "per-color-height"
	TemplateNoise string    `toml:"template_noise"`     // "barlow-beeston-lite" (default) | "ignore"
	Bootstrap     int       `toml:"bootstrap"`          // parametric-bootstrap replicates; default 1000
	SplitAgeGyr   float64   `toml:"split_age_gyr"`      // young/old split for the height check; default 0 (the fitted burst age)
	BurstPart     string    `toml:"burst_part"`         // history part tested as the burst; default "burst"
	MaskAgeGyr    float64   `toml:"mask_below_age_gyr"` // leave out cells below the gyrochrone of this age (stars younger than the law describes); 0 = none (default)
	MaskMarginDex float64   `toml:"mask_margin_dex"`    // how far below that gyrochrone a cell must lie to be left out (dex); default 0.1
	MaskBlueOfLaw bool      `toml:"mask_blue_of_law"`   // leave out the color columns reddening can fill with stars bluer than the law's calibrated colors; default false
	ColorAxis     string    `toml:"color_axis"`         // "measured" (default): columns in the catalog's B−V | "dereddened": in B−V less the dust model's E(B−V) at each star's distance
	// MeasureSequence measures where the catalog's main sequence lies
	// against the relation table (spinpop sequence) before the templates
	// are made, and moves the table there (stars.sequence_shift_* as
	// measured); default false.
	MeasureSequence bool        `toml:"measure_sequence"`
	Free            []FreeParam `toml:"free"` // parameters fitted; default: see above
	// Alternatives are other explanations of the same catalog, each this
	// scenario with some keys changed; test-alternatives compares the
	// scenario with each of them. Default: none.
	Alternatives []Alternative `toml:"alternatives"`
}

// Alternative is one explanation of the catalog written as changes to the
// scenario that holds it: keys set as --set sets them, history parts
// dropped. Its own free parameters are the scenario's, less those of the
// parts it drops, unless it sets compare.free itself.
type Alternative struct {
	Name string   `toml:"name"` // short name used in reports, e.g. "stall"; required, unique
	Set  []string `toml:"set"`  // "key=value" settings, as --set takes them, e.g. "spin.law=torque"
	Drop []string `toml:"drop"` // history parts this explanation does not have, e.g. ["burst"]
}

// FreeParam is one fitted parameter, named by its scenario path: a history
// parameter, or a parameter of the physics or the selection fitted with the
// history as a nuisance parameter (NuisancePaths lists which).
type FreeParam struct {
	Path  string  `toml:"path"`  // "history.<part>.<key>" or a nuisance path such as "spin.gyro.a"; required
	Min   float64 `toml:"min"`   // lower bound, a value the key can take; required
	Max   float64 `toml:"max"`   // upper bound, > min; required
	Prior string  `toml:"prior"` // "uniform" (default) | "log-uniform" (needs min > 0) | "gaussian" (nuisance paths only)
	Sigma float64 `toml:"sigma"` // gaussian: width about the scenario's value; 0 = the published uncertainty where one is known
	// Starts (nuisance paths only) are values the joint fit scores before
	// its search begins, for a parameter whose effect is far from
	// quadratic over its range; the search starts at the best combination.
	Starts []float64 `toml:"starts"`
}
