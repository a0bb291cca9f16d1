package scenarios

import (
	"fmt"
	"math"
)

// builtinDefaults is the bottom layer of every scenario: each key with a
// default, written the way a user would. Keys whose default depends on
// other keys (name, cuts.period_min_d, cuts.period_max_d,
// disk.age_bin_edges_gyr, a smooth part's weight, compare.period_min_d,
// compare.period_max_d, compare.free and each free parameter's prior) are
// filled after the merge by fillDerived. Values marked [memory] are recalled, not read; see
// DESIGN.md's physics menu.
const builtinDefaults = `
description = ""

[run]
seed = 1
stars_generated = 2_000_000
chunk_stars = 65536

[imf]
form = "kroupa2001"
mass_min_msun = 0.2
mass_max_msun = 1.4

[history]
max_age_gyr = 10.0

[disk]
sigma_10gyr_kms = 25.0           # [memory]
heating_tau1_gyr = 0.5           # [memory]
heating_beta = 0.45              # [memory] thin-disk range 0.3-0.55
sheet_sigma_kms = 20.0
surface_density_msun_pc2 = 70.0  # [memory]
scale_length_kpc = 2.6           # [memory]
sun_radius_kpc = 8.122           # [memory]
sun_height_pc = 20.8             # [memory]

[dust]
model = "none"
scale_height_pc = 110.0          # [memory] 100-130 pc
midplane_av_per_kpc = 0.8        # [memory] 0.7-1 mag/kpc

[stars]
relations = "mean-dwarf-sequence"
binary_fraction_scale = 1.0
binary_mass_ratio_min = 0.1
tidal_lock_fraction = 0.0
tidal_lock_period_max_d = 7.0
evolved = true
metallicity_sigma_dex = 0.0
color_per_dex = 0.2              # [memory]
abs_mag_per_dex = 1.0            # [memory]
color_scatter_mag = 0.02         # common practice: B-V errors of 0.01-0.03 mag for V < 14
sequence_shift_b_v = []           # the dwarf sequence moved in M_V at these intrinsic B-V ...
sequence_shift_mag = []           # ... by these shifts (> 0 fainter); none by default

[spin]
law = "barnes2007"
turnover = "wright2018"
period_scatter_dex = 0.0
period_scale = 1.0

[spin.spots]                     # [memory] all four values, approximate
enabled = true
ro_sat = 0.15
amp_sat_ppm = 10000.0
slope = 1.0
scatter_dex = 0.3

[survey]
name = ""
band = "V"
bright_limit_mag = 10.0
faint_limit_mag = 16.5
noise_floor_ppm = 70.0
noise_ref_mag = 13.0
noise_ppm_at_ref_mag = 320.0
cadence_d = 0.03125
baseline_d = 1000.0
min_cycles = 3.0
detection_snr = 10.0
detection_sharpness = 4.0
search_half_period_d = 0.0
search_turnover_power = 1.0
search_steepness = 6.0
color_offset_mag = 0.0
color_scale = 1.0
period_scatter_rel = 0.03
half_alias_prob = 0.02
double_alias_prob = 0.01

[survey.search_by_rossby]
efficiency_3d = 1.0
efficiency_6d = 1.0
efficiency_12d = 1.0
efficiency_24d = 1.0
efficiency_48d = 1.0
efficiency_96d = 1.0

[survey.search_falloff]
kept_3d = 1.0
kept_6d = 1.0
kept_12d = 1.0
kept_24d = 1.0
kept_48d = 1.0
kept_96d = 1.0

[survey.field]
kind = "cone"

[cuts]
b_v_min = 0.45
b_v_max = 1.6
ms_band_bright_mag = 0.4
ms_band_faint_mag = 0.4
ms_band_dereddened = false
height_max_pc = 0.0

[output]
catalog = true
catalog_max_stars = 5_000_000
plots = true
gyrochrone_ages_gyr = [0.3, 0.6, 1.0, 2.0, 4.0]

[data]                           # no observed catalog unless a file names one
file = ""
sha256 = ""
format = "auto"
extension = ""

[data.columns]                   # "" = the catalog has no such column
period_d = "period_d"
b_v = "b_v"
abs_mag_v = ""
z_pc = ""
app_mag_v = ""
parallax_mas = ""
ra_deg = ""
dec_deg = ""
l_deg = ""
b_deg = ""

[compare]
color_bins = 23
log_period_bins = 30
height_edges_pc = [0.0, 100.0, 200.0, 300.0, 450.0, 700.0, 1000.0, 1500.0]
template_stars = 20_000_000
normalisation = "free"
template_noise = "barlow-beeston-lite"
bootstrap = 1000
split_age_gyr = 0.0
burst_part = "burst"
mask_below_age_gyr = 0.0
mask_margin_dex = 0.1
mask_blue_of_law = false
color_axis = "measured"
measure_sequence = false
`

// defaultLayer is a fresh copy of the bottom layer: builtinDefaults
// (parsed once), and the option tables of the laws registered now, with
// their defaults.
func defaultLayer() (*layer, error) {
	def, err := defaults()
	if err != nil {
		// The defaults are part of the program; tests keep them valid.
		return nil, fmt.Errorf("scenarios: built-in defaults do not parse: %w", err)
	}
	c := def.copyLayer()
	lawDefaults(c.data)
	return c, nil
}

// DefaultAgeBinEdges returns the default population age bins for a history
// reaching maxAgeGyr: 0.05 Gyr wide up to 3 Gyr, then evenly spaced in log
// age, 20 bins a decade (rounded up), up to maxAgeGyr, rounded to 1e-6 Gyr
// so that canonical files stay readable; 71 bins for 10 Gyr (a remainder
// under half a fine bin widens the last fine bin instead). The fine bins
// reach 3 Gyr, the oldest age example:fit seeks a burst at, because a
// template assumes a constant rate inside its bin: a burst narrower than a
// bin can sit anywhere in it for the same likelihood, so its fitted age is
// only as good as the bin is narrow (with the earlier 0.12–0.22 Gyr log bins
// from 1 Gyr, old bursts of the independent check came out 0.1–0.4 Gyr
// off). A history younger than 2 Gyr gets 40 equal bins instead, all
// narrower than 0.05 Gyr.
func DefaultAgeBinEdges(maxAgeGyr float64) []float64 {
	const (
		young     = 40 // equal bins of a history younger than 2 Gyr
		perGyr    = 20 // fine bins per Gyr: 0.05 Gyr wide
		fineTop   = 3  // Gyr
		perDecade = 20 // log bins per decade above fineTop
	)
	if !(maxAgeGyr >= 2) {
		edges := make([]float64, young+1)
		for i := range edges {
			edges[i] = maxAgeGyr * float64(i) / young
		}
		edges[young] = maxAgeGyr
		return edges
	}
	nFine := min(fineTop*perGyr, int(math.Floor(maxAgeGyr*perGyr)))
	edges := make([]float64, 0, nFine+1+perDecade)
	for i := 0; i <= nFine; i++ {
		edges = append(edges, float64(i)/perGyr) // exact: i/20 rounds like the decimal i*0.05
	}
	top := edges[nFine]
	if maxAgeGyr-top < 0.5/perGyr {
		// Less than half a fine bin left: widen the last bin to the end
		// rather than add a sliver, which would take a full bin's share
		// of the template stars (every bin gets the same mass).
		edges[nFine] = maxAgeGyr
		return edges
	}
	n := max(1, int(math.Ceil(perDecade*math.Log10(maxAgeGyr/top))))
	for i := 1; i < n; i++ {
		e := top * math.Pow(maxAgeGyr/top, float64(i)/float64(n))
		edges = append(edges, math.Round(e*1e6)/1e6) // steps ≥ 10^(1/40) when n ≥ 2: rounding cannot merge edges
	}
	return append(edges, maxAgeGyr)
}

// fillDerived sets the defaults that depend on other keys, for keys no
// layer set, and records them as defaults so errors about them say so.
func (d *decoder) fillDerived(s *Scenario, name string) {
	if !d.present("name") {
		s.Name = name
		d.origins["name"] = origin{note: "default: the file name"}
	}
	// A default derived from a bad key is bad too, and not reported twice.
	if !d.present("cuts.period_min_d") && d.errs.isBad("survey.cadence_d") {
		d.errs.markBad("cuts.period_min_d")
	}
	if !d.present("cuts.period_max_d") && (d.errs.isBad("survey.baseline_d") || d.errs.isBad("survey.min_cycles")) {
		d.errs.markBad("cuts.period_max_d")
	}
	if !d.present("cuts.period_min_d") {
		s.Cuts.PeriodMinD = 2 * s.Survey.CadenceD
		d.origins["cuts.period_min_d"] = origin{note: "default: 2 × survey.cadence_d"}
	}
	if !d.present("cuts.period_max_d") && s.Survey.MinCycles > 0 {
		s.Cuts.PeriodMaxD = s.Survey.BaselineD / s.Survey.MinCycles
		d.origins["cuts.period_max_d"] = origin{note: "default: survey.baseline_d / survey.min_cycles"}
	}
	if !d.present("disk.age_bin_edges_gyr") && s.History.MaxAgeGyr > 0 && !math.IsInf(s.History.MaxAgeGyr, 0) {
		s.Disk.AgeBinEdgesGyr = DefaultAgeBinEdges(s.History.MaxAgeGyr)
		d.origins["disk.age_bin_edges_gyr"] = origin{note: "default: 0.05 Gyr bins up to 3 Gyr, then 20 a decade in log age, up to history.max_age_gyr"}
	}
	d.fillData(&s.Data)
	d.fillCompare(s)
}
