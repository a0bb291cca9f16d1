package scenarios

import (
	"errors"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// minimal is the smallest valid scenario: a history part and a footprint
// are the only things without defaults. Five lines, so test lines below
// start at 6.
const minimal = `[history.smooth]
kind = "constant"
[survey.field]
kind = "sphere"
distance_max_pc = 500.0
`

// burstPart is a burst named "b", for cases about free parameters.
const burstPart = "[history.b]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 0.2\n"

// malformedCase is a scenario with a problem and what its error must say.
// lineOf, when set, is a snippet of the text whose line the error must
// name as "x.toml:<line>:".
type malformedCase struct {
	name   string
	text   string
	lineOf string
	want   []string
}

var malformedCases = []malformedCase{
	{
		name:   "sequence shift with fewer shifts than colors",
		text:   minimal + "[stars]\nsequence_shift_b_v = [0.5, 1.0]\nsequence_shift_mag = [0.1]\n",
		lineOf: "sequence_shift_mag",
		want:   []string{"stars.sequence_shift_mag has 1 values but stars.sequence_shift_b_v has 2 colors"},
	},
	{
		name:   "sequence shift colors not increasing",
		text:   minimal + "[stars]\nsequence_shift_b_v = [0.8, 0.6]\nsequence_shift_mag = [0.1, 0.2]\n",
		lineOf: "sequence_shift_b_v",
		want:   []string{"stars.sequence_shift_b_v must be finite and strictly increasing, but element 2 is 0.6"},
	},
	{
		name:   "sequence shift beyond a magnitude",
		text:   minimal + "[stars]\nsequence_shift_b_v = [0.6, 0.8]\nsequence_shift_mag = [0.1, -1.5]\n",
		lineOf: "sequence_shift_mag",
		want:   []string{"stars.sequence_shift_mag element 2 is -1.5; a shift must lie within ±1 mag"},
	},
	{
		name:   "unknown key suggests the nearest",
		text:   minimal + "[disk]\nsigma10_kms = 25.0\n",
		lineOf: "sigma10_kms",
		want:   []string{`unknown key "sigma10_kms" in [disk]; did you mean "sigma_10gyr_kms"?`},
	},
	{
		name:   "unknown top-level key",
		text:   "nmae = \"x\"\n" + minimal,
		lineOf: "nmae",
		want:   []string{`unknown key "nmae" at the top level; did you mean "name"?`},
	},
	{
		name:   "unknown key in a history part",
		text:   minimal + "[history.b]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fracton = 0.2\n",
		lineOf: "mass_fracton",
		want:   []string{`unknown key "mass_fracton" in [history.b]; did you mean "mass_fraction"?`},
	},
	{
		name:   "scalar in history that is not max_age_gyr",
		text:   minimal + "[history]\nmax_age = 10.0\n",
		lineOf: "max_age =",
		want:   []string{`unknown key "max_age" in [history]; did you mean "max_age_gyr"?`},
	},
	{
		name:   "string where a number is expected",
		text:   minimal + "[disk]\nheating_beta = \"0.45\"\n",
		lineOf: "heating_beta",
		want:   []string{`disk.heating_beta must be a number, not a string ("0.45")`},
	},
	{
		name:   "number where a table is expected",
		text:   "run = 5\n" + minimal,
		lineOf: "run = 5",
		want:   []string{"run must be a table, not an integer (5)"},
	},
	{
		name:   "date where a number is expected",
		text:   minimal + "[survey]\nbaseline_d = 2024-01-01\n",
		lineOf: "baseline_d",
		want:   []string{"survey.baseline_d must be a number, not a date/time"},
	},
	{
		name:   "negative burst age",
		text:   minimal + "[history.b]\nkind = \"burst\"\nage_gyr = -0.5\nwidth_gyr = 0.05\nmass_fraction = 0.2\n",
		lineOf: "age_gyr = -0.5",
		want:   []string{"history.b.age_gyr = -0.5 is out of range; it must be in [0, 10]"},
	},
	{
		name:   "fraction above one",
		text:   minimal + "[history.b]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 1.5\n",
		lineOf: "mass_fraction",
		want:   []string{"history.b.mass_fraction = 1.5 is out of range; it must be in [0, 1]"},
	},
	{
		name:   "zero width",
		text:   minimal + "[history.b]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.0\nmass_fraction = 0.2\n",
		lineOf: "width_gyr",
		want:   []string{"history.b.width_gyr = 0 must be > 0"},
	},
	{
		name:   "negative width of a dip",
		text:   minimal + "[history.d]\nkind = \"dip\"\nage_gyr = 2.0\nwidth_gyr = -1.0\ndepth = 0.5\n",
		lineOf: "width_gyr",
		want:   []string{"history.d.width_gyr = -1 must be > 0"},
	},
	{
		name:   "empty mass range",
		text:   minimal + "[imf]\nmass_min_msun = 1.0\nmass_max_msun = 0.5\n",
		lineOf: "mass_max_msun",
		want:   []string{"imf.mass_max_msun = 0.5 must be greater than imf.mass_min_msun = 1 (empty mass range)"},
	},
	{
		name:   "unknown enum value lists the allowed ones",
		text:   minimal + "[spin]\nlaw = \"barnes2008\"\n",
		lineOf: "law",
		want:   []string{`spin.law = "barnes2008" is not allowed; use one of: barnes2007, mamajek2008, angus2015, torque (did you mean "barnes2007"?)`},
	},
	{
		name:   "age bin edges not increasing",
		text:   minimal + "[disk]\nage_bin_edges_gyr = [0.0, 1.0, 0.5, 10.0]\n",
		lineOf: "age_bin_edges_gyr",
		want:   []string{"disk.age_bin_edges_gyr must be strictly increasing, but element 3 (0.5) is not above element 2 (1)"},
	},
	{
		name:   "age bin edges not spanning the history",
		text:   minimal + "[disk]\nage_bin_edges_gyr = [0.0, 1.0, 5.0]\n",
		lineOf: "age_bin_edges_gyr",
		want:   []string{"disk.age_bin_edges_gyr runs from 0 to 5 Gyr; it must run from 0 to history.max_age_gyr = 10"},
	},
	{
		name:   "cone radius out of (0,180]",
		text:   "[history.s]\nkind = \"constant\"\n[survey.field]\nl_deg = 10.0\nb_deg = 5.0\nradius_deg = 200.0\ndistance_max_pc = 100.0\n",
		lineOf: "radius_deg",
		want:   []string{"survey.field.radius_deg = 200 is out of range; it must be in (0, 180]"},
	},
	{
		name:   "NaN",
		text:   minimal + "[survey]\nfaint_limit_mag = nan\n",
		lineOf: "faint_limit_mag",
		want:   []string{"survey.faint_limit_mag = NaN; it must be a finite number"},
	},
	{
		name:   "infinity",
		text:   minimal + "[disk]\nsun_height_pc = -inf\n",
		lineOf: "sun_height_pc",
		want:   []string{"disk.sun_height_pc = -Inf; it must be a finite number"},
	},
	{
		name:   "number too large for a float",
		text:   minimal + "[disk]\nsun_radius_kpc = 1e400\n",
		lineOf: "sun_radius_kpc",
		want:   []string{"not valid TOML", "out of range"},
	},
	{
		name:   "non-integral count",
		text:   minimal + "[run]\nstars_generated = 2.5e6\nchunk_stars = 1.5\n",
		lineOf: "chunk_stars",
		want:   []string{"run.chunk_stars = 1.5 must be a whole number"},
	},
	{
		// Source of the bound: the speed of light, 299 792.458 km/s, exact
		// by the SI definition of the metre; the message also names the
		// Galaxy's escape speed near the Sun (Piffl et al. 2014).
		name:   "dispersion faster than light",
		text:   minimal + "[disk]\nsigma_10gyr_kms = 1e8\n",
		lineOf: "sigma_10gyr_kms",
		want:   []string{"disk.sigma_10gyr_kms = 100000000 is out of range; it must be in [1, 500]", "nothing moves faster than light"},
	},
	{
		name:   "sheet dispersion below the gas stars form from",
		text:   minimal + "[disk]\nsheet_sigma_kms = 0.01\n",
		lineOf: "sheet_sigma_kms",
		want:   []string{"disk.sheet_sigma_kms = 0.01 is out of range; it must be in [1, 500]"},
	},
	{
		name:   "huge surface density called out of range, not too small",
		text:   minimal + "[disk]\nsurface_density_msun_pc2 = 1e300\n",
		lineOf: "surface_density_msun_pc2",
		want:   []string{"disk.surface_density_msun_pc2 = 1e+300 is out of range; it must be in [1, 1000]", "Bovy & Rix 2013"},
	},
	{
		name:   "huge scale length",
		text:   minimal + "[disk]\nscale_length_kpc = 1e300\n",
		lineOf: "scale_length_kpc",
		want:   []string{"disk.scale_length_kpc = 1e+300 is out of range; it must be in [0.5, 20]"},
	},
	{
		name:   "Sun far from the Galactic centre",
		text:   minimal + "[disk]\nsun_radius_kpc = 1e300\n",
		lineOf: "sun_radius_kpc",
		want:   []string{"disk.sun_radius_kpc = 1e+300 is out of range; it must be in [4, 12]"},
	},
	{
		name:   "field beyond the disk",
		text:   "[history.smooth]\nkind = \"constant\"\n[survey.field]\nkind = \"sphere\"\ndistance_max_pc = 1e9\n",
		lineOf: "distance_max_pc",
		want:   []string{"survey.field.distance_max_pc = 1000000000 is out of range; it must be in (0, 50000]"},
	},
	{
		name:   "dust layer thicker than the Galaxy",
		text:   minimal + "[dust]\nscale_height_pc = 1e7\n",
		lineOf: "scale_height_pc",
		want:   []string{"dust.scale_height_pc = 10000000 is out of range; it must be in (0, 50000]"},
	},
	{
		name:   "star count near the int64 maximum",
		text:   minimal + "[run]\nstars_generated = 9223372036854775807\n",
		lineOf: "stars_generated",
		want:   []string{"run.stars_generated = 9.223372036854776e+18 is out of range; it must be in [1, 100000000000000]"},
	},
	{
		name:   "chunk too large for memory",
		text:   minimal + "[run]\nchunk_stars = 16777216\n",
		lineOf: "chunk_stars",
		want:   []string{"run.chunk_stars = 16777216 is out of range; it must be in [256, 1048576]", "250 bytes per star"},
	},
	{
		name:   "negative seed",
		text:   minimal + "[run]\nseed = -1\n",
		lineOf: "seed",
		want:   []string{"run.seed = -1 is out of range; it must be in [0, 9223372036854775807]"},
	},
	{
		name:   "key that does not apply to the part's kind",
		text:   minimal + "[history.b]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 0.2\ndepth = 0.3\n",
		lineOf: "depth",
		want:   []string{`history.b.depth does not apply to a part of kind "burst"; its keys are: kind, age_gyr, mass_fraction, width_gyr`},
	},
	{
		name:   "unknown part kind",
		text:   minimal + "[history.b]\nkind = \"gaussian\"\n",
		lineOf: "gaussian",
		want:   []string{`history.b.kind = "gaussian" is not a kind of history part; use one of constant, exponential, burst, dip, bins`},
	},
	{
		name:   "part without kind",
		text:   minimal + "[history.b]\nage_gyr = 0.6\n",
		lineOf: "[history.b]",
		want:   []string{"history.b.kind is missing"},
	},
	{
		name:   "part missing its required keys",
		text:   minimal + "[history.b]\nkind = \"burst\"\nage_gyr = 0.6\n",
		lineOf: "[history.b]",
		want:   []string{`history.b lacks mass_fraction, width_gyr; a part of kind "burst" needs age_gyr, mass_fraction, width_gyr`},
	},
	{
		name:   "bursts take more than all the mass",
		text:   minimal + "[history.a]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.1\nmass_fraction = 0.7\n[history.b]\nkind = \"burst\"\nage_gyr = 2.0\nwidth_gyr = 0.1\nmass_fraction = 0.6\n",
		lineOf: "[history.smooth]",
		want:   []string{"burst mass fractions sum to 1.3, above the allowed maximum 1"},
	},
	{
		name:   "field key that does not apply to its kind",
		text:   minimal + "l_deg = 12.0\n",
		lineOf: "l_deg",
		want:   []string{`survey.field.l_deg does not apply to a field of kind "sphere"; its keys are: kind, distance_max_pc, distance_min_pc`},
	},
	{
		name:   "bad part name",
		text:   minimal + "[history.\"my burst\"]\nkind = \"constant\"\n",
		lineOf: "my burst",
		want:   []string{`history part name "my burst" must use only letters, digits`},
	},
	{
		name:   "bins rates do not match edges",
		text:   minimal + "[history.b]\nkind = \"bins\"\nedges_gyr = [0.0, 1.0, 2.0]\nrates = [1.0]\n",
		lineOf: "rates",
		want:   []string{"history.b.rates has 1 values but edges_gyr defines 2 bins"},
	},
	{
		name:   "array element of the wrong type",
		text:   minimal + "[output]\ngyrochrone_ages_gyr = [0.3, \"old\"]\n",
		lineOf: "gyrochrone_ages_gyr",
		want:   []string{`output.gyrochrone_ages_gyr must be an array of numbers, but element 2 is a string ("old")`},
	},
	{
		name:   "syntax error names its line",
		text:   minimal + "[disk]\nsun_height_pc = = 3\n",
		lineOf: "= = 3",
		want:   []string{"not valid TOML"},
	},
	{
		name:   "binary garbage",
		text:   "\x00\x01\x02\xff\xfe\x89PNG\r\n\x1a\n",
		lineOf: "",
		want:   []string{"x.toml:1: holds the byte 0x00, which no text file holds: this is binary data, not a TOML scenario"},
	},
	{
		name: "empty file",
		text: "",
		want: []string{`x.toml: the history has no parts; add at least one, e.g. [history.smooth] kind = "constant"`, "survey.field lacks b_deg, distance_max_pc, l_deg, radius_deg"},
	},
	{
		name:   "extends without a file system",
		text:   "extends = \"base.toml\"\n" + minimal,
		lineOf: "extends",
		want:   []string{"cannot extend another file"},
	},
	{
		name:   "extends that is not a string",
		text:   "extends = 3\n" + minimal,
		lineOf: "extends",
		want:   []string{"extends must be a string naming another scenario file"},
	},
	{
		name:   "unknown key in [data.columns] suggests the nearest",
		text:   minimal + "[data]\nfile = \"c.csv\"\n[data.columns]\nabs_mag_v = \"mv\"\nz_pc = \"z\"\nbv = \"color\"\n",
		lineOf: "bv =",
		want:   []string{`unknown key "bv" in [data.columns]; did you mean "b_v"?`},
	},
	{
		name:   "checksum of the wrong length",
		text:   minimal + "[data]\nfile = \"c.csv\"\nsha256 = \"3a7bd3e2360a3d\"\n[data.columns]\nabs_mag_v = \"mv\"\nz_pc = \"z\"\n",
		lineOf: "sha256",
		want:   []string{`data.sha256 = "3a7bd3e2360a3d" is not a SHA-256 checksum (14 characters); give its 64 hexadecimal digits`},
	},
	{
		name:   "checksum with a non-hex digit",
		text:   minimal + "[data]\nfile = \"c.csv\"\nsha256 = \"" + strings.Repeat("ab", 31) + "zz\"\n[data.columns]\nabs_mag_v = \"mv\"\nz_pc = \"z\"\n",
		lineOf: "sha256",
		want:   []string{"is not a SHA-256 checksum (64 characters)"},
	},
	{
		name:   "checksum without a file",
		text:   minimal + "[data]\nsha256 = \"" + strings.Repeat("ab", 32) + "\"\n",
		lineOf: "sha256",
		want:   []string{"data.sha256 is set but data.file is empty"},
	},
	{
		name:   "unknown data format",
		text:   minimal + "[data]\nfile = \"c.csv\"\nformat = \"tsv\"\n[data.columns]\nabs_mag_v = \"mv\"\nz_pc = \"z\"\n",
		lineOf: "format",
		want:   []string{`data.format = "tsv" is not allowed; use one of: auto, csv, ecsv, fits, parquet`},
	},
	{
		name:   "FITS extension for a CSV file",
		text:   minimal + "[data]\nfile = \"c.csv\"\nformat = \"csv\"\nextension = \"STARS\"\n[data.columns]\nabs_mag_v = \"mv\"\nz_pc = \"z\"\n",
		lineOf: "extension",
		want:   []string{`data.extension = "STARS" chooses a FITS extension, but data.format = "csv"`},
	},
	{
		name:   "FITS extension number 0",
		text:   minimal + "[data]\nfile = \"c.fits\"\nextension = 0\n[data.columns]\nabs_mag_v = \"mv\"\nz_pc = \"z\"\n",
		lineOf: "extension",
		want:   []string{`data.extension = "0": extensions are numbered from 1`},
	},
	{
		name:   "FITS extension without a file",
		text:   minimal + "[data]\nextension = \"STARS\"\n",
		lineOf: "extension",
		want:   []string{"data.extension is set but data.file is empty"},
	},
	{
		name:   "columns that give neither magnitude nor height",
		text:   minimal + "[data]\nfile = \"c.csv\"\n[data.columns]\napp_mag_v = \"v\"\n",
		lineOf: "[data.columns]",
		want: []string{"data.columns cannot give the absolute magnitude: name abs_mag_v, or app_mag_v and parallax_mas to derive it (missing: abs_mag_v, or parallax_mas); " +
			"nor the height above the plane: name z_pc, or parallax_mas and a sky position (ra_deg and dec_deg, or l_deg and b_deg) to derive it (missing: z_pc, or parallax_mas and ra_deg and dec_deg (or l_deg and b_deg))"},
	},
	{
		name:   "missing columns blamed on the file when no columns are mapped",
		text:   minimal + "[data]\nfile = \"c.csv\"\n",
		lineOf: "file =",
		want:   []string{"data.columns cannot give the absolute magnitude", "(missing: abs_mag_v, or app_mag_v and parallax_mas)"},
	},
	{
		name:   "height only: magnitude missing",
		text:   minimal + "[data]\nfile = \"c.csv\"\n[data.columns]\nz_pc = \"z\"\napp_mag_v = \"v\"\n",
		lineOf: "[data.columns]",
		want:   []string{"data.columns cannot give the absolute magnitude: name abs_mag_v, or app_mag_v and parallax_mas to derive it (missing: abs_mag_v, or parallax_mas)"},
	},
	{
		name:   "half a sky position",
		text:   minimal + "[data]\nfile = \"c.csv\"\n[data.columns]\napp_mag_v = \"v\"\nparallax_mas = \"plx\"\nra_deg = \"ra\"\n",
		lineOf: "ra_deg",
		want:   []string{"data.columns.ra_deg is set but data.columns.dec_deg is not; a sky position needs both ra_deg and dec_deg"},
	},
	{
		name:   "one column for two quantities",
		text:   minimal + "[data]\nfile = \"c.csv\"\n[data.columns]\nabs_mag_v = \"mv\"\nz_pc = \"mv\"\n",
		lineOf: "z_pc",
		want:   []string{`data.columns.z_pc = "mv" names the same column as data.columns.abs_mag_v`},
	},
	{
		name:   "empty period column",
		text:   minimal + "[data]\nfile = \"c.csv\"\n[data.columns]\nperiod_d = \"\"\nabs_mag_v = \"mv\"\nz_pc = \"z\"\n",
		lineOf: "period_d",
		want:   []string{"data.columns.period_d is empty; with data.file set, name the column that holds the rotation period"},
	},
	{
		name:   "free path naming no parameter lists the valid paths",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.age\"\nmin = 0.1\nmax = 1.0\n",
		lineOf: "path =",
		want: []string{`compare.free[0].path = "history.b.age" does not name a parameter a fit can move; a free parameter is "history.<part>.<key>" with a key its part's kind takes, or a nuisance parameter of the physics or selection (did you mean "history.b.age_gyr"?); ` +
			"the valid paths are: history.b.age_gyr, history.b.mass_fraction, history.b.width_gyr, history.smooth.weight"},
	},
	{
		name:   "free path naming a key of another kind",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.smooth.timescale_gyr\"\nmin = 1.0\nmax = 10.0\n",
		lineOf: "path =",
		want:   []string{`compare.free[0].path = "history.smooth.timescale_gyr" does not name a parameter a fit can move`, "the valid paths are: history.b.age_gyr,"},
	},
	{
		name:   "log-uniform prior from zero",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.mass_fraction\"\nmin = 0.0\nmax = 0.5\nprior = \"log-uniform\"\n",
		lineOf: "min =",
		want:   []string{"compare.free[0].min = 0 must be > 0 for a log-uniform prior"},
	},
	{
		name: "duplicate free path",
		text: minimal + burstPart + "[[compare.free]]\npath = \"history.b.age_gyr\"\nmin = 0.1\nmax = 1.0\n" +
			"[[compare.free]]\npath = \"history.b.age_gyr\"\nmin = 0.2\nmax = 2.0\n",
		lineOf: "path =",
		want:   []string{`compare.free[1].path = "history.b.age_gyr" repeats compare.free[0]; a parameter can be free only once`},
	},
	{
		name:   "free range empty",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.age_gyr\"\nmin = 1.0\nmax = 0.5\n",
		lineOf: "max =",
		want:   []string{"compare.free[0].max = 0.5 must be greater than compare.free[0].min = 1 (empty range)"},
	},
	{
		name:   "free range beyond the key's values",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.mass_fraction\"\nmin = 0.1\nmax = 1.5\n",
		lineOf: "max =",
		want:   []string{"compare.free[0].max = 1.5 must be ≤ 1: history.b.mass_fraction takes values in [0, 1]"},
	},
	{
		name:   "search efficiency above one",
		text:   minimal + "[survey.search_by_rossby]\nefficiency_24d = 1.2\n",
		lineOf: "efficiency_24d =",
		want:   []string{"survey.search_by_rossby.efficiency_24d = 1.2 is out of range; it must be in [0, 1] (1 keeps every period there)"},
	},
	{
		name:   "starting values on a history parameter",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.age_gyr\"\nmin = 0.1\nmax = 1.0\nstarts = [0.3, 0.6]\n",
		lineOf: "starts =",
		want:   []string{"compare.free[0].starts: starting values apply to nuisance parameters"},
	},
	{
		name:   "starting value outside the range",
		text:   minimal + "[[compare.free]]\npath = \"spin.period_scatter_dex\"\nmin = 0.0\nmax = 0.3\nstarts = [0.1, 0.4]\n",
		lineOf: "starts =",
		want:   []string{"compare.free[0].starts[1] = 0.4 lies outside [0, 0.3]; every starting value must be one the parameter can take"},
	},
	{
		name: "starting grid too large",
		text: minimal + "[[compare.free]]\npath = \"spin.period_scatter_dex\"\nmin = 0.0\nmax = 0.3\nstarts = [0.0, 0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.12]\n" +
			"[[compare.free]]\npath = \"survey.detection_snr\"\nmin = 3.0\nmax = 30.0\nstarts = [4.0, 6.0, 8.0, 10.0, 15.0, 20.0, 25.0, 30.0, 5.0]\n",
		lineOf: "starts = [4.0",
		want:   []string{"the starting values of compare.free up to compare.free[1] make a grid of more than 64 points"},
	},
	{
		name:   "free width from zero",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.width_gyr\"\nmin = 0.0\nmax = 0.5\n",
		lineOf: "min =",
		want:   []string{"compare.free[0].min = 0 must be > 0: history.b.width_gyr takes values in (0, ∞)"},
	},
	{
		name:   "free parameter without a path",
		text:   minimal + burstPart + "[[compare.free]]\nmin = 0.1\nmax = 1.0\n",
		lineOf: "[[compare.free]]",
		want:   []string{"compare.free[0].path is missing; each [[compare.free]] parameter needs max, min, path"},
	},
	{
		name:   "unknown key in a free parameter",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.age_gyr\"\nmin = 0.1\nmax = 1.0\nprio = \"uniform\"\n",
		lineOf: "prio =",
		want:   []string{`unknown key "prio" in [compare.free[0]]; did you mean "prior"?`},
	},
	{
		name:   "unknown prior",
		text:   minimal + burstPart + "[[compare.free]]\npath = \"history.b.age_gyr\"\nmin = 0.1\nmax = 1.0\nprior = \"loguniform\"\n",
		lineOf: "prior =",
		want:   []string{`compare.free[0].prior = "loguniform" is not allowed; use one of: uniform, log-uniform, gaussian (did you mean "log-uniform"?)`},
	},
	{
		name:   "free list that is not an array of tables",
		text:   minimal + "[compare]\nfree = \"history.b.age_gyr\"\n",
		lineOf: "free =",
		want:   []string{`compare.free must be an array of tables ([[...]] sections), not a string`},
	},
	{
		name:   "too few color bins",
		text:   minimal + "[compare]\ncolor_bins = 1\n",
		lineOf: "color_bins",
		want:   []string{"compare.color_bins = 1 is out of range; it must be in [2, 500]"},
	},
	{
		name:   "too many period bins",
		text:   minimal + "[compare]\nlog_period_bins = 501\n",
		lineOf: "log_period_bins",
		want:   []string{"compare.log_period_bins = 501 is out of range; it must be in [2, 500]"},
	},
	{
		name:   "comparison period range outside the cuts",
		text:   minimal + "[cuts]\nperiod_max_d = 60.0\n[compare]\nperiod_max_d = 80.0\n",
		lineOf: "period_max_d = 80",
		want:   []string{"compare.period_max_d = 80 lies above cuts.period_max_d = 60 (the comparison range must lie inside the cuts"},
	},
	{
		name:   "comparison period range below the cuts",
		text:   minimal + "[cuts]\nperiod_min_d = 1.0\n[compare]\nperiod_min_d = 0.7\n",
		lineOf: "period_min_d = 0.7",
		want:   []string{"compare.period_min_d = 0.7 lies below cuts.period_min_d = 1"},
	},
	{
		name:   "empty comparison period range",
		text:   minimal + "[compare]\nperiod_min_d = 20.0\nperiod_max_d = 10.0\n",
		lineOf: "period_max_d",
		want:   []string{"compare.period_max_d = 10 must be greater than compare.period_min_d = 20 (empty period range)"},
	},
	{
		name:   "height edges not from zero",
		text:   minimal + "[compare]\nheight_edges_pc = [50.0, 100.0]\n",
		lineOf: "height_edges_pc",
		want:   []string{"compare.height_edges_pc starts at 50 pc; it must start at 0"},
	},
	{
		name:   "height edges not increasing",
		text:   minimal + "[compare]\nheight_edges_pc = [0.0, 300.0, 200.0]\n",
		lineOf: "height_edges_pc",
		want:   []string{"compare.height_edges_pc must be strictly increasing, but element 3 (200) is not above element 2 (300)"},
	},
	{
		name:   "too few template stars",
		text:   minimal + "[compare]\ntemplate_stars = 50_000\n",
		lineOf: "template_stars",
		want:   []string{"compare.template_stars = 50000 is out of range; it must be in [100000, "},
	},
	{
		name:   "unknown normalisation",
		text:   minimal + "[compare]\nnormalisation = \"fixed\"\n",
		lineOf: "normalisation",
		want:   []string{`compare.normalisation = "fixed" is not allowed; use one of: free, absolute`},
	},
	{
		name:   "unknown color axis",
		text:   minimal + "[compare]\ncolor_axis = \"intrinsic\"\n",
		lineOf: "color_axis",
		want:   []string{`compare.color_axis = "intrinsic" is not allowed; use one of: measured, dereddened`},
	},
	{
		name:   "unknown template noise treatment",
		text:   minimal + "[compare]\ntemplate_noise = \"barlow-beeston\"\n",
		lineOf: "template_noise",
		want:   []string{`compare.template_noise = "barlow-beeston" is not allowed; use one of: barlow-beeston-lite, ignore (did you mean "barlow-beeston-lite"?)`},
	},
	{
		name:   "too many bootstrap replicates",
		text:   minimal + "[compare]\nbootstrap = 2_000_000\n",
		lineOf: "bootstrap",
		want:   []string{"compare.bootstrap = 2000000 is out of range; it must be in [0, 1000000]"},
	},
	{
		name:   "negative split age",
		text:   minimal + "[compare]\nsplit_age_gyr = -1.0\n",
		lineOf: "split_age_gyr",
		want:   []string{"compare.split_age_gyr = -1 is out of range; it must be in [0, 10]"},
	},
	{
		name:   "burst part of the wrong kind",
		text:   minimal + burstPart + "[compare]\nburst_part = \"smooth\"\n",
		lineOf: "burst_part",
		want:   []string{`compare.burst_part = "smooth" names a part of kind "constant"; it must name a part of kind "burst" (the part a burst-versus-smooth test frees); the history's bursts are: b`},
	},
	{
		name: "derived default blamed on its source",
		text: minimal + "[cuts]\nperiod_max_d = 0.01\n",
		// period_min_d defaults to 2 × 0.03125 d, above the explicit maximum.
		lineOf: "period_max_d",
		want:   []string{"cuts.period_max_d = 0.01 must be greater than cuts.period_min_d = 0.0625 (empty period range)"},
	},
}

func TestMalformedScenarios(t *testing.T) {
	for _, tc := range malformedCases {
		t.Run(tc.name, func(t *testing.T) {
			r, err := LoadBytes("x.toml", []byte(tc.text), nil)
			require.Error(t, err)
			assert.Nil(t, r)
			var verrs ValidationErrors
			require.True(t, errors.As(err, &verrs), "error should be ValidationErrors, got %T", err)
			msg := err.Error()
			for _, w := range tc.want {
				assert.Contains(t, msg, w)
			}
			if tc.lineOf != "" {
				assert.Contains(t, msg, "x.toml:"+strconv.Itoa(lineOf(t, tc.text, tc.lineOf))+": ")
			}
		})
	}
}

// lineOf is the 1-based line of the last occurrence of snippet in text.
func lineOf(t *testing.T, text, snippet string) int {
	i := strings.LastIndex(text, snippet)
	require.GreaterOrEqual(t, i, 0, "snippet %q not in text", snippet)
	return strings.Count(text[:i], "\n") + 1
}

func TestMinimalIsValid(t *testing.T) {
	_, err := LoadBytes("x.toml", []byte(minimal), nil)
	require.NoError(t, err)
}

func TestAllErrorsCollected(t *testing.T) {
	text := minimal + `[disk]
sigma10_kms = 25.0
heating_beta = "x"
[imf]
mass_min_msun = 1.0
mass_max_msun = 0.5
[spin]
law = "skumanich"
`
	_, err := LoadBytes("x.toml", []byte(text), nil)
	var verrs ValidationErrors
	require.ErrorAs(t, err, &verrs)
	require.Len(t, verrs, 4)
	lines := strings.Split(err.Error(), "\n")
	assert.Len(t, lines, 4, "one problem per line")
	// Sorted by line; each names its key.
	for i, key := range []string{"disk.sigma10_kms", "disk.heating_beta", "imf.mass_max_msun", "spin.law"} {
		assert.Equal(t, key, verrs[i].Key)
		assert.Equal(t, "x.toml", verrs[i].File)
		assert.Equal(t, lineOf(t, text, key[strings.LastIndexByte(key, '.')+1:]), verrs[i].Line)
	}
}

func TestOneErrorPerKey(t *testing.T) {
	// A missing required key has a zero value; it must not also be
	// reported as out of range.
	text := "[history.s]\nkind = \"constant\"\n[survey.field]\nkind = \"cone\"\nl_deg = 1.0\nb_deg = 2.0\ndistance_max_pc = 300.0\n"
	_, err := LoadBytes("x.toml", []byte(text), nil)
	var verrs ValidationErrors
	require.ErrorAs(t, err, &verrs)
	require.Len(t, verrs, 1, err.Error())
	assert.Equal(t, "survey.field.radius_deg", verrs[0].Key)
	assert.Equal(t, 3, verrs[0].Line, "blamed on the [survey.field] header")
}

func TestBuiltinDefaultBlamedAsDefault(t *testing.T) {
	// survey.min_cycles is explicit but the baseline comes from the
	// defaults, and the derived period_max_d then falls below period_min_d.
	text := minimal + "[cuts]\nperiod_min_d = 600.0\n"
	_, err := LoadBytes("x.toml", []byte(text), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "cuts.period_max_d = 333.3333333333333 must be greater than cuts.period_min_d = 600 (empty period range) (default: survey.baseline_d / survey.min_cycles; set it explicitly)")
}

func TestTooManyErrorsAreCapped(t *testing.T) {
	var b strings.Builder
	b.WriteString(minimal + "[disk]\n")
	for i := range 3 * maxErrors {
		b.WriteString("k" + strconv.Itoa(i) + " = 1\n")
	}
	_, err := LoadBytes("x.toml", []byte(b.String()), nil)
	var verrs ValidationErrors
	require.ErrorAs(t, err, &verrs)
	assert.Len(t, verrs, maxErrors+1)
	assert.Contains(t, verrs[maxErrors].Msg, "and 200 more errors")
}

func TestLevenshtein(t *testing.T) {
	// Source: textbook examples of the edit distance (kitten/sitting = 3).
	assert.Equal(t, 3, levenshtein("kitten", "sitting"))
	assert.Equal(t, 0, levenshtein("", ""))
	assert.Equal(t, 4, levenshtein("", "abcd"))
	assert.Equal(t, 4, levenshtein("sigma10_kms", "sigma_10gyr_kms"))
	assert.Equal(t, "sigma_10gyr_kms", nearest("sigma10_kms", fieldsOf(reflectTypeDisk()).names))
}

func reflectTypeDisk() reflect.Type { return reflect.TypeFor[Disk]() }

func TestFarFetchedKeyListsValidKeys(t *testing.T) {
	_, err := LoadBytes("x.toml", []byte(minimal+"description = \"x\"\n"), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), `x.toml:6: unknown key "description" in [survey.field]; the keys here are: b_deg, cones, distance_max_pc, distance_min_pc, kind, l_deg, radius_deg`)
}
