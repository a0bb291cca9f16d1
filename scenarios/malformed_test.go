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
		want:   []string{"mass_fraction values add up to 1.3"},
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
		want:   []string{"x.toml", "not valid TOML"},
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
		name: "derived default blamed on its source",
		text: minimal + "[cuts]\nperiod_max_d = 0.01\n",
		// period_min_d defaults to 2 × 0.0204 d, above the explicit maximum.
		lineOf: "period_max_d",
		want:   []string{"cuts.period_max_d = 0.01 must be greater than cuts.period_min_d = 0.0408 (empty period range)"},
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
	assert.Contains(t, err.Error(), "cuts.period_max_d = 466.6666666666667 must be greater than cuts.period_min_d = 600 (empty period range) (default: survey.baseline_d / survey.min_cycles; set it explicitly)")
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
